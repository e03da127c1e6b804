import { describe, it, expect } from 'vitest';
import { orientationField, structureTensor } from '../../src/orientation/index.ts';
import { gaussianDerivativeKernel, gaussianKernel } from '../../src/orientation/kernels.ts';
import { quantile } from '../../src/orientation/fieldFromTensor.ts';
import { axialDiffDeg, radToDeg } from '../../src/common/angles.ts';
import { InputError } from '../../src/common/errors.ts';
import { readFileSync } from 'node:fs';
import { addNoise, central, grating, median, noise, rings } from '../support/synthetic.ts';

// Check values: tests/fixtures/reference/make_structure_tensor_checks.py (scipy.ndimage Gaussian derivatives and
// smoothing, scikit-image's Sobel tensor; regenerate with /usr/bin/python3 and that path).
const CHECK = JSON.parse(readFileSync(new URL('../fixtures/reference/structure-tensor-checks.json', import.meta.url), 'utf8'));

const deg = (rad: number) => radToDeg(rad);

describe('orientationField on gratings', () => {
  // Construction: stripes at psi, so theta = psi (135 -> -45) and C = 1. 256x256, period 8, sigma_d = 1 Gaussian derivatives,
  // sigma_i = 4, medians over the central 128x128. The same recipe in scipy reads within 0.0011 deg of psi with median
  // C = 1.0000000 (the check script), so 0.01 deg and C > 0.9999 leave room only for float32.
  for (const psi of [0, 30, 45, 90, 135, -60]) {
    it(`gives theta = ${psi} deg (wrapped to (-90, 90]) and coherency > 0.9999`, async () => {
      const f = await orientationField(grating(256, 256, psi, 8), { sigmaPx: 4, sigmaDerivPx: 1 });
      const expected = psi > 90 ? psi - 180 : psi;
      const angles = central(f.angleRad, 256, 256).map(deg);
      // Median of the axial error, so the +-90 wrap of psi = 90 cannot split the sample.
      expect(median(angles.map((a) => axialDiffDeg(a, expected)))).toBeLessThan(0.01);
      expect(median(central(f.confidence, 256, 256))).toBeGreaterThan(0.9999);
      expect(angles.every((a) => a > -90 && a <= 90)).toBe(true);
    });
  }

  it('with Sobel derivatives shows the known 3x3 anisotropy: 29.34 deg for a 30 deg grating', async () => {
    // Reference: scikit-image structure_tensor(sigma=4, mode='reflect', order='rc') on the same grating gives a median of
    // 29.343 deg (the check script); ours within 0.05 deg (float32 and the median of a different pixel order).
    const f = await orientationField(grating(256, 256, 30, 8), { sigmaPx: 4, derivative: 'sobel' });
    expect(Math.abs(median(central(f.angleRad, 256, 256).map(deg)) - CHECK.sobel30.medianAngleDeg)).toBeLessThan(0.05);
  });

  it('meets the issue targets: median error < 1 deg clean and < 3 deg at SNR 5', async () => {
    // SNR = signal RMS / noise SD (common practice, no source). Grating RMS = 1/sqrt(2).
    const clean = await orientationField(grating(256, 256, 23, 12), { sigmaPx: 3 });
    const noisy = await orientationField(addNoise(grating(256, 256, 23, 12), Math.SQRT1_2 / 5, 11), { sigmaPx: 3 });
    const err = (f: typeof clean) => median(central(f.angleRad, 256, 256).map((a) => axialDiffDeg(deg(a), 23)));
    expect(err(clean)).toBeLessThan(1);
    expect(err(noisy)).toBeLessThan(3);
  });

  it('moves every angle by alpha when the grating turns by alpha (rotation invariance)', async () => {
    const a = await orientationField(grating(128, 128, 10, 10), { sigmaPx: 3 });
    const b = await orientationField(grating(128, 128, 10 + 37, 10), { sigmaPx: 3 });
    const ma = median(central(a.angleRad, 128, 128).map(deg)), mb = median(central(b.angleRad, 128, 128).map(deg));
    expect(Math.abs(mb - ma - 37)).toBeLessThan(0.05);
  });
});

describe('orientationField on rings and noise', () => {
  it('is tangential on concentric rings', async () => {
    // Construction: rings cos(2 pi R / 8) about (128, 128) run tangentially: at (r128, c188) 90 deg, (r68, c128) 0 deg,
    // (r170, c170) 45 deg, (r86, c170) -45 deg, tolerance 0.1 deg. The check script's scipy tensor (sigma_i = 3) reads
    // these to 0.001 deg, with C = 0.9949 at (170, 170).
    const f = await orientationField(rings(256, 256, 128, 128, 8), { sigmaPx: 3 });
    const at = (r: number, c: number) => deg(f.angleRad[r * 256 + c]);
    expect(axialDiffDeg(at(128, 188), 90)).toBeLessThan(0.1);
    expect(axialDiffDeg(at(68, 128), 0)).toBeLessThan(0.1);
    expect(axialDiffDeg(at(170, 170), 45)).toBeLessThan(0.1);
    expect(axialDiffDeg(at(86, 170), -45)).toBeLessThan(0.1);
    expect(Math.abs(f.confidence[170 * 256 + 170] - CHECK.rings.coherencyAt170170)).toBeLessThan(1e-3);
  });

  it('gives the finite-window coherency of white noise, not 0', async () => {
    // Reference: the check script's mean over 16 numpy noise images (sigma_d 1, central half) at sigma_i = 2 / 4 / 8, and
    // the spread of one image's value about it (SD over those images). Ours is one image of other noise: within 3 SD.
    for (const sigma of [2, 4, 8]) {
      const { mean, sdOfOneImage } = CHECK.noiseCoherency[String(sigma)];
      const f = await orientationField(noise(256, 256, 5), { sigmaPx: sigma, strengthFloor: 0 });
      const c = central(f.confidence, 256, 256);
      expect(Math.abs(c.reduce((s, v) => s + v, 0) / c.length - mean), `sigma ${sigma}`).toBeLessThan(3 * sdOfOneImage);
    }
  });
});

