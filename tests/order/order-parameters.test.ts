import { describe, it, expect } from 'vitest';
import { accumulateBlocks, freeOrderOf, orderParameters, totalMoments } from '../../src/order/index.ts';
import { orientationField } from '../../src/orientation/index.ts';
import { InputError } from '../../src/common/errors.ts';
import { fieldOf } from '../support/fields.ts';
import { rng } from '../support/synthetic.ts';

const F32 = 2e-6; // angles are stored as float32

describe('orderParameters: closed-form cases (docs/methods.md §8.6 check values, derived)', () => {
  it('all theta = 37 deg gives S_2D = 1 and director 37', () => {
    const s = orderParameters(fieldOf(20, 10, () => 37));
    expect(Math.abs(s.order2D.order - 1)).toBeLessThan(F32);
    expect(Math.abs(s.directorDeg - 37)).toBeLessThan(1e-4);
  });

  it('theta in {0, 90} gives S_2D = 0', () => {
    const s = orderParameters(fieldOf(20, 10, (x) => (x % 2 ? 90 : 0)));
    expect(s.order2D.order).toBeLessThan(F32);
  });

  it('theta in {10, 170} gives cos 20 deg = 0.93969 with director 0 (a naive mean would say 90)', () => {
    const s = orderParameters(fieldOf(20, 10, (x) => (x % 2 ? 170 : 10)));
    expect(Math.abs(s.order2D.order - 0.9396926)).toBeLessThan(1e-5);
    expect(Math.abs(s.directorDeg)).toBeLessThan(1e-4);
  });

  for (const [halfDeg, expected] of [[45, 0.63662], [30, 0.82699], [10, 0.97982]]) {
    it(`uniform on theta0 +- ${halfDeg} deg gives sin(2D)/(2D) = ${expected}`, () => {
      // Midpoint rule over 40 000 equally spaced angles about theta0 = 25 deg.
      const W = 400, H = 100, N = W * H;
      const s = orderParameters(fieldOf(W, H, (x, y) => 25 - halfDeg + (2 * halfDeg * (y * W + x + 0.5)) / N));
      expect(Math.abs(s.order2D.order - expected)).toBeLessThan(1e-5);
      expect(Math.abs(s.directorDeg - 25)).toBeLessThan(1e-3);
    });
  }

  it('doubled-angle von Mises kappa = 2 gives I1(2)/I0(2) = 0.69777 (weights carry the density)', () => {
    const W = 360, H = 10;
    const f = fieldOf(W, H, (x, y) => -90 + (180 * (y * W + x + 0.5)) / (W * H), (x, y) => {
      const t = ((-90 + (180 * (y * W + x + 0.5)) / (W * H)) * Math.PI) / 180;
      return Math.exp(2 * Math.cos(2 * t)) / Math.exp(2);
    });
    const s = orderParameters(f, { weighting: 'coherency' });
    expect(Math.abs(s.order2D.order - 0.69777)).toBeLessThan(1e-5);
  });

  it('all perpendicular to the axis gives S_axis = -1, all along it +1', () => {
    const f = fieldOf(10, 10, () => 120);
    expect(orderParameters(f, { axisDeg: 30 }).axisOrder!.order).toBeCloseTo(-1, 5);
    expect(orderParameters(f, { axisDeg: -60 }).axisOrder!.order).toBeCloseTo(1, 5);
  });
});

