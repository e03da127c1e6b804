import { describe, expect, it } from 'vitest';
import {
  readPlate, renderSampleImage, calibrateFromBackground, mirrorChoiceStats, resolveMirrorWithTexture, compensatorAxisAdvice,
  fullWavePlate, parseRect, type CameraCalibration,
} from '../../src/optics/index.ts';
import { DEG, axialDiffDeg } from '../../src/common/angles.ts';
import { InputError } from '../../src/common/errors.ts';
import { makeImage } from '../../src/image/types.ts';
import type { OrientationField } from '../../src/orientation/types.ts';

const CAMERA: CameraCalibration = { gains: [1, 1, 1], exposure: 0.75 };

/** Blocks of constant (angle, retardance), B px square, rendered by the forward model with sensor noise. */
function gridImage(angles: number[], rets: number[], B: number, seed: number, train = {}, noiseSd = 0.005) {
  return renderSampleImage(angles.length * B, rets.length * B,
    (x, y) => ({ angleRad: angles[Math.floor(x / B)] * DEG, retardanceNm: rets[Math.floor(y / B)] }), train, { noiseSd, seed, camera: CAMERA });
}

/** What one plate image can report: of theta and 90 - theta (mirror about +45), the one within 45 deg of 0. */
const mirrorReduced = (a: number) => (Math.abs(a) <= 45 ? a : 90 * Math.sign(a) - a);

describe('readPlate round trip (one compensator image, 3200 K, plate 550 nm at +45)', () => {
  const angles = [-80, -60, -45, -40, -30, -20, -10, -2, 0, 2, 10, 20, 30, 40, 45, 60, 80, 90];
  const rets = [0, 50, 100, 150, 200, 250, 300, 350, 400, 450, 500, 550, 600];
  const B = 6;
  const runs = [3, 5].map((seed) => {
    const img = gridImage(angles, rets, B, seed);
    return { img, field: readPlate(img, { camera: CAMERA }).field };
  });
  const W = angles.length * B;
  const blockStats = (field: OrientationField, i: number, j: number) => {
    let high = 0, worstHigh = 0;
    for (let y = j * B; y < j * B + B; y++) for (let x = i * B; x < i * B + B; x++) {
      const k = y * W + x;
      if (field.confidence[k] >= 0.5) {
        high++;
        worstHigh = Math.max(worstHigh, axialDiffDeg(field.angleRad[k] / DEG, mirrorReduced(angles[i])));
      }
    }
    return { highFraction: high / (B * B), worstHigh };
  };

  it('every pixel with confidence >= 0.5 is within 2 deg of the true orientation (mirror-reduced)', () => {
    // Issue 3 round-trip requirement: within 2 deg where the physics allows; the confidence says where.
    for (const { field } of runs) for (let i = 0; i < angles.length; i++) for (let j = 0; j < rets.length; j++) {
      expect(blockStats(field, i, j).worstHigh).toBeLessThanOrEqual(2 + 1e-4); // 1e-4: Float32 storage of the angle
    }
  });

  it('pixels the physics cannot read get low confidence: tiny retardance, axes near the polars or the plate', () => {
    // domain.md §2: Gamma_eff ~ Gamma_p + Gamma sin 2 theta: no signal at Gamma ~ 0, none at theta = 0/90 (first order),
    // and no angle sensitivity at theta = +-45 (d sin 2theta / d theta = 0).
    for (const { field } of runs) for (let i = 0; i < angles.length; i++) for (let j = 0; j < rets.length; j++) {
      const nearPolars = Math.min(axialDiffDeg(angles[i], 0), axialDiffDeg(angles[i], 90)) <= 2;
      const nearPlate = Math.min(axialDiffDeg(angles[i], 45), axialDiffDeg(angles[i], -45)) <= 0.5;
      if (rets[j] <= 50 || nearPolars || nearPlate) expect(blockStats(field, i, j).highFraction).toBe(0);
    }
  });

  it('maps where one image does read orientation: some blocks are read with confidence', () => {
    // Regression map of this forward model: e.g. -20 deg / 200 nm and 20 deg / 350 nm are readable, and at least 5 % of all pixels.
    const { field } = runs[0];
    expect(blockStats(field, angles.indexOf(-20), rets.indexOf(200)).highFraction).toBeGreaterThan(0.6);
    expect(blockStats(field, angles.indexOf(20), rets.indexOf(350)).highFraction).toBeGreaterThan(0.6);
    let high = 0;
    for (let k = 0; k < field.confidence.length; k++) if (field.confidence[k] >= 0.5) high++;
    expect(high / field.confidence.length).toBeGreaterThan(0.05);
  });

  it('flags the mirror ambiguity about the compensator axis and states the assumption', () => {
    const { field } = runs[0];
    expect(field.method).toBe('plate');
    expect(field.ambiguity).toBe('mirror-about-compensator');
    expect(field.ambiguityAxisDeg).toBe(45);
    expect(String(field.options.mirrorAssumption)).toContain('within 45 deg of 0');
    for (let k = 0; k < field.angleRad.length; k++) expect(Math.abs(field.angleRad[k])).toBeLessThanOrEqual(45 * DEG + 1e-6);
  });

  it('the retardance of confident pixels is read too', () => {
    const { field } = runs[0];
    const i = angles.indexOf(-20), j = rets.indexOf(200);
    const vals: number[] = [];
    for (let y = j * B; y < j * B + B; y++) for (let x = i * B; x < i * B + B; x++) if (field.confidence[y * W + x] >= 0.5) vals.push(field.retardanceNm![y * W + x]);
    vals.sort((a, b) => a - b);
    expect(Math.abs(vals[vals.length >> 1] - 200)).toBeLessThanOrEqual(6);
  });
});