describe('structureTensor mechanics', () => {
  it('Gaussian derivative kernel differentiates a ramp exactly and the smoothing kernel sums to 1', () => {
    // Calculus: d/dx of f(x) = 3x + 2 is 3. The sampled, truncated kernel (as scipy.ndimage builds it)
    // has slope sum(i^2 G(i)) / sigma^2, within 1e-3 of 1 at sigma 1.5.
    const k = gaussianDerivativeKernel(1.5);
    const r = (k.length - 1) / 2;
    const at10 = k.reduce((s, w, j) => s + w * (3 * (10 + j - r) + 2), 0);
    expect(Math.abs(at10 - 3)).toBeLessThan(3e-3);
    expect(gaussianKernel(2.2).reduce((s, v) => s + v, 0)).toBeCloseTo(1, 6);
  });

  it('gives the same tensor whole and in overlapping tiles', async () => {
    const p = addNoise(rings(300, 220, 140, 100, 11), 0.2, 3);
    const whole = await structureTensor(p, { sigmaPx: 3 });
    const tiled = await structureTensor(p, { sigmaPx: 3, tilePixels: 100 * 100 });
    let worst = 0;
    for (let i = 0; i < whole.jxx.length; i++) {
      worst = Math.max(worst, Math.abs(whole.jxx[i] - tiled.jxx[i]), Math.abs(whole.jxy[i] - tiled.jxy[i]), Math.abs(whole.jyy[i] - tiled.jyy[i]));
    }
    expect(worst).toBeLessThan(1e-5);
  });

  it('rejects nonsense scales with a message that names them', async () => {
    const p = grating(32, 32, 0, 8);
    await expect(orientationField(p, { sigmaPx: 0 })).rejects.toThrow(InputError);
    await expect(orientationField(p, { sigmaPx: Number.NaN })).rejects.toThrow(/sigma/);
    await expect(orientationField(p, { sigmaDerivPx: -1 })).rejects.toThrow(/derivative sigma/);
  });

  it('masks a flat image entirely and says so', async () => {
    const flat = { width: 40, height: 30, data: new Float32Array(1200).fill(0.5) };
    const f = await orientationField(flat);
    expect(f.mask.every((m) => m === 0)).toBe(true);
    expect(f.warnings.join(' ')).toMatch(/every pixel was masked/);
  });
});

describe('the strength floor\'s quantile', () => {
  it('is the sample value of rank floor(q (k - 1)) in sorted order (found by selection, not a sort)', () => {
    let seed = 5;
    const rnd = () => ((seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 2 ** 32);
    for (let t = 0; t < 300; t++) {
      const n = 1 + Math.floor(rnd() * 60000), v = new Float32Array(n), ties = rnd() < 0.3;
      for (let i = 0; i < n; i++) v[i] = ties ? Math.floor(rnd() * 5) : rnd() * 100;
      if (rnd() < 0.2) v[0] = Number.NaN;
      const q = t % 10 === 0 ? 0.99 : rnd();
      // The definition, by a sort: the strided sample of at most ~20 000 finite values.
      const step = Math.max(1, Math.floor(n / 20000)), sample: number[] = [];
      for (let i = 0; i < n; i += step) if (Number.isFinite(v[i])) sample.push(v[i]);
      const sorted = Float32Array.from(sample).sort();
      const want = sample.length ? sorted[Math.min(sample.length - 1, Math.floor(q * (sample.length - 1)))] : 0;
      expect(quantile(v, q), `n ${n}, q ${q}`).toBe(want);
    }
  });
});

describe('orientationField with non-finite pixels', () => {
  it('masks NaN and infinite pixels and their filter reach, keeps the rest exact, and says how many', async () => {
    const clean = grating(96, 96, 30, 8);
    const data = Float32Array.from(clean.data);
    data[40 * 96 + 40] = Number.NaN;
    data[70 * 96 + 20] = Number.POSITIVE_INFINITY;
    const f = await orientationField({ width: 96, height: 96, data }, { sigmaPx: 2 });
    const ref = await orientationField(clean, { sigmaPx: 2 });
    expect(f.mask[40 * 96 + 40]).toBe(0);
    expect(f.mask[70 * 96 + 20]).toBe(0);
    expect(f.warnings.join(' ')).toMatch(/2 pixels were not finite/);
    // Far from the bad pixels the field equals the clean one (the grating's construction).
    const far = 10 * 96 + 85;
    expect(f.mask[far]).toBe(1);
    expect(f.angleRad[far]).toBeCloseTo(ref.angleRad[far], 6);
    let usable = 0;
    for (let i = 0; i < f.mask.length; i++) usable += f.mask[i];
    expect(usable).toBeGreaterThan(0.7 * f.mask.length);
  });
});
