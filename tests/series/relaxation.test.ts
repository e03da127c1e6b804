// Relaxation fits of order over time: parameters against scipy.optimize.curve_fit, the tau interval against a
// brute-force profile computed independently in numpy (tests/fixtures/reference/make_relaxation_fixture.py), the
// Gamma function against closed forms, and the intervals' coverage over seeded series whose truth is the
// construction.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { fitBestRelaxation, fitRelaxation, gamma, type RelaxationPoint } from '../../src/series/index.ts';
import { gaussian, rng } from '../support/synthetic.ts';

interface RefSet {
  name: string; t: number[]; order: number[]; se: number[];
  exponential: { orderZero: number; orderInfinity: number; tauSeconds: number; tauCi: [number, number] };
  stretched?: { orderZero: number; orderInfinity: number; tauSeconds: number; beta: number };
}
const ref: { sets: RefSet[] } = JSON.parse(readFileSync(new URL('../fixtures/reference/relaxation-scipy.json', import.meta.url), 'utf8'));
const pointsOf = (s: RefSet): RelaxationPoint[] => s.t.map((t, i) => ({ tSeconds: t, order: s.order[i], se: s.se[i] }));

describe('fitRelaxation against SciPy', () => {
  for (const s of ref.sets) {
    it(`matches curve_fit's exponential parameters and the numpy profile interval of tau: ${s.name}`, () => {
      const f = fitRelaxation(pointsOf(s), 'exponential');
      expect(f.tauSeconds / s.exponential.tauSeconds - 1).toBeCloseTo(0, 4);
      expect(f.orderZero).toBeCloseTo(s.exponential.orderZero, 5);
      expect(f.orderInfinity).toBeCloseTo(s.exponential.orderInfinity, 5);
      // The numpy grid steps tau by 0.005 % of its log range: agreement to 1e-3 relative.
      expect(f.tauCi[0] / s.exponential.tauCi[0] - 1).toBeCloseTo(0, 3);
      expect(f.tauCi[1] / s.exponential.tauCi[1] - 1).toBeCloseTo(0, 3);
      expect(f.tauCi[0]).toBeLessThanOrEqual(f.tauSeconds);
      expect(f.tauCi[1]).toBeGreaterThanOrEqual(f.tauSeconds);
    });
  }
  const st = ref.sets.find((s) => s.stretched)!;
  it('matches curve_fit\'s stretched-exponential parameters (beta bounded to [0.1, 1])', () => {
    const f = fitRelaxation(pointsOf(st), 'stretched');
    expect(f.tauSeconds / st.stretched!.tauSeconds - 1).toBeCloseTo(0, 3);
    expect(f.beta).toBeCloseTo(st.stretched!.beta, 3);
    expect(f.orderZero).toBeCloseTo(st.stretched!.orderZero, 4);
    expect(f.orderInfinity).toBeCloseTo(st.stretched!.orderInfinity, 4);
  });
});

describe('gamma', () => {
  it('gives the closed forms Gamma(1/2) = sqrt(pi), Gamma(5) = 4!, Gamma(10) = 9! and Gamma(x+1) = x Gamma(x)', () => {
    expect(gamma(0.5)).toBeCloseTo(Math.sqrt(Math.PI), 12);
    expect(gamma(5)).toBeCloseTo(24, 10);
    expect(gamma(10) / 362880 - 1).toBeCloseTo(0, 12);
    expect(gamma(3.7) / (2.7 * gamma(2.7)) - 1).toBeCloseTo(0, 12);
  });
});

/**
 * Coverage: series of 12 frames every 3 s of S(t) = 0.1 + 0.6 exp(-(t/tau)^beta) with standard errors drawn in
 * 0.01-0.03 and normal scatter of that size; the fraction of 95 % intervals holding the true tau (and beta).
 * Accepted within three binomial standard deviations of 95 %; the same intervals narrowed or widened by 20 %
 * (each side's distance from the estimate, in log tau) must fall outside that band.
 */
