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

describe('periodFromProfile (line centres + least-squares fit c = P m + c0)', () => {
  it('recovers P = 30.770 px within 0.001 px on a 2048-px profile with noise 0.02', () => {
    for (let seed = 1; seed <= 10; seed++) {
      const fit = periodFromProfile(lineProfile(30.77, 0.02, seed, 4 + 0.41 * seed));
      // domain.md §8 [C]: line-fit P = 30.770 -> 0.32499 um/px, tolerance +-0.001 px
      expect(Math.abs(fit.periodPx - 30.77)).toBeLessThan(0.001);
      expect(10 / fit.periodPx).toBeCloseTo(0.32499, 4);
      expect(fit.polarity).toBe('dark');
    }
  });

  it('has the scatter of the published recipe at periods 7.69 / 15.38 / 61.54 / 123.1 px', () => {
    // domain.md §8 [C]: recovered to +-0.00003 / 0.0001 / 0.0008 / 0.0018 px SD (line depth not stated there:
    // 0.5 here, so the scatter is allowed up to 2x the published SD; the mean must stay within 3 published SDs).
    const rows: [number, number][] = [[7.69, 0.00003], [15.38, 0.0001], [61.54, 0.0008], [123.1, 0.0018]];
    for (const [period, sdPublished] of rows) {
      const errs: number[] = [];
      for (let seed = 1; seed <= 24; seed++) {
        errs.push(periodFromProfile(lineProfile(period, 0.02, seed, 5 + 0.37 * seed)).periodPx - period);
      }
      const { mean, sd } = spread(errs);
      expect(sd).toBeLessThan(2 * sdPublished);
      expect(Math.abs(mean)).toBeLessThan(3 * sdPublished);
    }
  });

  it('is not fooled by the harmonic that makes a naive spectral argmax read P/2', () => {
    const v = lineProfile(30.77, 0.02, 1);
    // domain.md §8 [C]: naive FFT argmax gives 15.40 px (the 2nd harmonic) on this profile
    expect(naiveFftPeriod(v)).toBeCloseTo(15.40, 1);
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
