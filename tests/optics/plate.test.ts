import { describe, expect, it } from 'vitest';
import {
  readPlate, renderSampleImage, calibrateFromBackground, mirrorChoiceStats, resolveMirrorWithTexture, compensatorAxisAdvice,
  fullWavePlate, type CameraCalibration,
} from '../../src/optics/index.ts';
import { parseRect } from '../../src/common/index.ts';
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
    // Round trip: within 2 deg where the physics allows; the confidence says where.
    for (const { field } of runs) for (let i = 0; i < angles.length; i++) for (let j = 0; j < rets.length; j++) {
      expect(blockStats(field, i, j).worstHigh).toBeLessThanOrEqual(2 + 1e-4); // 1e-4: Float32 storage of the angle
    }
  });

  it('pixels the physics cannot read get low confidence: tiny retardance, axes near the polars or the plate', () => {
    // Closed form, first order in Gamma with the plate at +45: Gamma_eff = Gamma_p + Gamma sin 2 theta (docs/methods.md,
    // "3.2 First-order reading of the effective retardance"): no signal at Gamma ~ 0, none at theta = 0/90, and no angle sensitivity at theta = +-45
    // (d sin 2 theta / d theta = 2 cos 2 theta = 0).
    for (const { field } of runs) for (let i = 0; i < angles.length; i++) for (let j = 0; j < rets.length; j++) {
      const nearPolars = Math.min(axialDiffDeg(angles[i], 0), axialDiffDeg(angles[i], 90)) <= 2;
      const nearPlate = Math.min(axialDiffDeg(angles[i], 45), axialDiffDeg(angles[i], -45)) <= 0.5;
      if (rets[j] <= 50 || nearPolars || nearPlate) expect(blockStats(field, i, j).highFraction).toBe(0);
    }
  });

  // Where one image does read the angle, and how often the reader is confident there, is checked against an outside
  // map of what the colour determines (numpy rendering and candidates) in tests/optics/reference-readers.test.ts.

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
    // Construction: 200 nm. Within 6 nm: three steps of the reader's 2-nm retardance lookup (LOOKUP_DEFAULTS).
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
    expect(f.warnings.join(' ')).toContain('1 pixels at full scale (clipped)');
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
    // A 530-nm plate (within the 530-560 nm of makers' plates: Olympus/Evident Microscopy Resource Center, "The First
    // Order (Full Wave) Retardation Plate") rendered by the model, read back.
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

  it('mirrorChoiceStats: free of the mirror choice against the compensator axis, matters elsewhere', () => {
    // cos 2 delta is even, so S against the compensator axis is the same for a rod and its mirror; against 0 deg, theta = 10 vs 80 differ.
    const f = field([10, 20, 44.5, -30]);
    expect(mirrorChoiceStats(f, 45)).toEqual({ mattersFraction: 0, mirrorFree: true, n: 4 });
    expect(mirrorChoiceStats(f, -45).mirrorFree).toBe(true);
    const s0 = mirrorChoiceStats(f, 0);
    expect(s0.mirrorFree).toBe(false);
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
    expect(compensatorAxisAdvice(45, 45).mirrorFree).toBe(true);
    expect(compensatorAxisAdvice(-45, 45).mirrorFree).toBe(true);
    const far = compensatorAxisAdvice(0, 45);
    expect(far.offsetDeg).toBeCloseTo(45, 12);
    expect(far.text).toContain('45 deg from the compensator axis');
    expect(compensatorAxisAdvice(50, 45).text).not.toContain('from the compensator axis, so');
  });
});