function coverage(model: 'exponential' | 'stretched', n: number, beta: number) {
  const u = rng(model === 'exponential' ? 11 : 12), g = gaussian(rng(model === 'exponential' ? 21 : 22));
  const tau = 8;
  const counts = { hit: 0, narrow: 0, wide: 0, betaHit: 0 };
  const inside = (ci: [number, number], est: number, scale: number) => {
    const lo = Math.log(est) - scale * (Math.log(est) - Math.log(Math.max(ci[0], 1e-300)));
    const hi = Math.log(est) + scale * (Math.log(ci[1]) - Math.log(est));
    return lo <= Math.log(tau) && Math.log(tau) <= hi;
  };
  for (let r = 0; r < n; r++) {
    const pts = Array.from({ length: 12 }, (_, i) => {
      const t = 3 * i, se = 0.01 + 0.02 * u();
      return { tSeconds: t, order: 0.1 + 0.6 * Math.exp(-Math.pow(t / tau, beta)) + se * g(), se };
    });
    const f = fitRelaxation(pts, model);
    if (inside(f.tauCi, f.curve.tauSeconds, 1)) counts.hit++;
    if (inside(f.tauCi, f.curve.tauSeconds, 0.8)) counts.narrow++;
    if (inside(f.tauCi, f.curve.tauSeconds, 1.2)) counts.wide++;
    if (f.betaCi && f.betaCi[0] <= beta && beta <= f.betaCi[1]) counts.betaHit++;
  }
  return counts;
}

describe('relaxation intervals cover the truth', () => {
  it('tau of the exponential: 95 % over 600 seeded series, and not at 20 % narrower or wider', () => {
    const n = 600, band = 3 * Math.sqrt((0.95 * 0.05) / n);
    const c = coverage('exponential', n, 1);
    expect(Math.abs(c.hit / n - 0.95)).toBeLessThan(band);
    expect(c.narrow / n).toBeLessThan(0.95 - band);
    expect(c.wide / n).toBeGreaterThan(0.95 + band);
  });
  it('tau and beta of the stretched exponential (beta 0.6): within 90-99 % over 150 seeded series', () => {
    const n = 150;
    const c = coverage('stretched', n, 0.6);
    expect(c.hit / n).toBeGreaterThanOrEqual(0.9);
    expect(c.hit / n).toBeLessThanOrEqual(0.99);
    expect(c.betaHit / n).toBeGreaterThanOrEqual(0.9);
    expect(c.betaHit / n).toBeLessThanOrEqual(0.99);
  });
});

describe('what a series cannot tell', () => {
  it('says tau is not determined when the series ends long before the order relaxes, with an open interval', () => {
    // Construction: tau = 500 s, frames over 30 s: the order falls by 6 % of its drop, about 2 standard errors.
    const pts = Array.from({ length: 10 }, (_, i) => ({ tSeconds: 3 * i + 1, order: 0.1 + 0.6 * Math.exp(-(3 * i + 1) / 500), se: 0.02 }));
    const f = fitRelaxation(pts, 'exponential');
    expect(f.tauCi[1]).toBe(Infinity);
    expect(f.notDetermined?.tauSeconds).toMatch(/record for longer/);
    // Not determined means no number: tau, where the order ends up and the mean time are withheld; the curve keeps the best fit.
    expect(f.tauSeconds).toBeNaN();
    expect(f.orderInfinity).toBeNaN();
    expect(f.meanTauSeconds).toBeNaN();
    expect(f.notDetermined?.orderInfinity).toMatch(/record for longer/);
    expect(Number.isFinite(f.orderZero)).toBe(true);
    expect(f.curve.tauSeconds).toBeGreaterThanOrEqual(f.tauCi[0]);
  });
  it('refuses too few points in one plain line', () => {
    const pts = [0, 1, 2].map((t) => ({ tSeconds: t, order: 0.5, se: 0.01 }));
    expect(() => fitRelaxation(pts, 'exponential')).toThrow(/at least 4 points/);
  });
  it('picks the exponential by AIC when the truth is one, and the stretched one when beta is far from 1', () => {
    const g = gaussian(rng(5));
    const series = (beta: number) => Array.from({ length: 16 }, (_, i) => {
      const t = 0.5 * 1.35 ** i; // frames spread over four decades of time
      return { tSeconds: t, order: 0.1 + 0.6 * Math.exp(-Math.pow(t / 10, beta)) + 0.005 * g(), se: 0.005 };
    });
    expect(fitBestRelaxation(series(1)).model).toBe('exponential');
    expect(fitBestRelaxation(series(0.45)).model).toBe('stretched');
  });
});
