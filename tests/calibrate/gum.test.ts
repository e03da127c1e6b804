import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { combineUncertainties, coverageFactor, COVERAGE_PROBABILITY, roundWithUncertainty, studentTwoSided } from '../../src/calibrate/index.ts';
import { pauleMandelLine, weightedLine } from '../../src/calibrate/gridFit.ts';

/** SciPy's values: tests/fixtures/reference/make_coverage_factor_fixture.py (scipy.stats.t, scipy.optimize.curve_fit). */
const ref = JSON.parse(readFileSync(new URL('../fixtures/reference/coverage-factor-scipy.json', import.meta.url), 'utf8')) as {
  p95_45: number; t: { nu: number; k: number; p2_5: number }[]; wls: { m: number[]; c: number[]; a: number[]; p: number; c0: number; se: number };
};

describe('coverage factors from Student\'s t (GUM G.3.2)', () => {
  it('states the level of k = 2 for a normal distribution, 95.45 % (scipy.stats.norm)', () => {
    expect(COVERAGE_PROBABILITY).toBeCloseTo(ref.p95_45, 12);
    expect(coverageFactor(COVERAGE_PROBABILITY, Infinity)).toBeCloseTo(2, 9);
  });

  it('matches scipy.stats.t.ppf for whole and fractional degrees of freedom', () => {
    for (const row of ref.t) {
      expect(coverageFactor(ref.p95_45, row.nu)).toBeCloseTo(row.k, 8);
      expect(studentTwoSided(2.5, row.nu)).toBeCloseTo(row.p2_5, 10);
    }
  });

  it('gives the GUM Table G.2 factors for p = 95.45 % (from memory: 13.97 at nu = 1, 2.28 at 10, 2.05 at 50)', () => {
    expect(coverageFactor(COVERAGE_PROBABILITY, 1)).toBeCloseTo(13.97, 2);
    expect(coverageFactor(COVERAGE_PROBABILITY, 10)).toBeCloseTo(2.28, 2);
    expect(coverageFactor(COVERAGE_PROBABILITY, 50)).toBeCloseTo(2.05, 2);
  });

  it('refuses a probability outside (0, 1) or non-positive degrees of freedom', () => {
    expect(() => coverageFactor(1.2, 5)).toThrow(/coverage probability/);
    expect(() => coverageFactor(0.95, 0)).toThrow(/degrees of freedom/);
  });
});

describe('law of propagation and Welch-Satterthwaite (GUM eq. 10, G.2b)', () => {
  it('combines in quadrature and gives nu_eff = u_c^4 / sum(u_i^4 / nu_i)', () => {
    const c = combineUncertainties([{ u: 3, dof: 10 }, { u: 4, dof: 20 }, { u: 0, dof: Infinity }]);
    // Closed forms: sqrt(9 + 16) = 5; 625 / (81 / 10 + 256 / 20) = 625 / 20.9
    expect(c.u).toBe(5);
    expect(c.dof).toBeCloseTo(625 / 20.9, 12);
  });

  it('keeps infinite degrees of freedom when every component is a bound taken as exact (GUM G.4.3)', () => {
    expect(combineUncertainties([{ u: 1, dof: Infinity }]).dof).toBe(Infinity);
  });

  it('rounds a value to its uncertainty\'s two significant digits (GUM 7.2.6)', () => {
    // GUM 7.2.2's example (from memory): m_S = 100.02147 g with u_c = 0.35 mg -> 100.02147 (0.00035)
    expect(roundWithUncertainty(100.021473, 0.000351)).toEqual({ value: '100.02147', u: '0.00035', digits: 5 });
    expect(roundWithUncertainty(0.6500041, 0.0000049)).toEqual({ value: '0.6500041', u: '0.0000049', digits: 7 });
  });
});

describe('weighted straight line with a common extra variance (Paule-Mandel)', () => {
  const { m, c, a } = ref.wls;
  const pts = m.map((mi, i) => ({ m: mi, c: c[i], a: a[i] }));

  it('is the weighted least-squares line of scipy.optimize.curve_fit (sigma = sqrt a, scaled by the residual)', () => {
    const w = weightedLine(pts, a.map((x) => 1 / x));
    // curve_fit iterates to about 1e-9 (its default tolerances); the closed form here is exact.
    expect(w.p).toBeCloseTo(ref.wls.p, 7);
    expect(w.c0).toBeCloseTo(ref.wls.c0, 7);
    expect(Math.sqrt(w.q / (pts.length - 2) / w.smm)).toBeCloseTo(ref.wls.se, 7);
  });

  it('adds just the variance tau^2 that brings the weighted residual sum to n - 2', () => {
    const line = pauleMandelLine(pts);
    // Q(0) > n - 2 on these points (their scatter exceeds a), so tau^2 > 0 and Q(tau^2) = n - 2 (definition).
    expect(weightedLine(pts, a.map((x) => 1 / x)).q).toBeGreaterThan(pts.length - 2);
    expect(line.tau2).toBeGreaterThan(0);
    expect(line.q).toBeCloseTo(pts.length - 2, 6);
    // Its slope's SE is then sqrt(1 / S_mm) with the weights 1 / (a + tau^2).
    const w = line.weights;
    const sw = w.reduce((s, x) => s + x, 0);
    const mb = w.reduce((s, x, i) => s + x * m[i], 0) / sw;
    const smm = w.reduce((s, x, i) => s + x * (m[i] - mb) ** 2, 0);
    expect(line.se).toBeCloseTo(Math.sqrt(1 / smm), 10);
  });

  it('is ordinary least squares when the points scatter less than their variances say', () => {
    const tight = pts.map((e) => ({ ...e, a: 1 }));
    const line = pauleMandelLine(tight);
    expect(line.tau2).toBe(0);
    const ols = weightedLine(tight, tight.map(() => 1));
    expect(line.p).toBeCloseTo(ols.p, 12);
  });
});
