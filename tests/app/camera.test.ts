import { describe, expect, it } from 'vitest';
import { loadTensorKernel } from '../../src/wasm/index.ts';
import { defaultStep, frameImage, planReadout, RateMeter, readoutHaloPx, sizeSteps } from '../../app/camera/frames.ts';
import { LiveReadout, type ReadoutEngine } from '../../app/camera/liveReadout.ts';
import { resolveTensorOptions, tensorHaloPx } from '../../src/orientation/index.ts';
import { encode } from 'fast-png';
import { decodeImage, toGrey } from '../../src/image/index.ts';
import type { OrientResult } from '../../src/analyses/index.ts';

describe('planReadout', () => {
  it('without a rectangle draws the whole 1280 x 720 frame at 1/2 size, every pixel counting', () => {
    expect(planReadout(1280, 720, 2, null, 12)).toEqual({ source: { x: 0, y: 0, width: 1280, height: 720 }, width: 640, height: 360, step: 2, region: null });
  });

  it('with a rectangle adds the halo around it and its region maps back onto the rectangle', () => {
    const rect = { x: 400, y: 200, width: 320, height: 240 };
    const p = planReadout(1280, 720, 2, rect, 12);
    // construction: halo 12 analysed px = 24 frame px on each side
    expect(p.source).toEqual({ x: 376, y: 176, width: 368, height: 288 });
    expect(p.region).toEqual({ x: 12, y: 12, width: 160, height: 120 });
    expect(p.source.x + p.region!.x * p.step).toBe(rect.x);
    expect(p.source.y + p.region!.y * p.step).toBe(rect.y);
    expect(p.region!.width * p.step).toBe(rect.width);
  });

  it('clips the halo at the frame edge and keeps the region on the rectangle', () => {
    const p = planReadout(640, 480, 1, { x: 0, y: 0, width: 100, height: 80 }, 12);
    expect(p.source).toEqual({ x: 0, y: 0, width: 112, height: 92 });
    expect(p.region).toEqual({ x: 0, y: 0, width: 100, height: 80 });
  });

  it('refuses a rectangle outside the frame or too small to give an order parameter', () => {
    expect(() => planReadout(640, 480, 1, { x: 700, y: 10, width: 50, height: 50 }, 12)).toThrow(/outside the camera frame/);
    expect(() => planReadout(640, 480, 4, { x: 10, y: 10, width: 40, height: 40 }, 12)).toThrow(/too small.*64 x 64/);
    expect(() => planReadout(0, 0, 1, null, 12)).toThrow(/not delivered a frame/);
    expect(() => planReadout(640, 480, 1.5, null, 12)).toThrow(/whole number/);
  });
});

describe('readout sizes', () => {
  it('readoutHaloPx equals the analysis core\'s tensorHaloPx for the texture defaults', () => {
    for (const sigmaPx of [0.5, 1, 2, 3.5, 8]) expect(readoutHaloPx(sigmaPx)).toBe(tensorHaloPx(resolveTensorOptions({ sigmaPx })));
  });

  it('offers halves while the analysed picture keeps 64 px on its short side, and picks 1/2 for 1280 x 720', () => {
    expect(sizeSteps(1280, 720)).toEqual([1, 2, 4, 8]);
    expect(sizeSteps(320, 240)).toEqual([1, 2]);
    // 1280 x 720 / 4 = 230 400 px = 640 x 360, the default target
    expect(defaultStep(1280, 720)).toBe(2);
    // 640 x 480 = 307 200 px is within 1.5 x 230 400 = 345 600
    expect(defaultStep(640, 480)).toBe(1);
    // 1920 x 1080 / 4 = 518 400 px is over it, / 16 = 129 600 is not
    expect(defaultStep(1920, 1080)).toBe(4);
    expect(defaultStep(2592, 1944)).toBe(4);
  });
});