describe('readPlate options', () => {
  it('a reference axis of 90 deg reports the other mirror candidate', () => {
    const img = gridImage([-20], [200], 8, 4);
    const near0 = readPlate(img, { camera: CAMERA }).field, near90 = readPlate(img, { camera: CAMERA, referenceAxisDeg: 90 }).field;
    const k = 4 * 8 + 4;
    expect(axialDiffDeg(near0.angleRad[k] / DEG, -20)).toBeLessThanOrEqual(2);
    // Mirror image about +45: 90 - (-20) = 110 = -70 deg.
    expect(axialDiffDeg(near90.angleRad[k] / DEG, 110)).toBeLessThanOrEqual(2);
  });

  it('the brightness-independent match reads an unevenly lit image', () => {
    // Exposure falling from 0.75 to 0.45 across the frame: chroma matching ignores it.
    const angles = [-20, 20], rets = [200, 350], B = 10;
    const w = angles.length * B, h = rets.length * B;
    const base = gridImage(angles, rets, B, 6, {}, 0.002);
    const planes = base.planes.map((p) => p.map((v, k) => {
      const x = k % w, lin = ((v + 0.055) / 1.055) ** 2.4 * (1 - (0.4 * x) / w);
      return lin <= 0.0031308 ? 12.92 * lin : 1.055 * lin ** (1 / 2.4) - 0.055;
    }));
    const dim = makeImage({ ...base, planes });
    const chroma = readPlate(dim, { camera: CAMERA, match: 'chroma' }).field;
    const errs: number[] = [];
    for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) {
      errs.push(axialDiffDeg(chroma.angleRad[y * w + x] / DEG, angles[Math.floor(x / B)]));
    }
    errs.sort((a, b) => a - b);
    expect(errs[errs.length >> 1]).toBeLessThanOrEqual(2);
  });

  it('masks saturated pixels and counts them', () => {
    const img = gridImage([20], [300], 4, 1);
    img.planes[0][0] = 1; img.planes[1][0] = 1; img.planes[2][0] = 1;
    const f = readPlate(img, { camera: CAMERA }).field;
    expect(f.mask[0]).toBe(0);
    expect(f.mask[1]).toBe(1);
    expect(f.warnings.join(' ')).toContain('1 saturated');
  });

  it('rejects grey images, a train without compensator and a filter', () => {
    const grey = makeImage({ width: 2, height: 2, channels: 1, planes: [new Float32Array(4)], bitDepth: 8, encoding: 'srgb', source: { name: 'g' } });
    expect(() => readPlate(grey)).toThrow(InputError);
    const img = gridImage([20], [300], 4, 1);
    expect(() => readPlate(img, { train: { compensator: null } })).toThrow(InputError);
    expect(() => readPlate(img, { train: { monochromeNm: 546 } })).toThrow(InputError);
    expect(() => readPlate(img, { retardanceMaxNm: -3 })).toThrow(InputError);
  });
});

