import { describe, expect, it } from 'vitest';
import { erf, erfc, normalCdf, normalQuantile, studentTCdf, studentTQuantile, stationStats } from '../../src/fibre/index.ts';
import { normalCdfFast } from '../../src/common/distributions.ts';

describe('erf / erfc', () => {
  it('match scipy.special.erf and erfc to 1e-14', () => {
    // Reference library: scipy.special.erf / erfc (python3-scipy), printed with repr()
    const rows: [number, number, number][] = [
      [0.1, 0.1124629160182849, 0.8875370839817152],
      [0.5, 0.5204998778130465, 0.4795001221869535],
      [1, 0.8427007929497148, 0.15729920705028516],
      [2, 0.9953222650189527, 0.004677734981047266],
      [2.9, 0.9999589021219005, 4.109787809945884e-05],
      [3, 0.9999779095030014, 2.2090496998585445e-05],
      [3.5, 0.9999992569016276, 7.430983723414129e-07],
      [5, 0.9999999999984626, 1.5374597944280347e-12],
    ];
    for (const [x, e, c] of rows) {
      expect(Math.abs(erf(x) - e)).toBeLessThan(1e-14);
      expect(Math.abs(erf(-x) + e)).toBeLessThan(1e-14);
      expect(Math.abs(erfc(x) - c) / c).toBeLessThan(1e-12);
    }
  });
  it('normalCdf is (1 + erf(z / sqrt 2)) / 2 with Phi(0) = 0.5 and Phi(1.959964) = 0.975', () => {
    expect(normalCdf(0)).toBe(0.5);
    // Standard normal table (from memory; also scipy.stats.norm.ppf(0.975) = 1.959963984540054)
    expect(normalCdf(1.959963984540054)).toBeCloseTo(0.975, 12);
    expect(normalCdf(-1.959963984540054)).toBeCloseTo(0.025, 12);
  });
});

describe('fast normal CDF and the normal quantile', () => {
  it('normalCdfFast agrees with normalCdf (checked against scipy above) to 1e-14 everywhere', () => {
    let worst = 0;
    for (let z = -10; z <= 10; z += 0.00137) worst = Math.max(worst, Math.abs(normalCdfFast(z) - normalCdf(z)));
    expect(worst).toBeLessThan(1e-14);
  });
  it('normalQuantile inverts it: scipy.stats.norm.ppf(0.975) = 1.959963984540054, ppf(0.95) = 1.6448536269514722 (from memory)', () => {
    expect(normalQuantile(0.975)).toBeCloseTo(1.959963984540054, 12);
    expect(normalQuantile(0.95)).toBeCloseTo(1.6448536269514722, 12);
    expect(normalQuantile(0.5)).toBeCloseTo(0, 14);
  });
});

describe('Student t', () => {
  it('quantiles match scipy.stats.t.ppf(0.975, df)', () => {
    // Reference library: scipy.stats.t.ppf(0.975, df)
    const rows: [number, number][] = [[1, 12.706204736174694], [2, 4.302652729749462], [5, 2.5705818356363146],
      [10, 2.228138851986274], [30, 2.0422724563012378], [2.5, 3.5746548420036817]];
    for (const [df, t] of rows) expect(studentTQuantile(0.975, df)).toBeCloseTo(t, 8);
  });
  it('cdf matches scipy.stats.t.cdf(1.5, 3) = 0.8847080673775886', () => {
    expect(studentTCdf(1.5, 3)).toBeCloseTo(0.8847080673775886, 10);
  });
});

describe('stationStats', () => {
  it('gives mean, SD (n - 1), CV, min, max of a hand-checkable sample', () => {
    const s = stationStats([[10, 12, 10, 12, 10, 12]]);
    // By hand: mean 11, SD = sqrt(6 / 5) = 1.0954451150103321 (definition of the sample SD)
    expect(s.mean).toBeCloseTo(11, 12);
    expect(s.sd).toBeCloseTo(Math.sqrt(6 / 5), 12);
    expect(s.cv).toBeCloseTo(Math.sqrt(6 / 5) / 11, 12);
    expect([s.min, s.max]).toEqual([10, 12]);
    // Alternating values: lag-1 correlation is negative, clipped to 0, so nEff = n and the interval is the
    // plain t interval: 11 +- t(0.975, 5) SD / sqrt 6, t from scipy.stats.t.ppf(0.975, 5) = 2.5705818356363146.
    expect(s.lag1Correlation).toBeLessThan(0);
    expect(s.nEffective).toBe(6);
    const half = (2.5705818356363146 * Math.sqrt(6 / 5)) / Math.sqrt(6);
    expect(s.ciLow).toBeCloseTo(11 - half, 10);
    expect(s.ciHigh).toBeCloseTo(11 + half, 10);
  });
  it('widens the interval for smoothly varying (correlated) stations', () => {
    const smooth = Array.from({ length: 40 }, (_, i) => 20 + Math.sin(i / 6));
    const s = stationStats([smooth]);
    expect(s.lag1Correlation).toBeGreaterThan(0.9);
    expect(s.nEffective).toBeLessThan(5);
    const naiveHalf = (studentTQuantile(0.975, 39) * (s.sd as number)) / Math.sqrt(40);
    expect((s.ciHigh as number) - (s.mean as number)).toBeGreaterThan(2 * naiveHalf);
  });
  it('takes a positive lag-1 correlation only when it is beyond chance (above -1/n + 1.645/sqrt n)', () => {
    // sin(1.4 i) and sin(1.2 i), i = 0..19, to 2 decimals: two sequences whose lag-1 correlations lie on either side
    // of the one-sided 5 % point of independent values, -1/20 + 1.645/sqrt 20 = 0.318 (the test checks which side).
    const threshold = -1 / 20 + 1.6448536269514722 / Math.sqrt(20);
    const below = stationStats([Array.from({ length: 20 }, (_, i) => Number(Math.sin(1.4 * i).toFixed(2)))]);
    expect(below.lag1Correlation as number).toBeGreaterThan(0.1);
    expect(below.lag1Correlation as number).toBeLessThan(threshold);
    expect(below.nEffective).toBe(20);
    const above = stationStats([Array.from({ length: 20 }, (_, i) => Number(Math.sin(1.2 * i).toFixed(2)))]);
    const r = above.lag1Correlation as number;
    expect(r).toBeGreaterThan(threshold);
    expect(above.nEffective as number).toBeCloseTo((20 * (1 - r)) / (1 + r), 12);
  });
  it('reports n = 0 with null numbers, and no interval for n = 1', () => {
    expect(stationStats([[]])).toMatchObject({ n: 0, mean: null, sd: null, ciLow: null });
    expect(stationStats([[5]])).toMatchObject({ n: 1, mean: 5, sd: null, ciLow: null, ciHigh: null });
  });
});

describe('stationStats over several fibres', () => {
  it('takes the fibres as the sampling unit for the pooled interval', () => {
    const s = stationStats([[10, 10.2, 9.8, 10], [14, 14.1, 13.9, 14]], 'run');
    // Fibre means 10 and 14: t(0.975, 1) = 12.706204736174694 (scipy.stats.t.ppf), SD of means = sqrt 8
    const half = (12.706204736174694 * Math.sqrt(8)) / Math.sqrt(2);
    expect(s.mean).toBeCloseTo(12, 12);
    expect(s.nEffective).toBe(2);
    expect(s.ciHigh as number).toBeCloseTo(12 + half, 8);
    // Lag-1 correlation is taken within each fibre about its own mean, not about the pooled mean.
    expect(s.lag1Correlation as number).toBeLessThan(0.5);
  });
});
