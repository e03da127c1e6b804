import { median } from '../common/index.ts';
import { normalQuantile, studentTQuantile } from '../common/index.ts';
/**
 * Station statistics: mean, SD, CV, min, max and a 95 % interval on the mean that allows for the
 * correlation of neighbouring stations (real diameter variation is smooth along a fibre, so adjacent
 * stations are not independent).
 */

/** One-sided 95 % normal quantile, z(0.95), for the test of a positive lag-1 correlation. */
const LAG1_ONE_SIDED_95 = normalQuantile(0.95);

export interface StationStats {
  n: number;
  mean: number | null;
  sd: number | null;
  cv: number | null;
  min: number | null;
  max: number | null;
  ciLow: number | null;
  ciHigh: number | null;
  /** Lag-1 autocorrelation of the station values (within each fibre); used only when positive beyond chance. */
  lag1Correlation: number | null;
  /** n (1 - r1) / (1 + r1): the number of independent stations the interval is based on. */
  nEffective: number | null;
}

/**
 * Statistics of station values given as runs (one run per fibre, stations in order along it).
 * Mean, SD (n - 1), CV, min and max are over all stations.
 *
 * 95 % interval, one fibre (or `unit` 'station'): mean +- t(0.975, nEff - 1) * SD / sqrt(nEff), with
 * nEff = n (1 - r1)/(1 + r1) for a first-order autoregressive sequence of lag-1 correlation r1 (the usual
 * variance-inflation rule for correlated series; r1 is taken within each run about the run's own mean).
 * r1 is used when it is positive beyond chance: above -1/n + z(0.95)/sqrt(n), the one-sided 5 % point of a
 * lag-1 autocorrelation of independent values (mean about -1/n, SD about 1/sqrt n; Bartlett 1946, from
 * memory); otherwise the stations are taken as independent (nEff = n). Taking every positive r1 at face
 * value would widen the interval of independent stations by chance half the time (coverage about 96.5 %
 * instead of 95 % at 10-20 stations, measured); a steady change along the fibre (taper) has r1 near 1 and
 * is always used. docs/methods.md, "Fibre diameters: summary and interval".
 *
 * With `unit` 'run' and two or more non-empty runs, the fibres are the sampling unit (stations of one
 * fibre are not independent draws from the sample): mean +- t(0.975, k - 1) * SD(run means) / sqrt(k),
 * nEffective = k.
 */
export function stationStats(runs: number[][], unit: 'station' | 'run' = 'station'): StationStats {
  const all = runs.flat();
  const n = all.length;
  const empty: StationStats = { n, mean: null, sd: null, cv: null, min: null, max: null, ciLow: null, ciHigh: null,
    lag1Correlation: null, nEffective: null };
  if (n === 0) return empty;
  const mean = all.reduce((a, b) => a + b, 0) / n;
  let min = Infinity;
  let max = -Infinity;
  for (const v of all) {
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (n < 2) return { ...empty, mean, min, max };
  let ss = 0;
  for (const v of all) ss += (v - mean) ** 2;
  const sd = Math.sqrt(ss / (n - 1));
  let lagSum = 0;
  let lagCount = 0;
  let withinSs = 0;
  let withinCount = 0;
  for (const run of runs) {
    if (run.length === 0) continue;
    const m = run.reduce((a, b) => a + b, 0) / run.length;
    for (let i = 0; i < run.length; i++) {
      withinSs += (run[i] - m) ** 2;
      withinCount++;
      if (i > 0) {
        lagSum += (run[i] - m) * (run[i - 1] - m);
        lagCount++;
      }
    }
  }
  const r1 = lagCount > 0 && withinSs > 0 ? (lagSum / lagCount) / (withinSs / withinCount) : null;
  const stats = { n, mean, sd, cv: mean !== 0 ? sd / mean : null, min, max, lag1Correlation: r1 };
  const runMeans = runs.filter((r) => r.length > 0).map((r) => r.reduce((a, b) => a + b, 0) / r.length);
  if (unit === 'run' && runMeans.length >= 2) {
    const k = runMeans.length;
    const mm = runMeans.reduce((a, b) => a + b, 0) / k;
    const sdMeans = Math.sqrt(runMeans.reduce((a, b) => a + (b - mm) ** 2, 0) / (k - 1));
    const half = (studentTQuantile(0.975, k - 1) * sdMeans) / Math.sqrt(k);
    // Each fibre counts once (as each measured fibre does in the projection-microscope standards), so
    // the mean and its interval are those of the fibre means.
    return { ...stats, mean: mm, cv: mm !== 0 ? sd / mm : null, ciLow: mm - half, ciHigh: mm + half, nEffective: k };
  }
  const significant = r1 !== null && r1 > -1 / n + LAG1_ONE_SIDED_95 / Math.sqrt(n);
  const rUsed = significant ? Math.min(r1, 0.99) : 0;
  const nEff = Math.max(2, (n * (1 - rUsed)) / (1 + rUsed));
  const half = (studentTQuantile(0.975, nEff - 1) * sd) / Math.sqrt(nEff);
  return { ...stats, ciLow: mean - half, ciHigh: mean + half, nEffective: nEff };
}

export { median };

/** Median absolute deviation scaled by 1.4826 to estimate a Gaussian SD. */
export function robustSd(values: ArrayLike<number>): number {
  const med = median(values);
  return 1.4826 * median(Float64Array.from(values, (v) => Math.abs(v - med)));
}