describe('readPlate with a known sample retardance (sampleRetardanceNm)', () => {
  // Mirror-reduced angles over the full half-turn; 6-px blocks, two rows of blocks, sensor noise 0.005.
  const angles = [-88, -80, -70, -60, -50, -45, -40, -35, -30, -20, -10, -5, 0, 5, 10, 20, 30, 35, 40, 45, 50, 60, 70, 80, 88];
  const B = 6, W = angles.length * B;
  const blocks = (R: number, tol: number | undefined, seed: number) => {
    const img = renderSampleImage(W, 2 * B, (x) => ({ angleRad: angles[Math.floor(x / B)] * DEG, retardanceNm: R }), {}, { noiseSd: 0.005, seed, camera: CAMERA });
    const field = readPlate(img, { camera: CAMERA, sampleRetardanceNm: R, sampleRetardanceToleranceNm: tol }).field;
    return angles.map((a, i) => {
      let n = 0, masked = 0, worst = 0, worstHigh = 0, high = 0, conf = 0;
      for (let y = 0; y < 2 * B; y++) for (let x = i * B; x < (i + 1) * B; x++) {
        const k = y * W + x;
        if (!field.mask[k]) { masked++; continue; }
        const e = axialDiffDeg(field.angleRad[k] / DEG, mirrorReduced(a));
        n++; conf += field.confidence[k]; worst = Math.max(worst, e);
        if (field.confidence[k] >= 0.5) { high++; worstHigh = Math.max(worstHigh, e); }
      }
      return { angle: a, n, masked, worst, worstHigh, high, meanConf: n ? conf / n : 0, field };
    });
  };
  const cases = [150, 300].flatMap((R) => [0, undefined].map((tol) => ({ R, tol, stats: blocks(R, tol, R + (tol ?? 7)) })));
  // Closed form (first order, plate at +45): Gamma_eff = Gamma_p + Gamma_s sin 2 theta. With Gamma_s known the colour fixes
  // sin 2 theta; d(sin 2 theta)/d theta = 2 cos 2 theta, so the angle is sharp where |cos 2 theta| is large and undefined at
  // theta = +-45 (theta and its mirror 90 - theta meet). At theta = 0/90 the sample drops out (closed form: I = sin^2(delta_p/2),
  // the background's colour).
  const cos2 = (a: number) => Math.abs(Math.cos(2 * a * DEG));

  it('reads every pixel within 2 deg (mirror-reduced) where the angle is defined: exact band, and the default 10 % band', () => {
    // Round trip: within 2 deg where the physics allows (1e-4: Float32 storage of the angle). Known exactly:
    // wherever |cos 2 theta| >= 0.5. A band of +-t Gamma itself leaves sin 2 theta uncertain by t sin 2 theta, i.e. the angle by
    // (t / 2) |tan 2 theta| rad (first order, differentiating the closed form): required only where that is at most 2 deg.
    for (const { tol, R, stats } of cases) for (const b of stats) {
      const t = (tol ?? 0.1 * R) / R;
      const bandSpreadDeg = ((t / 2) * Math.abs(Math.tan(2 * b.angle * DEG))) / DEG;
      if (cos2(b.angle) >= 0.5 && bandSpreadDeg <= 2) expect(b.worst, `${R} nm +- ${t * R}, ${b.angle} deg`).toBeLessThanOrEqual(2 + 1e-4);
      // Confident pixels are within 2 deg everywhere.
      expect(b.worstHigh).toBeLessThanOrEqual(2 + 1e-4);
    }
  });

  it('gives high confidence where the colour is angle-sensitive, low near the compensator axis and at extinction', () => {
    for (const { tol, stats } of cases) for (const b of stats) {
      const fromPolars = Math.min(axialDiffDeg(b.angle, 0), axialDiffDeg(b.angle, 90));
      const fromPlate = Math.min(axialDiffDeg(b.angle, 45), axialDiffDeg(b.angle, -45));
      // Known exactly: 5-20 deg from the polars (|cos 2 theta| >= 0.77, clear of the background colour) reads with confidence.
      if (tol === 0 && fromPolars >= 5 && fromPolars <= 20) expect(b.meanConf, `${b.angle} deg`).toBeGreaterThanOrEqual(0.45);
      // Within 5 deg of the compensator axis or its normal: |cos 2 theta| <= 0.17, no pixel is confident.
      if (fromPlate <= 5) { expect(b.high, `${b.angle} deg`).toBe(0); expect(b.meanConf).toBeLessThan(0.2); }
      // Slow axis along a polariser: the background's colour; masked as sample-free or read with low confidence.
      if (fromPolars === 0) { expect(b.masked).toBeGreaterThan(0); expect(b.high).toBe(0); }
    }
  });

  it('keeps the retardance in the band and states the constraint in the options', () => {
    const { stats } = cases.find((c) => c.R === 300 && c.tol === undefined)!;
    const f = stats[0].field;
    for (let k = 0; k < f.mask.length; k++) if (f.mask[k]) { expect(f.retardanceNm![k]).toBeGreaterThanOrEqual(270); expect(f.retardanceNm![k]).toBeLessThanOrEqual(330); }
    expect(f.options.sampleRetardanceNm).toBe(300);
    expect(f.options.sampleRetardanceToleranceNm).toBeCloseTo(30, 9); // default: 10 % of the retardance
    expect(f.ambiguity).toBe('mirror-about-compensator');
  });

  it('rejects a nonsense band', () => {
    const img = gridImage([20], [150], 4, 1);
    expect(() => readPlate(img, { camera: CAMERA, sampleRetardanceNm: -5 })).toThrow(InputError);
    expect(() => readPlate(img, { camera: CAMERA, sampleRetardanceNm: 100, sampleRetardanceToleranceNm: 150 })).toThrow(InputError);
    expect(() => readPlate(img, { camera: CAMERA, sampleRetardanceToleranceNm: 10 })).toThrow(InputError);
  });
});
