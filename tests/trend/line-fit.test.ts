// The weighted straight line of a reading against a process variable: slope, intercept, chi^2 and the 95 % intervals
// against scipy.optimize.curve_fit and scipy.stats.linregress (tests/fixtures/reference/make_line_fit_fixture.py),
// "not determined" where the points cannot fix a line, and the intervals' coverage over seeded data sets whose truth
// is the construction, against the coverage the interval rule gives in closed form (derived below).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { normalCdf, normalQuantile, studentTQuantile } from '../../src/common/index.ts';
import { fitLine, lineAt, pointSe, seFromInterval, type LinePoint } from '../../src/trend/index.ts';
import { gaussian, rng } from '../support/synthetic.ts';

interface RefFit {
  intercept: number; slope: number; chiSquare: number; dof: number; interceptSe: number; slopeSe: number;
  interceptCi: [number, number]; slopeCi: [number, number];
}
interface RefSet { name: string; x: number[]; y: number[]; se: number[]; fit: RefFit; linregress?: { slope: number; intercept: number; slopeSe: number; interceptSe: number } }
const ref: { sets: RefSet[] } = JSON.parse(readFileSync(new URL('../fixtures/reference/line-fit-scipy.json', import.meta.url), 'utf8'));
const pointsOf = (s: RefSet): LinePoint[] => s.x.map((x, i) => ({ x, y: s.y[i], se: s.se[i] }));
const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('fitLine against SciPy', () => {
  for (const s of ref.sets) {
    it(`slope, intercept, chi^2 and 95 % intervals as curve_fit gives them: ${s.name}`, () => {
      const f = fitLine(pointsOf(s));
      // curve_fit's least squares converge to ~1e-8 relative; the closed form here is exact.
      expect(rel(f.slope, s.fit.slope)).toBeLessThan(1e-6);
      expect(rel(f.intercept, s.fit.intercept)).toBeLessThan(1e-6);
      expect(rel(f.chiSquare, s.fit.chiSquare)).toBeLessThan(1e-6);
      expect(f.dof).toBe(s.fit.dof);
      expect(rel(f.slopeSe, s.fit.slopeSe)).toBeLessThan(1e-6);
      expect(rel(f.interceptSe, s.fit.interceptSe)).toBeLessThan(1e-6);
      // scipy.stats' t and normal quantiles against ours: 1e-9 (tests/calibrate/gum.test.ts holds them to scipy).
      expect(f.slopeCiLow).toBeCloseTo(s.fit.slopeCi[0], 8);
      expect(f.slopeCiHigh).toBeCloseTo(s.fit.slopeCi[1], 8);
      expect(f.interceptCiLow).toBeCloseTo(s.fit.interceptCi[0], 7);
      expect(f.interceptCiHigh).toBeCloseTo(s.fit.interceptCi[1], 7);
      // A point estimate lies inside its interval.
      expect(f.slopeCiLow).toBeLessThan(f.slope);
      expect(f.slopeCiHigh).toBeGreaterThan(f.slope);
      expect(f.notDetermined).toBeUndefined();
    });
  }
  const lr = ref.sets.find((s) => s.linregress)!;
  it('equal standard errors and a large scatter: the Birge-scaled standard errors are linregress\'s', () => {
    const f = fitLine(pointsOf(lr));
    expect(f.birgeRatio).toBeGreaterThan(1);
    expect(rel(f.slope, lr.linregress!.slope)).toBeLessThan(1e-9);
    expect(rel(f.slopeSe, lr.linregress!.slopeSe)).toBeLessThan(1e-9);
    expect(rel(f.interceptSe, lr.linregress!.interceptSe)).toBeLessThan(1e-9);
  });
  it('the line passes through the weighted means, and lineAt gives a + b x', () => {
    const f = fitLine(pointsOf(ref.sets[0]));
    const w = ref.sets[0].se.map((s) => 1 / (s * s)), W = w.reduce((a, b) => a + b, 0);
    const ym = ref.sets[0].y.reduce((a, y, i) => a + w[i] * y, 0) / W;
    expect(lineAt(f, f.xMean)).toBeCloseTo(ym, 12);
  });
});

describe('what the points cannot tell', () => {
  it('two distinct values of the variable: slope and intercept not determined, with why and what would determine them', () => {
    const f = fitLine([{ x: 2, y: 0.3, se: 0.02 }, { x: 2, y: 0.32, se: 0.02 }, { x: 4, y: 0.5, se: 0.02 }], 'draw ratio');
    expect(f.slope).toBeNaN();
    expect(f.intercept).toBeNaN();
    expect(f.direction).toBeNull();
    expect(f.notDetermined?.slope).toMatch(/2 values of draw ratio.*3 or more different values/);
  });
  it('every interval open: not determined, the points are left out and counted', () => {
    const f = fitLine([1, 2, 3, 4].map((x) => ({ x, y: 0.5, se: NaN })));
    expect(f.n).toBe(0);
    expect(f.slope).toBeNaN();
    expect(f.notDetermined?.slope).toMatch(/no point has a reading with a closed interval \(4 left out\)/);
  });
  it('a point without an interval is left out; the rest still fix the line', () => {
    const f = fitLine([{ x: 1, y: 0.1, se: 0.01 }, { x: 2, y: 0.2, se: 0.01 }, { x: 3, y: 0.3, se: 0.01 }, { x: 4, y: NaN, se: 0.01 }]);
    expect(f.n).toBe(3);
    // Three points exactly on y = 0.1 x (construction): slope 0.1, intercept 0, chi^2 0.
    expect(f.slope).toBeCloseTo(0.1, 12);
    expect(f.intercept).toBeCloseTo(0, 12);
    expect(f.direction).toBe('rises');
  });
  it('a standard error from a 95 % interval is half its width over z(0.975) = 1.959964 (from memory)', () => {
    expect(seFromInterval(0.3, 0.7)).toBeCloseTo(0.2 / 1.959964, 6);
    expect(pointSe(0.05, 0.3, 0.7)).toBe(0.05);
    expect(pointSe(null, 0.3, 0.7)).toBeCloseTo(0.2 / 1.959964, 6);
    expect(seFromInterval(0.3, Infinity)).toBeNaN();
    expect(seFromInterval(null, 0.7)).toBeNaN();
  });
});