describe('orderParameters: sampling behaviour', () => {
  it('isotropic samples give E[S_2D] = 0.280 (N=10) and 0.089 (N=100)', () => {
    // docs/methods.md §8.6, computed (numpy/scipy): Monte Carlo E[S_2D] for N isotropic angles; tolerance +-0.003 (MC).
    const rand = rng(99);
    for (const [N, expected] of [[10, 0.28], [100, 0.089]]) {
      let sum = 0;
      const reps = 4000;
      for (let r = 0; r < reps; r++) {
        const f = fieldOf(N, 1, () => 180 * rand() - 90);
        const [b] = accumulateBlocks(f, { groups: new Int32Array(N), groupCount: 1, refRad: 0, blockPx: 1, weighting: 'none' });
        sum += freeOrderOf(totalMoments(b));
      }
      expect(Math.abs(sum / reps - expected)).toBeLessThan(0.004);
    }
  });

  it('gives a 95 % interval matching the central-limit width for independent pixels', () => {
    // Statistics fact (central limit theorem): half-width ~ 1.96 sd(cos 2 theta) / sqrt(n).
    const rand = rng(5);
    const f = fieldOf(100, 100, () => 60 * (rand() - 0.5));
    const s = orderParameters(f, { axisDeg: 0, blockPx: 1, weighting: 'none' });
    let m = 0, m2 = 0;
    for (const a of f.angleRad) { const v = Math.cos(2 * a); m += v; m2 += v * v; }
    m /= f.angleRad.length;
    const sd = Math.sqrt(m2 / f.angleRad.length - m * m);
    const half = (s.axisOrder!.ciHigh - s.axisOrder!.ciLow) / 2;
    expect(half / ((1.96 * sd) / 100)).toBeGreaterThan(0.85);
    expect(half / ((1.96 * sd) / 100)).toBeLessThan(1.15);
  });

  it('gives the interval of the independent cells when 64 pixels share one angle', () => {
    // Each 8x8 cell shares one angle, so 1024 cells carry the independent values and the standard error of
    // the mean is sd(cos 2 theta over cells) / sqrt(1024) (statistics fact: central limit theorem over the
    // cells); blocks of 8 px are those cells. The interval's half-width is t(0.975, dof) times that, and with
    // a thousand blocks t is the normal quantile 1.96 to within 1 % (NIST/SEMATECH e-Handbook, table 1.3.6.7.2).
    const rand = rng(8);
    const cells = Array.from({ length: 32 * 32 }, () => 60 * (rand() - 0.5));
    const f = fieldOf(256, 256, (x, y) => cells[(y >> 3) * 32 + (x >> 3)]);
    const s = orderParameters(f, { axisDeg: 0, blockPx: 8, weighting: 'none' }).axisOrder!;
    const c = cells.map((a) => Math.cos((2 * a * Math.PI) / 180));
    const mean = c.reduce((p, q) => p + q, 0) / c.length;
    const sd = Math.sqrt(c.reduce((p, q) => p + (q - mean) ** 2, 0) / (c.length - 1));
    const half = (s.ciHigh - s.ciLow) / 2;
    const expected = (1.96 * sd) / 32;
    expect(half / expected).toBeGreaterThan(0.85);
    expect(half / expected).toBeLessThan(1.15);
    expect(s.order).toBeCloseTo(mean, 6);
  });

  it('recovers S of an image with known angle statistics within 0.02 through the structure tensor', async () => {
    // Patches of stripes whose angles are the quantiles of a uniform distribution on +-30 deg:
    // S_axis = sin(60 deg)/(pi/3) = 0.82699 (docs/methods.md §8.6, derived).
    const P = 32, K = 12, W = P * K;
    const angles = Array.from({ length: K * K }, (_, k) => -30 + (60 * (k + 0.5)) / (K * K));
    const order = Array.from({ length: K * K }, (_, k) => k).sort((a, b) => ((a * 7919) % 144) - ((b * 7919) % 144));
    const data = new Float32Array(W * W);
    for (let y = 0; y < W; y++) for (let x = 0; x < W; x++) {
      const a = (angles[order[Math.floor(y / P) * K + Math.floor(x / P)]] * Math.PI) / 180;
      data[y * W + x] = Math.sin((2 * Math.PI * (-x * Math.sin(a) + y * Math.cos(a))) / 6);
    }
    const f = await orientationField({ width: W, height: W, data }, { sigmaPx: 2 });
    const s = orderParameters(f, { axisDeg: 0, weighting: 'none' });
    expect(Math.abs(s.axisOrder!.order - 0.82699)).toBeLessThan(0.02);
  });

  it('rejects an unknown weighting and a wrong-sized region', () => {
    const f = fieldOf(4, 4, () => 0);
    expect(() => orderParameters(f, { weighting: 'loud' as never })).toThrow(InputError);
    expect(() => orderParameters(f, { region: new Uint8Array(3) })).toThrow(/region/);
  });
});
