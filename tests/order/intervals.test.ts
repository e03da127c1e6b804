import { describe, it, expect } from 'vitest';
import { fiellerInterval, fQuantile2, stabilisedInterval } from '../../src/order/index.ts';
import { normalQuantile, studentTQuantile as studentQuantile } from '../../src/common/distributions.ts';

describe('distribution quantiles behind the intervals', () => {
  it('studentQuantile matches the published two-sided 95 % t table', () => {
    // NIST/SEMATECH e-Handbook of Statistical Methods, Table 1.3.6.7.2 (upper critical values of t, alpha = 0.025).
    const table: [number, number][] = [[1, 12.706], [2, 4.303], [3, 3.182], [4, 2.776], [5, 2.571], [8, 2.306], [10, 2.228], [20, 2.086], [30, 2.042], [100, 1.984]];
    for (const [df, t] of table) expect(Math.abs(studentQuantile(0.975, df) - t), `df ${df}`).toBeLessThan(2e-3);
  });

  it('normalQuantile gives the standard normal points', () => {
    // Same handbook, Table 1.3.6.7.1: z(0.975) = 1.960, z(0.995) = 2.576, z(0.95) = 1.645.
    expect(normalQuantile(0.975)).toBeCloseTo(1.95996, 4);
    expect(normalQuantile(0.995)).toBeCloseTo(2.57583, 4);
    expect(normalQuantile(0.95)).toBeCloseTo(1.64485, 4);
    expect(normalQuantile(0.025)).toBeCloseTo(-1.95996, 4);
  });

  it('fQuantile2 matches the published F table for 2 numerator degrees of freedom', () => {
    // Same handbook, Table 1.3.6.7.3 (upper 5 % points of F): F(2, 5) = 5.786, F(2, 10) = 4.103, F(2, 30) = 3.316.
    expect(fQuantile2(0.95, 5)).toBeCloseTo(5.786, 2);
    expect(fQuantile2(0.95, 10)).toBeCloseTo(4.103, 2);
    expect(fQuantile2(0.95, 30)).toBeCloseTo(3.316, 2);
  });
});

describe('fiellerInterval', () => {
  it('solves (a - R b)^2 = t^2 (se_a^2 + R^2 se_b^2) at both ends and holds a / b', () => {
    // Closed form of Fieller's theorem: both limits satisfy the quadratic with equality.
    const [a, sa, b, sb, df] = [0.6, 0.05, 0.4, 0.04, 12];
    const [lo, hi] = fiellerInterval(a, sa, b, sb, df)!;
    const t = studentQuantile(0.975, df);
    for (const R of [lo, hi]) expect((a - R * b) ** 2 - t * t * (sa * sa + R * R * sb * sb)).toBeCloseTo(0, 10);
    expect(lo).toBeLessThan(a / b);
    expect(hi).toBeGreaterThan(a / b);
  });

  it('gives no interval when the denominator is not clearly away from 0', () => {
    expect(fiellerInterval(0.6, 0.05, 0.05, 0.04, 12)).toBeNull();
  });
});

describe('stabilisedInterval', () => {
  it('maps S +- t se from the atanh scale: [tanh(atanh S - h), tanh(atanh S + h)], h = t se / (1 - S^2)', () => {
    // Expected values from Python's math.tanh / math.atanh (CPython 3, double precision).
    const [lo, hi] = stabilisedInterval(0.8, 0.05, 2);
    expect(lo).toBeCloseTo(0.6755238271393413, 12);
    expect(hi).toBeCloseTo(0.8801403387944708, 12);
    const [lo2, hi2] = stabilisedInterval(-0.3, 0.1, 2.5);
    expect(lo2).toBeCloseTo(-0.5257438477640315, 12);
    expect(hi2).toBeCloseTo(-0.03478029507618143, 12);
  });

  it('holds the estimate, stays inside (-1, 1) and agrees with S +- t se for a small se', () => {
    for (const S of [-0.99, -0.5, 0, 0.3, 0.9, 0.999]) for (const se of [1e-6, 0.01, 0.2, 3]) {
      const [lo, hi] = stabilisedInterval(S, se, 2.2);
      expect(lo <= S && S <= hi, `S ${S} se ${se}`).toBe(true);
      expect(lo > -1 && hi < 1 || se >= 0.2, `S ${S} se ${se}`).toBe(true);
      expect(lo >= -1 && hi <= 1, `S ${S} se ${se}`).toBe(true);
    }
    // First order (delta method): the half-widths tend to t se as se -> 0.
    const [lo, hi] = stabilisedInterval(0.6, 1e-6, 2);
    expect((0.6 - lo) / 2e-6).toBeCloseTo(1, 4);
    expect((hi - 0.6) / 2e-6).toBeCloseTo(1, 4);
    // Near S = 1 the low side reaches farther than the high side (the spread shrinks toward 1).
    const [l9, h9] = stabilisedInterval(0.9, 0.03, 2);
    expect(0.9 - l9).toBeGreaterThan(h9 - 0.9);
  });
});
