import { describe, expect, it } from 'vitest';
import { readPlatePair, combinePlatePair, turnedTrain, resolveTrain, renderSampleImage, phaseCorrelation, type CameraCalibration } from '../../src/optics/index.ts';
import { DEG, axialDiffDeg } from '../../src/common/angles.ts';
import { InputError } from '../../src/common/errors.ts';
import { makeImage, type Image } from '../../src/image/types.ts';
import { makePlane } from '../../src/common/plane.ts';
import { seededRandom } from '../../src/order/random.ts';

const CAMERA: CameraCalibration = { gains: [1, 1, 1], exposure: 0.75 };

describe('combinePlatePair', () => {
  it('inverts the two-image check values', () => {
    // Closed form (the two-image method, plate at +45, assembly turned +45): u = Gamma sin 2 theta, v = -Gamma cos 2 theta,
    // theta = 1/2 atan2(u, -v), Gamma = sqrt(u^2 + v^2). theta 30, Gamma 100: u = 100 sin 60 = 86.60, v = -100 cos 60 = -50.00.
    const r = combinePlatePair(86.6, -50.0);
    expect(r.angleDeg).toBeCloseTo(30, 2);
    expect(r.retardanceNm).toBeCloseTo(100, 1);
  });

  it('covers the full 180 deg and other turns', () => {
    // Closed form for a plate at a and a turn t: u = Gamma cos 2(theta - a), w = Gamma cos 2(theta - a - t).
    for (const th of [-80, -30, 0, 55, 89]) for (const t of [45, 30, -45]) {
      const u = 120 * Math.cos(2 * (th - 45) * DEG), w = 120 * Math.cos(2 * (th - 45 - t) * DEG);
      const r = combinePlatePair(u, w, 45, t);
      expect(axialDiffDeg(r.angleDeg, th)).toBeLessThan(1e-9);
      expect(r.retardanceNm).toBeCloseTo(120, 9);
    }
  });
});

describe('readPlatePair round trip', () => {
  const angles = [-80, -60, -30, -10, 0, 10, 30, 45, 60, 80, 90];
  const rets = [20, 50, 100, 200, 300, 450, 600];
  const B = 6, W = angles.length * B, H = rets.length * B;
  const at = (x: number, y: number) => ({ angleRad: angles[Math.floor(x / B)] * DEG, retardanceNm: rets[Math.floor(y / B)] });
  const trainA = resolveTrain();
  const imgA = renderSampleImage(W, H, at, trainA, { noiseSd: 0.005, seed: 1, camera: CAMERA });
  const imgB = renderSampleImage(W, H, at, turnedTrain(trainA, 45), { noiseSd: 0.005, seed: 2, camera: CAMERA });
  const r = readPlatePair(imgA, imgB, { camera: CAMERA, retardanceMaxNm: 600 });

  const median = (v: number[]) => v.sort((a, b) => a - b)[v.length >> 1];
  const block = (i: number, j: number) => {
    const errs: number[] = [], rerr: number[] = [], conf: number[] = [];
    for (let y = j * B; y < j * B + B; y++) for (let x = i * B; x < i * B + B; x++) {
      const k = y * W + x;
      errs.push(axialDiffDeg(r.field.angleRad[k] / DEG, angles[i]));
      rerr.push(Math.abs(r.field.retardanceNm![k] - rets[j]));
      conf.push(r.field.confidence[k]);
    }
    return { maxAngleErr: Math.max(...errs), medianRetErr: median(rerr), medianConf: median(conf) };
  };

  it('reads the full orientation within 2 deg for 50-600 nm', () => {
    // Round trip (our own renderer; outside images: tests/optics/reference-readers.test.ts); two images give
    // theta over 180 deg (the closed form above has no mirror ambiguity).
    for (let i = 0; i < angles.length; i++) for (let j = 0; j < rets.length; j++) {
      if (rets[j] >= 50) expect(block(i, j).maxAngleErr).toBeLessThanOrEqual(2 + 1e-4); // 1e-4: Float32 storage of the angle
    }
    expect(r.field.ambiguity).toBe('none');
    expect(r.field.method).toBe('plate-pair');
  });

  it('reads the retardance within 10 nm where confident, and flags the one exact degeneracy', () => {
    // With the sample along the polariser (theta = 0), image A does not depend on Gamma and image B sees exact
    // subtraction, I = sin^2(pi (Gamma_p - Gamma) / lambda) (closed form): Gamma = 600 and 500 nm give the same pair of colours.
    for (let i = 0; i < angles.length; i++) for (let j = 0; j < rets.length; j++) {
      const b = block(i, j);
      if (b.medianConf >= 0.3) expect(b.medianRetErr).toBeLessThanOrEqual(10);
    }
    expect(block(angles.indexOf(0), rets.indexOf(600)).medianConf).toBeLessThan(0.1);
  });

  it('gives low confidence where the retardance is too small to carry an angle', () => {
    const conf = (j: number) => {
      let s = 0;
      for (let y = j * B; y < j * B + B; y++) for (let x = 0; x < W; x++) s += r.field.confidence[y * W + x];
      return s / (B * W);
    };
    expect(conf(rets.indexOf(20))).toBeLessThan(0.3);
    expect(conf(rets.indexOf(200))).toBeGreaterThan(0.6);
  });

  it('registered images pass the check; a 3-px shift is reported', () => {
    expect(r.registration.shiftPx).toBeLessThan(1);
    expect(r.field.warnings.join(' ')).not.toContain('shifted');
    const shifted: Image = makeImage({ ...imgB, planes: imgB.planes.map((p) => p.map((_, k) => p[Math.floor(k / W) * W + Math.max(0, (k % W) - 3)])) });
    const s = readPlatePair(imgA, shifted, { camera: CAMERA, retardanceMaxNm: 600 });
    expect(s.registration.dxPx).toBeCloseTo(3, 0);
    expect(s.field.warnings.join(' ')).toContain('shifted by 3');
  });

  it('says the check cannot tell where the only shared structure is a straight diagonal edge, instead of reporting a shift', () => {
    // Two registered images (no shift by construction) that share only a straight edge at 45 deg, each with its
    // own fine random texture: phase correlation has a ridge along the edge (any shift along it fits), so no
    // single peak can show the shift (the aperture problem of motion estimation; Horn & Schunck 1981,
    // Artificial Intelligence 17:185).
    const S = 128, rand = seededRandom(3);
    const pair = [0, 1].map(() => renderSampleImage(S, S, (x, y) => ({ angleRad: 0.3 + 0.4 * rand(), retardanceNm: x + y < S ? 80 + 100 * rand() : 0 })));
    const t = readPlatePair(pair[0], pair[1], { camera: CAMERA, retardanceMaxNm: 600 });
    const w = t.field.warnings.join(' ');
    expect(w).not.toContain('shifted by');
    expect(w).toContain('too little structure to check that they line up');
  });

  it('rejects images of different sizes, grey images and a turn that cannot separate the angles', () => {
    const small = renderSampleImage(8, 8, () => ({ angleRad: 0, retardanceNm: 0 }));
    expect(() => readPlatePair(imgA, small)).toThrow(InputError);
    expect(() => readPlatePair(imgA, imgB, { turnDeg: 90 })).toThrow(InputError);
    const grey = makeImage({ width: W, height: H, channels: 1, planes: [new Float32Array(W * H)], bitDepth: 8, encoding: 'srgb', source: { name: 'g' } });
    expect(() => readPlatePair(imgA, grey)).toThrow(InputError);
  });
});

