import { describe, expect, it } from 'vitest';
import { fitFourAngle, fourAngleAnalysis, recycleAngleSeries, renderSampleImage, seriesIntensityImage, type CameraCalibration } from '../../src/optics/index.ts';
import { DEG, axialDiffDeg } from '../../src/common/angles.ts';
import { InputError } from '../../src/common/errors.ts';
import { makeImage, type Image } from '../../src/image/types.ts';
import { mod90Axis } from '../../src/orientation/index.ts';

const QUAD = [0, 22.5, 45, 67.5];

describe('fitFourAngle on closed-form intensities', () => {
  it('theta = 30, A = 1, b = 0', () => {
    // Closed form: I(alpha) = b + A sin^2 2(theta - alpha) = a0 + a4c cos 4 alpha + a4s sin 4 alpha with a0 = b + A/2,
    // a4c = -(A/2) cos 4 theta, a4s = -(A/2) sin 4 theta. theta = 30, A = 1, b = 0: I = sin^2 60, sin^2 15, sin^2 30, sin^2 75
    // = 0.75, 0.066987, 0.25, 0.933013; a0 = 0.5, a4c = -0.5 cos 120 = 0.25, a4s = -0.5 sin 120 = -0.433013.
    const I = QUAD.map((a) => Math.sin(2 * (30 - a) * DEG) ** 2);
    [0.75, 0.066987, 0.25, 0.933013].forEach((v, k) => expect(Math.abs(I[k] - v)).toBeLessThan(1e-6));
    const f = fitFourAngle(I, QUAD);
    expect(f.a0).toBeCloseTo(0.5, 6);
    expect(f.a4c).toBeCloseTo(0.25, 6);
    expect(f.a4s).toBeCloseTo(-0.433013, 6);
    expect(f.angleDeg).toBeCloseTo(30, 6);
    expect(f.amplitude).toBeCloseTo(1, 6);
    expect(f.background).toBeCloseTo(0, 6);
  });

  it('theta = 0, -20 (returns 70, mod 90) and 80', () => {
    // Closed form as above: theta = 0 gives I = sin^2 0, sin^2 45, sin^2 90, sin^2 135 = 0, 0.5, 1, 0.5; the fit reports theta
    // mod 90 in [0, 90), so -20 comes back as 70; theta = 80 gives sin^2 160, sin^2 115, sin^2 70, sin^2 25 = 0.116978,
    // 0.821394, 0.883022, 0.178606 (6 decimals, hence 1e-5).
    expect(Math.abs(fitFourAngle([0, 0.5, 1, 0.5], QUAD).angleDeg)).toBeLessThan(1e-9);
    const m20 = QUAD.map((a) => Math.sin(2 * (-20 - a) * DEG) ** 2);
    expect(Math.abs(fitFourAngle(m20, QUAD).angleDeg - 70)).toBeLessThan(1e-6);
    expect(Math.abs(fitFourAngle([0.116978, 0.821394, 0.883022, 0.178606], QUAD).angleDeg - 80)).toBeLessThan(1e-5);
  });

  it('any set of angles: six angles with background and residual', () => {
    // Closed form as above with b = 0.2, A = 0.6, theta = -35 (reported as 55 mod 90); exact data leave a residual of 0.
    const angles = [0, 15, 30, 45, 60, 75];
    const I = angles.map((a) => 0.2 + 0.6 * Math.sin(2 * (-35 - a) * DEG) ** 2);
    const f = fitFourAngle(I, angles);
    expect(f.angleDeg).toBeCloseTo(55, 9);
    expect(f.amplitude).toBeCloseTo(0.6, 9);
    expect(f.background).toBeCloseTo(0.2, 9);
    expect(f.residual).toBeLessThan(1e-12);
    I[2] += 0.1;
    expect(fitFourAngle(I, angles).residual).toBeGreaterThan(0.01);
  });

  it('rejects angle sets that cannot separate orientation', () => {
    expect(() => fitFourAngle([1, 2, 3], [0, 90, 180])).toThrow(InputError);
  });
});