/**
 * Coverage of the 95 % intervals, derived: with normal errors of SD lambda se_i (lambda = 1 when the standard errors
 * are right), the slope's error is lambda u(b) Z with Z standard normal, independent of chi^2 = lambda^2 Q, Q ~
 * chi^2_nu (Bevington & Robinson §6.4). The rule's interval is s k(R) sqrt(max(1, R)) u(b) wide on each side
 * (s = 1; s = 0.8 and 1.2 are the same intervals 20 % narrower and wider), R = chi^2 / nu, k = z(0.975) for R <= 1
 * and t(0.975, nu) above. So the coverage is C(s) = E_Q[2 Phi(s k(R) sqrt(max(1, R)) / lambda) - 1], integrated
 * here over the chi^2_nu density (Simpson's rule in u = sqrt(Q)). The same holds for the intercept.
 */
function expectedCoverage(s: number, lambda: number, nu: number): number {
  const z = normalQuantile(0.975), t = studentTQuantile(0.975, nu);
  // Gamma(nu / 2) for whole nu: (nu/2 - 1)! or the half-integer form with Gamma(1/2) = sqrt(pi).
  let g = nu % 2 === 0 ? 1 : Math.sqrt(Math.PI);
  for (let a = nu % 2 === 0 ? 1 : 0.5; a < nu / 2; a += 1) g *= a;
  // The chi^2_nu density f(Q) = Q^(nu/2 - 1) e^(-Q/2) / (2^(nu/2) Gamma(nu/2)) written in u = sqrt(Q): f(u^2) 2u du.
  const density = (u: number) => (2 * u ** (nu - 1) * Math.exp((-u * u) / 2)) / (2 ** (nu / 2) * g);
  const steps = 4000, uMax = Math.sqrt(nu + 60 * Math.sqrt(2 * nu) + 60), h = uMax / steps;
  let sum = 0, mass = 0;
  for (let i = 0; i <= steps; i++) {
    const u = i * h, R = (lambda * lambda * u * u) / nu;
    const cover = 2 * normalCdf((s * (R > 1 ? t : z) * Math.sqrt(Math.max(1, R))) / lambda) - 1;
    const wgt = (i === 0 || i === steps ? 1 : i % 2 ? 4 : 2) * density(u);
    sum += wgt * cover; mass += wgt;
  }
  expect(mass * h / 3).toBeCloseTo(1, 6); // the density integrates to 1
  return sum / mass;
}

/** `sets` seeded data sets of `n` points at random values of x in [0, 10], standard errors in 0.01-0.04, scatter lambda se. */
function coverage(seed: number, sets: number, n: number, lambda: number) {
  const u = rng(seed), g = gaussian(rng(seed + 1000));
  const a = 0.3, b = 0.04;
  const hits = { slope: [0, 0, 0], intercept: [0, 0, 0] };
  const scales = [1, 0.8, 1.2];
  for (let r = 0; r < sets; r++) {
    const pts = Array.from({ length: n }, () => {
      const x = 10 * u(), se = 0.01 + 0.03 * u();
      return { x, y: a + b * x + lambda * se * g(), se };
    });
    const f = fitLine(pts);
    scales.forEach((s, k) => {
      if (Math.abs(f.slope - b) <= s * (f.slopeCiHigh - f.slope)) hits.slope[k]++;
      if (Math.abs(f.intercept - a) <= s * (f.interceptCiHigh - f.intercept)) hits.intercept[k]++;
    });
  }
  return { slope: hits.slope.map((h) => h / sets), intercept: hits.intercept.map((h) => h / sets) };
}

describe('the 95 % intervals cover the truth at their stated rate', () => {
  const sets = 2000;
  for (const [n, lambda, seed] of [[6, 1, 31], [3, 1, 32], [10, 2.5, 33]] as const) {
    it(`${sets} seeded sets of ${n} points, scatter ${lambda} x the standard errors: 90-99 %, as derived, and not at 20 % narrower or wider`, () => {
      const c = coverage(seed, sets, n, lambda);
      const expected = expectedCoverage(1, lambda, n - 2);
      const band = 3 * Math.sqrt((expected * (1 - expected)) / sets); // three binomial SDs
      for (const rates of [c.slope, c.intercept]) {
        expect(rates[0]).toBeGreaterThanOrEqual(0.9);
        expect(rates[0]).toBeLessThanOrEqual(0.99);
        expect(Math.abs(rates[0] - expected)).toBeLessThan(band);
        // The same check on intervals 20 % narrower or wider fails: their rates lie outside the band.
        expect(Math.abs(rates[1] - expected)).toBeGreaterThan(band);
        expect(Math.abs(rates[2] - expected)).toBeGreaterThan(band);
        // ...and they sit where the derivation puts them (the band is not just wide).
        expect(Math.abs(rates[1] - expectedCoverage(0.8, lambda, n - 2))).toBeLessThan(band * 1.2);
      }
    });
  }
});