describe('phaseCorrelation', () => {
  it('finds an integer shift of a random texture to sub-pixel accuracy', () => {
    // Fourier shift theorem: a circular shift shows as a single correlation peak (Kuglin & Hines 1975).
    const n = 64, rand = seededRandom(3);
    const a = new Float32Array(n * n).map(() => rand());
    const b = new Float32Array(n * n);
    for (let y = 0; y < n; y++) for (let x = 0; x < n; x++) b[y * n + x] = a[((y - 2 + n) % n) * n + ((x + 5) % n)];
    const r = phaseCorrelation(makePlane(n, n, a), makePlane(n, n, b));
    expect(r.dxPx).toBeCloseTo(-5, 1);
    expect(r.dyPx).toBeCloseTo(2, 1);
  });
});

describe('readPlatePair sample-free pixels', () => {
  // A 10-px sample-free strip (0 nm, rendered so) beside a retarder of 150 nm at 30 deg. Gamma -> 0 leaves the angle
  // undefined (closed form: u = v = 0, atan2(0, 0)), so those pixels are masked and counted, not averaged into the confidence.
  const W = 32, H = 16;
  const at = (x: number) => (x < 10 ? { angleRad: 0, retardanceNm: 0 } : { angleRad: 30 * DEG, retardanceNm: 150 });
  const trainA = resolveTrain();
  const imgA = renderSampleImage(W, H, at, trainA, { noiseSd: 0.003, seed: 5, camera: CAMERA });
  const imgB = renderSampleImage(W, H, at, turnedTrain(trainA, 45), { noiseSd: 0.003, seed: 6, camera: CAMERA });

  it('masks pixels read below the floor (default 20 nm) and says how many; 0 keeps every pixel', () => {
    const r = readPlatePair(imgA, imgB, { camera: CAMERA });
    let kept = 0, keptFree = 0;
    for (let i = 0; i < W * H; i++) if (r.field.mask[i]) { kept++; if (i % W < 10) keptFree++; }
    expect(keptFree).toBe(0);
    expect(kept).toBe((W - 10) * H);
    expect(r.field.warnings.join(' ')).toContain(`${10 * H} pixels read below 20 nm`);
    expect(r.field.options.retardanceMinNm).toBe(20);
    const all = readPlatePair(imgA, imgB, { camera: CAMERA, retardanceMinNm: 0 });
    expect(all.field.mask.every((m) => m === 1)).toBe(true);
    expect(() => readPlatePair(imgA, imgB, { camera: CAMERA, retardanceMinNm: -1 })).toThrow(InputError);
  });
});
