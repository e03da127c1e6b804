import { describe, it, expect } from 'vitest';
import { fiellerInterval, fQuantile2 } from '../../src/order/index.ts';
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
