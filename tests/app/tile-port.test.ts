import { describe, expect, it, vi } from 'vitest';
import { MessageChannel as NodeChannel } from 'node:worker_threads';
import { helperOverPort, serveTilesOn } from '../../app/worker/tilePort.ts';
import { orientationField } from '../../src/orientation/index.ts';
import { addNoise, rings } from '../support/synthetic.ts';

// The two ends of the app's tile channel, over a real message channel (structured cloning and transfer as
// between workers): the field must be the same, bit for bit, as computing every tile in one place.
// No elapsed time is asserted (speed belongs to `npm run bench`): what is checked is which wait the port arms
// for a tile and whether that wait ran out, both recorded by watching setTimeout.

/**
 * Records the waits of at least 2 s that code under test arms with setTimeout (the tile port's: 20 s before a
 * helper's first answer, then eight times its slowest time per pixel, at least 2 s) and which of them ran out.
 */
function watchWaits() {
  const real = globalThis.setTimeout;
  const armed: number[] = [], ranOut: number[] = [];
  const spy = vi.spyOn(globalThis, 'setTimeout').mockImplementation(((fn: (...a: unknown[]) => void, ms?: number, ...rest: unknown[]) => {
    if (typeof ms !== 'number' || ms < 2_000) return real(fn, ms, ...rest);
    armed.push(ms);
    return real((...a: unknown[]) => { ranOut.push(ms); fn(...a); }, ms, ...rest);
  }) as typeof setTimeout);
  return { armed, ranOut, stop: () => spy.mockRestore() };
}

describe('tile sharing over a message port', () => {
  it('gives the field computed without a helper, and the jobs did go through the port', async () => {
    const channel = new NodeChannel();
    let served = 0;
    const counting = channel.port2 as unknown as MessagePort;
    serveTilesOn(counting);
    const serve = counting.onmessage!;
    (counting as unknown as { onmessage: unknown }).onmessage = (ev: MessageEvent) => { served++; return serve.call(counting, ev); };
    const plane = addNoise(rings(1100, 960, 500, 430, 8), 0.2, 5);
    const options = { sigmaPx: 2 };
    try {
      const shared = await orientationField(plane, options, [helperOverPort(channel.port1 as unknown as MessagePort)]);
      const alone = await orientationField(plane, options);
      expect(served).toBeGreaterThan(0);
      for (const k of ['angleRad', 'confidence', 'strength', 'mask'] as const) expect(Buffer.from(shared[k]!.buffer).equals(Buffer.from(alone[k]!.buffer))).toBe(true);
    } finally {
      channel.port1.close();
      channel.port2.close();
    }
  });

  it('does the tiles of a helper whose worker ends mid-job here at once, with the same field', async () => {
    // The helper's end closes when the first job arrives, without answering (as when its worker is ended).
    const channel = new NodeChannel();
    const helperEnd = channel.port2 as unknown as MessagePort;
    let received = 0;
    helperEnd.onmessage = () => { received++; helperEnd.close(); };
    const plane = addNoise(rings(1100, 960, 500, 430, 8), 0.2, 5);
    const options = { sigmaPx: 2 };
    const waits = watchWaits();
    let shared;
    try {
      shared = await orientationField(plane, options, [helperOverPort(channel.port1 as unknown as MessagePort)]);
    } finally {
      waits.stop();
    }
    const alone = await orientationField(plane, options);
    expect(received).toBeGreaterThan(0);
    // The jobs were sent with the 20-s first-answer wait armed, and none of those waits ran out: the port's close
    // event handed the tiles back (without it they would come back only when the 20-s wait ran out).
    expect(waits.armed.length).toBeGreaterThan(0);
    expect(waits.armed.every((ms) => ms === 20_000)).toBe(true);
    expect(waits.ranOut).toEqual([]);
    for (const k of ['angleRad', 'confidence', 'strength', 'mask'] as const) expect(Buffer.from(shared[k]!.buffer).equals(Buffer.from(alone[k]!.buffer))).toBe(true);
    channel.port1.close();
  }, 30_000);

  it('does not wait for a helper that stops answering: the same field, before even its short wait runs out', async () => {
    // As a helper whose worker died in Chromium: the port stays open and nothing more comes back.
    const channel = new NodeChannel();
    const helperEnd = channel.port2 as unknown as MessagePort;
    serveTilesOn(helperEnd);
    const serve = helperEnd.onmessage!;
    let answering = true, ignored = 0;
    (helperEnd as unknown as { onmessage: unknown }).onmessage = (ev: MessageEvent) => {
      if (answering) return serve.call(helperEnd, ev);
      ignored++;
    };
    const helper = helperOverPort(channel.port1 as unknown as MessagePort);
    const plane = addNoise(rings(1100, 960, 500, 430, 8), 0.2, 5);
    const options = { sigmaPx: 2 };
    try {
      await orientationField(plane, options, [helper]);
      answering = false;
      const waits = watchWaits();
      let shared;
      try {
        shared = await orientationField(plane, options, [helper]);
      } finally {
        waits.stop();
      }
      const alone = await orientationField(plane, options);
      expect(ignored).toBeGreaterThan(0);
      // The helper had answered in the first run, so its tiles now carry the shorter wait (eight times its slowest
      // time per pixel, at least 2 s; tilePort.ts), not the 20-s first-answer wait. (The wait would reach the 20-s
      // cap only if one tile had taken over 2.5 s, which a tile of this plane does not.) The field does not wait for
      // it: once no strip is left to hand out, the strips the helper holds are done here (tileShare.ts).
      expect(waits.armed.length).toBeGreaterThan(0);
      for (const ms of waits.armed) { expect(ms).toBeGreaterThanOrEqual(2_000); expect(ms).toBeLessThan(20_000); }
      expect(waits.ranOut).toEqual([]);
      for (const k of ['angleRad', 'confidence', 'strength', 'mask'] as const) expect(Buffer.from(shared[k]!.buffer).equals(Buffer.from(alone[k]!.buffer))).toBe(true);
    } finally {
      channel.port1.close();
      channel.port2.close();
    }
  }, 40_000);
});