describe('frameImage', () => {
  it('gives a grey plane equal to toGrey of the same pixels read as an 8-bit RGB PNG', () => {
    const w = 5, h = 3, rgba = new Uint8ClampedArray(w * h * 4);
    for (let i = 0; i < w * h; i++) rgba.set([i * 10, 255 - i * 7, (i * 37) % 256, 255], 4 * i);
    const img = frameImage(rgba, w, h);
    expect([img.width, img.height, img.channels]).toEqual([5, 3, 1]);
    // The frame saved as a PNG (fast-png) and read by the app's decoder: what the command line reads.
    const rgb = Uint8Array.from({ length: w * h * 3 }, (_, k) => rgba[4 * Math.floor(k / 3) + (k % 3)]);
    const png = decodeImage(encode({ width: w, height: h, data: rgb, channels: 3, depth: 8 }), 'frame.png');
    expect(Array.from(img.planes[0])).toEqual(Array.from(toGrey(png).data));
    // Rec. 709 luma, ITU-R BT.709 item 3.2: 0.2126 R + 0.7152 G + 0.0722 B
    expect(img.planes[0][1]).toBeCloseTo(0.2126 * 10 / 255 + 0.7152 * 248 / 255 + 0.0722 * 37 / 255, 6);
  });

  it('refuses pixels that do not match the size', () => {
    expect(() => frameImage(new Uint8ClampedArray(10), 2, 2)).toThrow(/needs 16/);
  });

  it('gives the same bits with the tensor kernel loaded (several of its bands, RGBA as VideoFrame.copyTo gives it)', async () => {
    await loadTensorKernel();
    const w = 400, h = 300, rgba = new Uint8Array(w * h * 4);
    for (let i = 0; i < rgba.length; i++) rgba[i] = (i * 2654435761) >>> 24;
    const grey = frameImage(rgba, w, h).planes[0];
    // ITU-R BT.709 item 3.2 luma of code / 255 (each rounded to float32 as decoded), in float64, then float32.
    const v = (c: number) => Math.fround(c / 255);
    for (let i = 0; i < w * h; i += 997) {
      expect(grey[i]).toBe(Math.fround(0.2126 * v(rgba[4 * i]) + 0.7152 * v(rgba[4 * i + 1]) + 0.0722 * v(rgba[4 * i + 2])));
    }
    expect(grey[w * h - 1]).toBe(Math.fround(0.2126 * v(rgba[4 * w * h - 4]) + 0.7152 * v(rgba[4 * w * h - 3]) + 0.0722 * v(rgba[4 * w * h - 2])));
  });
});

describe('RateMeter', () => {
  it('readings every 50 ms give 20 per second; latency is the mean of reading minus grab time', () => {
    const m = new RateMeter(1000);
    expect(m.fps()).toBeNull();
    for (let k = 0; k < 10; k++) m.add(k * 50, k * 50 + 70);
    // 9 intervals over 450 ms
    expect(m.fps()).toBeCloseTo(20, 9);
    expect(m.latencyMs()).toBeCloseTo(70, 9);
    const n = new RateMeter(1000);
    n.add(0, 80); n.add(50, 110);
    // latencies 80 and 60 ms; readings 30 ms apart
    expect(n.latencyMs()).toBeCloseTo(70, 9);
    expect(n.fps()).toBeCloseTo(1000 / 30, 9);
  });

  it('forgets readings older than its window', () => {
    const m = new RateMeter(1000);
    m.add(0, 10); m.add(100, 110);
    m.add(5000, 5100); m.add(5250, 5350);
    // only the last two (250 ms apart) remain: 4 per second, latency 100 ms
    expect(m.fps()).toBeCloseTo(4, 9);
    expect(m.latencyMs()).toBeCloseTo(100, 9);
  });
});

