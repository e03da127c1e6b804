import { describe, expect, it } from 'vitest';
import { MessageChannel as NodeChannel } from 'node:worker_threads';
import { helperOverPort, serveTilesOn } from '../../app/worker/tilePort.ts';
import { orientationField } from '../../src/orientation/index.ts';
import { addNoise, rings } from '../support/synthetic.ts';

// The two ends of the app's tile channel, over a real message channel (structured cloning and transfer as
// between workers): the field must be the same, bit for bit, as computing every tile in one place.
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
      for (const k of ['angleRad', 'confidence', 'energy', 'mask'] as const) expect(Buffer.from(shared[k]!.buffer).equals(Buffer.from(alone[k]!.buffer))).toBe(true);
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
    const t0 = performance.now();
    const shared = await orientationField(plane, options, [helperOverPort(channel.port1 as unknown as MessagePort)]);
    const waited = performance.now() - t0;
    const alone = await orientationField(plane, options);
    expect(received).toBeGreaterThan(0);
    // Far below the 20 s an unanswered tile would otherwise be waited for (a loose bound, not a timing test).
    expect(waited).toBeLessThan(15_000);
    for (const k of ['angleRad', 'confidence', 'energy', 'mask'] as const) expect(Buffer.from(shared[k]!.buffer).equals(Buffer.from(alone[k]!.buffer))).toBe(true);
    channel.port1.close();
  }, 30_000);

  it('gives up on a helper that stops answering after seconds, not the full 20 s, with the same field', async () => {
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
      const t0 = performance.now();
      const shared = await orientationField(plane, options, [helper]);
      const waited = performance.now() - t0;
      const alone = await orientationField(plane, options);
      expect(ignored).toBeGreaterThan(0);
      // A loose bound, not a timing test: without the adaptive wait this takes more than 20 s.
      expect(waited).toBeLessThan(15_000);
      for (const k of ['angleRad', 'confidence', 'energy', 'mask'] as const) expect(Buffer.from(shared[k]!.buffer).equals(Buffer.from(alone[k]!.buffer))).toBe(true);
    } finally {
      channel.port1.close();
      channel.port2.close();
    }
  }, 40_000);
});