describe('calibrateFromBackground', () => {
  it('finds the compensator retardance of a sample-free area', () => {
    // A 530-nm plate (within the 530-560 nm makers' range, domain.md §2 [S10]) rendered by the model, read back.
    const img = gridImage([0], [0], 20, 2, { compensator: fullWavePlate(530) }, 0.002);
    const cal = calibrateFromBackground(img, parseRect('0,0,20,20'), {}, { camera: CAMERA, fitWhiteBalance: false });
    expect(Math.abs(cal.compensatorNm - 530)).toBeLessThanOrEqual(1);
    expect(cal.residualDeltaE00).toBeLessThan(1);
    expect(cal.camera.exposure).toBeCloseTo(0.75, 1);
  });

  it('with a white-balance error it still fits the background within 1 Delta E00', () => {
    const img = renderSampleImage(10, 10, () => ({ angleRad: 0, retardanceNm: 0 }), { compensator: fullWavePlate(550) }, { camera: { gains: [1.1, 1, 0.9], exposure: 0.7 } });
    const cal = calibrateFromBackground(img, { x: 0, y: 0, width: 10, height: 10 });
    expect(cal.residualDeltaE00).toBeLessThan(1);
    expect(Math.abs(cal.compensatorNm - 550)).toBeLessThanOrEqual(10);
  });

  it('rejects a rectangle outside the image', () => {
    const img = gridImage([0], [0], 10, 2);
    expect(() => calibrateFromBackground(img, { x: 5, y: 5, width: 10, height: 10 })).toThrow(InputError);
    expect(() => parseRect('1,2,3')).toThrow(InputError);
  });
});

describe('mirror choice', () => {
  const field = (angles: number[], extra: Partial<OrientationField> = {}): OrientationField => ({
    width: angles.length, height: 1, angleRad: Float32Array.from(angles, (a) => a * DEG), confidence: new Float32Array(angles.length).fill(1),
    mask: new Uint8Array(angles.length).fill(1), method: 'plate', ambiguity: 'mirror-about-compensator', ambiguityAxisDeg: 45, options: {}, warnings: [], ...extra,
  });

  it('mirrorChoiceStats: exact against the compensator axis, matters elsewhere', () => {
    // Issue 3: cos 2 delta is even, so S against the compensator axis is exact; against 0 deg, theta = 10 vs 80 differ.
    const f = field([10, 20, 44.5, -30]);
    expect(mirrorChoiceStats(f, 45)).toEqual({ mattersFraction: 0, exact: true, n: 4 });
    expect(mirrorChoiceStats(f, -45).exact).toBe(true);
    const s0 = mirrorChoiceStats(f, 0);
    expect(s0.exact).toBe(false);
    expect(s0.mattersFraction).toBeCloseTo(0.75, 12);
  });

  it('resolveMirrorWithTexture takes the candidate nearer the coherent texture direction', () => {
    const plate = field([10, 20, 30, 40]);
    const texture: OrientationField = { ...field([80, 21, 60, 20]), method: 'texture', ambiguity: 'none', confidence: Float32Array.from([0.9, 0.9, 0.1, 0.9]) };
    const r = resolveMirrorWithTexture(plate, texture);
    // 10 vs 80: texture 80 -> 80; 20 vs 70: texture 21 -> 20; third pixel incoherent; 40 vs 50 with texture 20 -> 40 (margin 10 deg).
    expect(Array.from(r.field.angleRad, (a) => Math.round(a / DEG))).toEqual([80, 20, 30, 40]);
    expect(Array.from(r.resolved)).toEqual([1, 1, 0, 1]);
    expect(r.resolvedFraction).toBeCloseTo(0.75, 12);
    expect(r.field.ambiguity).toBe('mirror-about-compensator');
    expect(() => resolveMirrorWithTexture(plate, field([1, 2]))).toThrow(InputError);
  });

  it('compensatorAxisAdvice warns when the axis is far from the compensator axis', () => {
    expect(compensatorAxisAdvice(45, 45).exact).toBe(true);
    expect(compensatorAxisAdvice(-45, 45).exact).toBe(true);
    const far = compensatorAxisAdvice(0, 45);
    expect(far.offsetDeg).toBeCloseTo(45, 12);
    expect(far.text).toContain('45 deg from the compensator axis');
    expect(compensatorAxisAdvice(50, 45).text).not.toContain('from the compensator axis, so');
  });
});