describe('fourAngleAnalysis on rendered images', () => {
  const angles = [-80, -60, -30, -10, 0, 10, 30, 45, 60, 80, 90];
  const rets = [20, 50, 100, 200, 300, 450, 600];
  const B = 6, W = angles.length * B, H = rets.length * B;
  const at = (x: number, y: number) => ({ angleRad: angles[Math.floor(x / B)] * DEG, retardanceNm: rets[Math.floor(y / B)] });
  const cam: CameraCalibration = { gains: [1, 1, 1], exposure: 0.75 };
  // The crossed pair turned by alpha (polariser alpha, analyser alpha + 90), white light, no compensator.
  const quads = QUAD.map((a, k) => renderSampleImage(W, H, at, { polariserDeg: a, analyserDeg: a + 90, compensator: null }, { noiseSd: 0.003, seed: 10 + k, camera: cam }));
  const plate = renderSampleImage(W, H, at, {}, { noiseSd: 0.003, seed: 20, camera: cam });

  it('orientation mod 90 within 1 deg wherever the retardance is >= 50 nm', () => {
    const r = fourAngleAnalysis(quads);
    expect(r.field.method).toBe('angle-series');
    expect(r.field.ambiguity).toBe('mod-90');
    for (let k = 0; k < W * H; k++) {
      const i = Math.floor((k % W) / B), j = Math.floor(Math.floor(k / W) / B);
      if (rets[j] < 50) continue;
      const d = axialDiffDeg(r.field.angleRad[k] / DEG, angles[i]);
      expect(Math.min(d, 90 - d)).toBeLessThanOrEqual(1);
    }
  });

  it('gives cos 2 theta and sin 2 theta of its own angles, and folds about the axis mod90Axis finds (with a plate: its decided pixels\' axis)', () => {
    // Closed form: cos2 and sin2 are the cosine and sine of twice the angle the field reports (the fit's half-angle
    // values; float32 rounding of the angle, within 2^-22 rad, and of the values, hence 1e-6), with the plate's and the
    // fold's 90-deg moves (both change sign); the fold's axis is mod90Axis of the angles before the fold (the fit's own
    // sums in place of per-pixel cos 4 theta and sin 4 theta, hence 1e-4 deg); with a plate, the axis mod 180 deg of the
    // pixels it decided, 1/2 atan2(sum w sin 2 theta, sum w cos 2 theta) (the fold leaves those pixels as they are).
    for (const options of [{}, { plate, plateOptions: { camera: cam } }, { anglesDeg: [0, 30, 60, 90, 120, 150] }]) {
      const imgs = options.anglesDeg ? options.anglesDeg.map((a, k) => renderSampleImage(W, H, at, { polariserDeg: a, analyserDeg: a + 90, compensator: null }, { noiseSd: 0.003, seed: 30 + k, camera: cam })) : quads;
      const f = fourAngleAnalysis(imgs, options).field;
      let worst = 0, n = 0;
      for (let k = 0; k < W * H; k++) {
        if (!f.mask[k]) continue;
        n++;
        worst = Math.max(worst, Math.abs(f.cos2![k] - Math.cos(2 * f.angleRad[k])), Math.abs(f.sin2![k] - Math.sin(2 * f.angleRad[k])));
      }
      expect(n).toBeGreaterThan(W * H / 2);
      expect(worst).toBeLessThan(1e-6);
      if (f.ambiguity !== 'mod-90') continue;
      if (options.plate) {
        let c = 0, s = 0;
        for (let k = 0; k < W * H; k++) if (f.mask[k] && !f.ambiguous![k]) { c += f.confidence[k] * f.cos2![k]; s += f.confidence[k] * f.sin2![k]; }
        expect(axialDiffDeg(f.options.mod90FoldedAboutDeg as number, (0.5 * Math.atan2(s, c)) / DEG)).toBeLessThan(1e-4);
        continue;
      }
      const before = fourAngleAnalysis(imgs, { ...options, referenceAxisDeg: 0 }).field;
      // Folding about 0 deg keeps each angle within 45 deg of it, so its mod-90 class; mod90Axis reads only that class.
      expect(axialDiffDeg(f.options.mod90FoldedAboutDeg as number, mod90Axis(before))).toBeLessThan(1e-4);
    }
  });

  it('the plate image resolves the 90-deg choice except with the axis along the polars', () => {
    // Closed form, first order with the plate at +45: Gamma_eff = Gamma_p + Gamma sin 2 theta gives the sign of sin 2 theta,
    // which tells theta from theta + 90; at theta = 0 / 90 it is 0. Against numpy least squares on outside images:
    // tests/optics/reference-readers.test.ts.
    const r = fourAngleAnalysis(quads, { plate, plateOptions: { camera: cam } });
    let resolvedWrong = 0, checked = 0;
    for (let k = 0; k < W * H; k++) {
      const i = Math.floor((k % W) / B), j = Math.floor(Math.floor(k / W) / B);
      if (rets[j] < 100 || axialDiffDeg(angles[i], 0) < 15 || axialDiffDeg(angles[i], 90) < 15) continue;
      checked++;
      if (axialDiffDeg(r.field.angleRad[k] / DEG, angles[i]) > 1) resolvedWrong++;
    }
    expect(checked).toBeGreaterThan(0);
    expect(resolvedWrong).toBe(0);
    expect(r.resolvedFraction).toBeGreaterThan(0.5);
    expect(r.resolvedFraction).toBeLessThan(1);
  });

  it('with a plate, folds the pixels it leaves undecided about the axis of those it decided, not 90 deg off it', () => {
    // A field about 120 deg with a stripe along the analyser (90 deg), which the plate at +45 deg cannot decide (its
    // first-order effect, Gamma sin 2 theta, is 0 there). The fit's 4-theta sums fix the axis only modulo 90 deg:
    // 4 x (90, 105, 120, 135, 150) deg gives 120 deg, so 30 deg, about which 90 deg folds to 0 deg. The decided pixels
    // lie about 120 deg, within 45 deg of 90: the undecided stripe must stay at 90 deg.
    const ang = [90, 105, 120, 135, 150], S = 6, w = ang.length * S, h = 2 * S;
    const at2 = (x: number, y: number) => ({ angleRad: ang[Math.floor(x / S)] * DEG, retardanceNm: y < S ? 200 : 300 });
    const imgs = QUAD.map((a, k) => renderSampleImage(w, h, at2, { polariserDeg: a, analyserDeg: a + 90, compensator: null }, { noiseSd: 0.003, seed: 50 + k, camera: cam }));
    const plate2 = renderSampleImage(w, h, at2, {}, { noiseSd: 0.003, seed: 60, camera: cam });
    const f = fourAngleAnalysis(imgs, { plate: plate2, plateOptions: { camera: cam } }).field;
    // The plate left some pixels undecided (the stripe); whether their neighbours or the fold then decided them,
    // every pixel reads its own angle.
    expect(f.warnings.some((t) => /decided the 90-deg choice in (?!100\.0)/.test(t))).toBe(true);
    let worst = 0;
    for (let k = 0; k < w * h; k++) {
      if (!f.mask[k]) continue;
      worst = Math.max(worst, axialDiffDeg(f.angleRad[k] / DEG, ang[Math.floor((k % w) / S)]));
    }
    expect(worst).toBeLessThanOrEqual(2);
  });

  it('with a plate, decides the pixels it leaves undecided by their neighbours\' director where folding about the whole field\'s axis would put them 90 deg off', () => {
    // Columns 8 px wide: five at 10 deg, then 75, 90 and 105 deg. The plate (at +45 deg) cannot decide the column
    // along the analyser (90 deg); the decided pixels' axis is near 20 deg, about which 90 deg folds to 0 deg (wrong).
    // Its neighbours (75 and 105 deg, the 3 x 3 blocks of 8 px around it) have a mean director of 90 deg: it must
    // read 90 deg (construction).
    const ang = [10, 10, 10, 10, 10, 75, 90, 105], S = 8, w = ang.length * S, h = 3 * S;
    const at2 = (x: number) => ({ angleRad: ang[Math.floor(x / S)] * DEG, retardanceNm: 250 });
    const imgs = QUAD.map((a, k) => renderSampleImage(w, h, at2, { polariserDeg: a, analyserDeg: a + 90, compensator: null }, { noiseSd: 0.003, seed: 70 + k, camera: cam }));
    const plate2 = renderSampleImage(w, h, at2, {}, { noiseSd: 0.003, seed: 80, camera: cam });
    const f = fourAngleAnalysis(imgs, { plate: plate2, plateOptions: { camera: cam } }).field;
    let worst = 0, read = 0;
    for (let y = 0; y < h; y++) for (let x = 6 * S + 1; x < 7 * S - 1; x++) {
      const k = y * w + x;
      if (!f.mask[k]) continue;
      read++;
      worst = Math.max(worst, axialDiffDeg(f.angleRad[k] / DEG, 90));
    }
    expect(read).toBeGreaterThan(0);
    expect(worst).toBeLessThanOrEqual(2);
    expect(f.warnings.some((t) => /neighbours' director/.test(t))).toBe(true);
  });

  it('flat-field division removes uneven illumination from the amplitude', () => {
    const shade = (img: Image) => makeImage({ ...img, encoding: 'linear', planes: img.planes.map((p) => p.map((v, k) => ((v + 0.055) / 1.055) ** 2.4 * (0.5 + (0.5 * (k % W)) / W))) });
    const flatPlanes = [0, 1, 2].map(() => Float32Array.from({ length: W * H }, (_, k) => 0.5 + (0.5 * (k % W)) / W));
    const flat = makeImage({ width: W, height: H, channels: 3, planes: flatPlanes, bitDepth: 32, encoding: 'linear', source: { name: 'flat' } });
    const even = fourAngleAnalysis(quads).amplitude;
    const corrected = fourAngleAnalysis(quads.map(shade), { flatField: flat }).amplitude;
    let mean = 0;
    for (let k = 0; k < W; k++) mean += flatPlanes[0][k];
    mean /= W;
    // Rows of one retardance at 45 deg: corrected amplitude equals the even one times the flat's mean.
    const y = rets.indexOf(300) * B + 2, x0 = angles.indexOf(-60) * B + 2, x1 = angles.indexOf(60) * B + 2;
    for (const x of [x0, x1]) expect(corrected[y * W + x]).toBeCloseTo(even[y * W + x] * mean, 3);
  });

  it('reads the same from the images reduced to their linear intensity (seriesIntensityImage), clipped pixels included', () => {
    // Some pixels at full scale in one channel of one image, and a NaN: they must stay clipped and not read.
    const withClip = quads.map((img, k) => makeImage({ ...img, planes: img.planes.map((p, c) => p.map((v, i) => (k === 1 && c === 2 && i % 17 === 0 ? 1 : k === 2 && c === 0 && i === 5 ? NaN : v))) }));
    const shadeFlat = makeImage({ ...quads[0], planes: quads[0].planes.map((p) => p.map((_, i) => 0.6 + 0.3 * ((i % W) / W))) });
    const options = { flatField: shadeFlat, dark: quads[3], plate, plateOptions: { camera: cam } };
    const whole = fourAngleAnalysis(withClip, options);
    const reduced = fourAngleAnalysis([withClip[0], ...withClip.slice(1).map((img) => seriesIntensityImage(img))], {
      ...options, flatField: seriesIntensityImage(shadeFlat, false), dark: seriesIntensityImage(quads[3], false),
    });
    expect(reduced.field.clipped!.reduce((a, b) => a + b, 0)).toBeGreaterThan(0);
    for (const key of ['angleRad', 'confidence', 'mask', 'clipped'] as const) expect(reduced.field[key]).toEqual(whole.field[key]);
    expect(reduced.amplitude).toEqual(whole.amplitude);
    expect(reduced.residual).toEqual(whole.residual);
    expect(reduced.field.warnings).toEqual(whole.field.warnings);
  });

  it('rejects too few images, mismatched angles and mismatched sizes', () => {
    expect(() => fourAngleAnalysis(quads.slice(0, 2))).toThrow(InputError);
    expect(() => fourAngleAnalysis(quads, { anglesDeg: [0, 45, 90] })).toThrow(InputError);
    const small = renderSampleImage(4, 4, () => ({ angleRad: 0, retardanceNm: 0 }));
    expect(() => fourAngleAnalysis([...quads.slice(0, 3), small])).toThrow(InputError);
  });
});

describe('fourAngleAnalysis: its middle amplitude, and a reading after the one before was handed back', () => {
  // 640 x 480 (arrays of 1.2 MB, above the pool's least size): the slow axis turns across the frame, the retardance
  // rises down it, and a sample-free strip on the left gives pixels masked for low amplitude.
  const W = 640, H = 480, cam: CameraCalibration = { gains: [1, 1, 1], exposure: 0.75 };
  const at = (x: number, y: number) => (x < 30 ? { angleRad: 0, retardanceNm: 0 } : { angleRad: ((x / W) * 160 - 80) * DEG, retardanceNm: 50 + (400 * y) / H });
  const quads = QUAD.map((a, k) => renderSampleImage(W, H, at, { polariserDeg: a, analyserDeg: a + 90, compensator: null }, { noiseSd: 0.003, seed: 30 + k, camera: cam }));
  const copy = (r: ReturnType<typeof fourAngleAnalysis>) => ({
    angleRad: Float32Array.from(r.field.angleRad), cos2: Float32Array.from(r.field.cos2!), sin2: Float32Array.from(r.field.sin2!),
    confidence: Float32Array.from(r.field.confidence), mask: Uint8Array.from(r.field.mask), amplitude: Float32Array.from(r.amplitude), residual: Float32Array.from(r.residual),
  });

  it('gives the value a sort of the usable amplitudes puts at rank n/2', () => {
    const r = fourAngleAnalysis(quads);
    // The reference: the usable pixels' amplitudes sorted ascending (Float64Array sort is numeric).
    const usable = Float64Array.from([...r.amplitude].filter((_, i) => r.field.mask[i])).sort();
    const masked = r.field.mask.length - usable.length;
    expect(masked).toBeGreaterThan(30 * H * 0.9); // the sample-free strip (and clipped pixels, if any) left out
    expect(r.amplitudeMedian).toBe(usable[usable.length >> 1]);
  });

  it('takes the arrays handed back and gives the same reading in them', () => {
    const first = fourAngleAnalysis(quads), before = copy(first);
    const held = new Set<ArrayBufferView | null>([first.field.angleRad, first.field.cos2!, first.field.sin2!, first.field.confidence, first.amplitude, first.background, first.residual]);
    recycleAngleSeries(first);
    const again = fourAngleAnalysis(quads);
    // Its planes are the ones handed back (from the pool), and every value is the first reading's.
    for (const a of [again.field.angleRad, again.field.cos2!, again.field.sin2!, again.field.confidence, again.amplitude, again.residual]) expect(held.has(a)).toBe(true);
    const after = copy(again);
    for (const k of Object.keys(before) as (keyof typeof before)[]) expect(after[k]).toEqual(before[k]);
    expect(again.amplitudeMedian).toBe(first.amplitudeMedian);
  });
});
