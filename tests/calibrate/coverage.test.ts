/**
 * Coverage of the micrometer calibration's stated interval over 400 seeded rulers of the independent
 * renderer (tests/validation/render/ruler.ts; truth by construction), judged as `npm run validate` does
 * (tests/validation/micrometer.ts): coverage 90-99 % (docs/methods.md, "Interval coverage") and the
 * spread of the normal scores of error / u within its 99 % sampling band, which the same intervals made
 * 20 % narrower or 20 % wider do not pass (shown here: the count of 400 is chosen so that they fall out
 * of the band with about 2.3 and 3.3 of its standard errors to spare, while the stated intervals sit
 * inside it).
 */
import { describe, expect, it } from 'vitest';
import { coverageRate, coverageRows, runCoverage, scoreSpread, spreadBand } from '../validation/micrometer.ts';

describe('the micrometer calibration\'s interval covers the rendered truth at its stated 95.45 %', () => {
  const cases = runCoverage(400, 1);
  const done = cases.filter((c) => !c.refused);

  it('gives a number for (nearly) every ruler', () => {
    expect(done.length).toBeGreaterThanOrEqual(0.95 * cases.length);
  });

  it('covers in 90-99 % of the cases, with error / u spread as the stated uncertainties say', () => {
    const rate = coverageRate(cases);
    expect(rate).toBeGreaterThanOrEqual(90);
    expect(rate).toBeLessThanOrEqual(99);
    const [lo, hi] = spreadBand(done.length);
    const spread = scoreSpread(cases);
    expect(spread).toBeGreaterThanOrEqual(lo);
    expect(spread).toBeLessThanOrEqual(hi);
  });

  it('would fail with the same intervals 20 % narrower or 20 % wider', () => {
    const [lo, hi] = spreadBand(done.length);
    expect(scoreSpread(cases, 0.8)).toBeGreaterThan(hi);
    expect(scoreSpread(cases, 1.2)).toBeLessThan(lo);
    const rows = coverageRows(cases, true);
    expect(rows.filter((r) => /narrower|wider/.test(r.quantity)).every((r) => r.pass)).toBe(true);
    expect(rows.every((r) => r.pass)).toBe(true);
  });
}, 120_000);
