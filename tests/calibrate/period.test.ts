import { describe, expect, it } from 'vitest';
import { periodFromProfile } from '../../src/calibrate/index.ts';
import { lineProfile } from './profiles.ts';

/** Naive spectral period: argmax of |DFT| of the mean-removed profile over k >= 2 (a plain O(n^2) DFT). */
function naiveFftPeriod(v: Float64Array): number {
  const n = v.length;
  const mean = v.reduce((a, b) => a + b, 0) / n;
  let bestK = 0;
  let best = -1;
  for (let k = 2; k <= n / 2; k++) {
    let re = 0;
    let im = 0;
    for (let x = 0; x < n; x++) {
      const ph = (2 * Math.PI * k * x) / n;
      re += (v[x] - mean) * Math.cos(ph);
      im -= (v[x] - mean) * Math.sin(ph);
    }
    const mag = Math.hypot(re, im);
    if (mag > best) {
      best = mag;
      bestK = k;
    }
  }
  return n / bestK;
}

function spread(values: number[]): { mean: number; sd: number } {
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  const sd = Math.sqrt(values.reduce((a, b) => a + (b - mean) ** 2, 0) / (values.length - 1));
  return { mean, sd };
}

/**
 * Cramer-Rao bound on the period of N Gaussian lines (amplitude A, sigma s px, sampled every px) in white
 * noise of SD n: each centre has variance >= n^2 / sum g'(x)^2 = n^2 2 s / (A^2 sqrt(pi)) (sum of the squared
 * slope of A exp(-x^2 / 2 s^2)), and a straight-line fit over indices 0..N-1 divides that by
 * sum (m - mean)^2 = N (N^2 - 1) / 12 (closed forms).
 */
function periodBoundPx(periodPx: number, amplitude = 0.5, sigmaPx = 3 / 2.354820045, noiseSd = 0.02, lengthPx = 2048): number {
  const n = Math.floor(lengthPx / periodPx);
  const centreVar = (noiseSd ** 2 * 2 * sigmaPx) / (amplitude ** 2 * Math.sqrt(Math.PI));
  return Math.sqrt(centreVar / ((n * (n * n - 1)) / 12));
}

describe('periodFromProfile (line centres + least-squares fit c = P m + c0)', () => {
  it('recovers P = 30.770 px within 0.001 px (3 x the Cramer-Rao bound) on a 2048-px profile with noise 0.02', () => {
    expect(3 * periodBoundPx(30.77)).toBeGreaterThan(0.0009);
    for (let seed = 1; seed <= 10; seed++) {
      const fit = periodFromProfile(lineProfile(30.77, 0.02, seed, 4 + 0.41 * seed));
      // Truth: the period the profile was built with (construction); 10 um / 30.77 px = 0.32499 um/px.
      expect(Math.abs(fit.periodPx - 30.77)).toBeLessThan(0.001);
      expect(10 / fit.periodPx).toBeCloseTo(0.32499, 4);
      expect(fit.polarity).toBe('dark');
    }
  });

  it('scatters close to the Cramer-Rao bound at periods 7.69 / 15.38 / 61.54 / 123.1 px, without bias', () => {
    for (const period of [7.69, 15.38, 61.54, 123.1]) {
      const errs: number[] = [];
      for (let seed = 1; seed <= 24; seed++) {
        errs.push(periodFromProfile(lineProfile(period, 0.02, seed, 5 + 0.37 * seed)).periodPx - period);
      }
      const { mean, sd } = spread(errs);
      const bound = periodBoundPx(period);
      // No unbiased estimator beats the bound (allowing the sampling error of an SD from 24 draws, about 15 %);
      // this one stays within 2x of it, and its mean within 3 of its own standard errors of the truth.
      expect(sd).toBeGreaterThan(0.7 * bound);
      expect(sd).toBeLessThan(2 * bound);
      expect(Math.abs(mean)).toBeLessThan((3 * sd) / Math.sqrt(errs.length) + 1e-6);
    }
  });

  it('is not fooled by the harmonic that makes a naive spectral argmax read P/2', () => {
    const v = lineProfile(30.77, 0.02, 1);
    // The plain DFT above peaks at the 2nd harmonic's bin, round(2 x 2048 / 30.77) = 133: 2048 / 133 = 15.40 px
    // (the fundamental's bin 66.56 falls between bins and loses to it).
    expect(naiveFftPeriod(v)).toBeCloseTo(2048 / 133, 6);
    const fit = periodFromProfile(v);
    expect(Math.abs(fit.periodPx - 30.77)).toBeLessThan(0.001);
    expect(Math.abs(fit.periodPx - naiveFftPeriod(v))).toBeGreaterThan(15);
  });

  it('gives a standard error that matches the scatter between noise draws', () => {
    const periods: number[] = [];
    const stdErrs: number[] = [];
    for (let seed = 1; seed <= 30; seed++) {
      const fit = periodFromProfile(lineProfile(61.54, 0.02, seed, 3 + 0.53 * seed));
      periods.push(fit.periodPx);
      stdErrs.push(fit.periodStdErrPx);
    }
    const { sd } = spread(periods);
    const meanSe = stdErrs.reduce((a, b) => a + b, 0) / stdErrs.length;
    // Statistical fact: the fit's SE estimates the SD of P over repeats (within sampling error of 30 draws).
    expect(meanSe / sd).toBeGreaterThan(0.6);
    expect(meanSe / sd).toBeLessThan(1.6);
  });

  it('reads bright lines and keeps counting across a missing line', () => {
    const dark = lineProfile(20.5, 0.01, 2);
    const bright = dark.map((v) => 2 - v);
    // Remove one line by flattening its neighbourhood (a gap in the ruler).
    for (let x = 400; x < 420; x++) bright[x] = 1 + 0.01 * Math.sin(x);
    const fit = periodFromProfile(bright);
    expect(fit.polarity).toBe('bright');
    expect(Math.abs(fit.periodPx - 20.5)).toBeLessThan(0.002);
    expect(fit.divisions).toBe(fit.indices[fit.indices.length - 1] - fit.indices[0]);
    expect(fit.centresPx.length).toBeLessThan(fit.divisions + 1);
  });

  it('throws an InputError on noise alone or fewer than 5 lines', () => {
    const flat = lineProfile(1e9, 0.02, 5, 1e6);
    expect(() => periodFromProfile(flat)).toThrow(/line/);
    const few = lineProfile(600, 0.001, 5, 100);
    expect(() => periodFromProfile(few)).toThrow(/at least 5/);
  });
});