describe('LiveReadout', () => {
  /** An engine whose orient answer takes `delays[i]` ms of a manual clock for its i-th frame. */
  function fakeEngines(delays: number[][]) {
    let clock = 0;
    const waiters: { at: number; resolve(): void }[] = [];
    const wait = (ms: number) => new Promise<void>((resolve) => waiters.push({ at: clock + ms, resolve }));
    const advance = async (ms: number) => {
      const end = clock + ms;
      while (true) {
        // let every loop run up to its next wait (grabs, decodes and calls are all promises)
        await new Promise((r) => setImmediate(r));
        waiters.sort((a, b) => a.at - b.at);
        const next = waiters[0];
        if (!next || next.at > end) break;
        waiters.shift();
        clock = next.at;
        next.resolve();
      }
      clock = end;
    };
    const calls: { engine: number; frame: number; picture: boolean }[] = [];
    let frameNo = 0;
    const engines: ReadoutEngine[] = delays.map((d, e) => {
      let k = 0;
      return {
        ready: async () => undefined,
        dispose: () => undefined,
        call: (async (_cmd: string, args: { picture: boolean }) => {
          calls.push({ engine: e, frame: frameNo, picture: args.picture });
          await wait(d[k++ % d.length]);
          return { result: { order2D: 0.5 } as OrientResult, colour: args.picture ? { levels: [] } : null, timesMs: {} };
        }) as unknown as ReadoutEngine['call'],
      };
    });
    return { engines, advance, now: () => clock, wait, calls, nextFrame: () => ++frameNo };
  }

  it('two engines take frames in turn, and a reading older than the one shown is dropped', async () => {
    // engine 0 answers in 100 ms; engine 1 first in 30 ms (overtaking nothing), then in 200 ms
    const f = fakeEngines([[100], [30, 200]]);
    const shown: { worker: number; grabbedAt: number }[] = [];
    const plan = { source: { x: 0, y: 0, width: 2, height: 2 }, width: 2, height: 2, step: 1, region: null };
    const live = new LiveReadout({
      engines: f.engines,
      grab: async () => { f.nextFrame(); return { source: { close: () => undefined } as unknown as VideoFrame, plan }; },
      settings: () => ({ sigmaPx: 2, weighting: 'coherency', picture: true }),
      onReading: (r) => shown.push({ worker: r.worker, grabbedAt: r.grabbedAt }),
      onError: (m) => { throw new Error(m); },
      now: f.now, sleep: f.wait,
    });
    await live.start();
    await f.advance(1000);
    const stopped = live.stop();
    await f.advance(1000);
    await stopped;
    // both engines worked
    expect(new Set(f.calls.map((c) => c.engine))).toEqual(new Set([0, 1]));
    expect(new Set(shown.map((c) => c.worker))).toEqual(new Set([0, 1]));
    // shown readings never go back in time
    for (let i = 1; i < shown.length; i++) expect(shown[i].grabbedAt).toBeGreaterThan(shown[i - 1].grabbedAt);
    // engine 1's 200 ms answers (grabbed at 30 ms, 230 ms, ...) arrive after engine 0's newer frames: some are dropped
    expect(shown.length).toBeLessThan(f.calls.length);
  });

  it('asks for the orientation picture only while it is shown', async () => {
    const f = fakeEngines([[50], [50]]);
    const plan = { source: { x: 0, y: 0, width: 2, height: 2 }, width: 2, height: 2, step: 1, region: null };
    let picture = false;
    const pictures: (boolean | null)[] = [];
    const live = new LiveReadout({
      engines: f.engines,
      grab: async () => { f.nextFrame(); return { source: { close: () => undefined } as unknown as VideoFrame, plan }; },
      settings: () => ({ sigmaPx: 2, weighting: 'coherency', picture }),
      onReading: (r) => pictures.push(r.colour !== null),
      onError: (m) => { throw new Error(m); },
      now: f.now, sleep: f.wait,
    });
    await live.start();
    await f.advance(500);
    const before = f.calls.length;
    picture = true;
    await f.advance(500);
    const stopped = live.stop();
    await f.advance(500);
    await stopped;
    expect(f.calls.slice(0, before).every((c) => !c.picture)).toBe(true);
    expect(f.calls.slice(before + 2).every((c) => c.picture)).toBe(true);
    expect(f.calls.length).toBeGreaterThan(before + 4);
    expect(pictures).toContain(false);
    expect(pictures).toContain(true);
  });
});
