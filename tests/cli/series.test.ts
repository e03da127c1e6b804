import { beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { encodePng } from '../../src/report/png.ts';
import { renderScene, scene } from '../validation/render/index.ts';
import { runCli } from '../support/cliRun.ts';

// Frames of a relaxing texture from the independent validation renderer: ensemble order
// S(t) = 0.05 + 0.75 exp(-t / 20 s), director 23 deg, a frame every 6 s (the construction is the truth).
let dir = '';
const frames: string[] = [];
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'retarda-series-'));
  for (let k = 0; k < 10; k++) {
    const S = 0.05 + 0.75 * Math.exp(-(6 * k) / 20);
    const img = renderScene(scene({ name: 'series', seed: 4100 + k, width: 320, height: 240, channel: null, directorDeg: 23, order: { core: S, skin: S } })).image;
    const data = new Uint16Array(img.width * img.height);
    img.planes[0].forEach((v, i) => { data[i] = Math.round(Math.min(1, Math.max(0, v)) * 65535); });
    const path = join(dir, `frame-${String(k).padStart(2, '0')}.png`);
    writeFileSync(path, encodePng({ width: img.width, height: img.height, channels: 1, data, bitDepth: 16 }));
    frames.push(path);
  }
});

describe('retarda series', () => {
  it('gives the contract keys, one point per frame, and a tau interval holding the rendered 20 s', async () => {
    const r = await runCli(['series', ...frames, '--interval-s', '6', '--model', 'exponential', '--json']);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.analysis).toBe('series');
    expect(j.points).toHaveLength(10);
    for (const [k, p] of j.points.entries()) {
      expect(p.tSeconds).toBe(6 * k);
      expect(p.ciLow).toBeLessThanOrEqual(p.order);
      expect(p.ciHigh).toBeGreaterThanOrEqual(p.order);
    }
    // The director of the first frame is the axis when none is given: the rendered 23 deg, up to the frame's own
    // realised mean (director spread 19 deg at S = 0.8, correlation length 16 px: about 1 deg standard error).
    expect(Math.abs(j.axisDeg - 23)).toBeLessThan(4);
    for (const k of ['model', 'tauSeconds', 'tauCi', 'beta', 'betaCi']) expect(j.fit).toHaveProperty(k);
    expect(j.fit.model).toBe('exponential');
    expect(j.fit.beta).toBe(1);
    expect(j.fit.tauCi[0]).toBeLessThanOrEqual(20);
    expect(j.fit.tauCi[1]).toBeGreaterThanOrEqual(20);
  });

  it('takes the times one by one with --times, and prints a table by default', async () => {
    const r = await runCli(['series', ...frames.slice(0, 6), '--times', '0,6,12,18,24,30', '--axis-deg', '23']);
    expect(r.code, r.err).toBe(0);
    expect(r.out).toMatch(/S_axis against 23\.0 deg \(given\)/);
    expect(r.out).toMatch(/tau s/);
  });

  it('refuses missing or mismatched times and unknown models in one plain line', async () => {
    for (const args of [[...frames], [...frames, '--times', '0,1,2'], [...frames, '--interval-s', '6', '--model', 'cubic'], [...frames, '--interval-s', '6', '--times', '0,1']]) {
      const r = await runCli(['series', ...args]);
      expect(r.code).toBe(2);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.err).not.toMatch(/Error|at .*\.ts/);
    }
  });
});
