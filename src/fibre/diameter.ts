/**
 * Fibre diameter from an image: find the fibre(s), measure the width across each at stations along
 * its axis (wide fibres edge by edge, narrow ones as one blurred bar with a PSF pooled over the fibre),
 * and summarise with GUM uncertainties that include the pixel size's (docs/methods.md, "Fibre diameter").
 */
import { checkNumber, InputError } from '../common/index.ts';
import { checkLimit, type Limit } from '../common/index.ts';
import { radToDeg, wrapAxialDeg } from '../common/index.ts';
import type { Plane } from '../common/index.ts';
import { segmentFibres } from './detect.ts';
import { DROP_REASONS, measureStations } from './stations.ts';
import type { DropReason, DroppedStation, MeasuredStation } from './stations.ts';
import { unresolvedUpperBoundPx, RESOLVABLE_WIDTH_PER_SIGMA } from './barPool.ts';
import type { BarPool } from './barPool.ts';
import { stationStats } from './stats.ts';
import { normalQuantile } from '../common/index.ts';
import { expandedInterval, COVERAGE_PROBABILITY } from './uncertainty.ts';
import { combineUncertainties } from '../common/index.ts';

export interface DiameterOptions {
  /** Distance between stations along the axis, px. Default 10. */
  stepPx?: number;
  /** Length along the axis each profile is averaged over, px (1 = a single line). Default 5. */
  averageLengthPx?: number;
  /** Sample spacing along each profile, px. Default 0.5 (at most 0.5; docs/methods.md, "Fibre diameter"). */
  profileStepPx?: number;
  /** Pixel size in the object, um/px; without it the um fields are null. */
  pixelSizeUmPerPx?: number;
  /**
   * Relative standard uncertainty (k = 1) of the pixel size, e.g. 0.002 for 0.2 % (what `retarda calibrate`
   * gives as `uncertainty`). It enters every um interval: u(D)/D includes u(p)/p. Without it the um
   * intervals hold the measurement's own uncertainty only, and a warning says so.
   */
  pixelSizeUncertainty?: number;
  /** Fibre darker or brighter than the background; 'auto' decides from the image. Default 'auto'. */
  polarity?: 'auto' | 'dark' | 'bright';
  /** Degree of the polynomial illumination surface subtracted before measuring. Default 2. */
  shadingDegree?: number;
  /** Smallest fibre contrast / background noise (after 1.5 px smoothing) accepted. Default 8. */
  minContrastToNoise?: number;
  /** Smallest sqrt(lambda1/lambda2) of an object's second moments for it to count as a fibre. Default 2. */
  minElongation?: number;
  /** Smallest object area, px. Default max(30, 0.1 % of the image). */
  minAreaPx?: number;
}

export interface DiameterStation extends Omit<MeasuredStation, 'bar'> {
  diameterUm: number | null;
  /** Index of the fibre in `fibres`. */
  fibre: number;
}

export interface DiameterSummary {
  n: number;
  meanPx: number | null;
  sdPx: number | null;
  /** SD / mean (dimensionless; the same in px and um). */
  cv: number | null;
  minPx: number | null;
  maxPx: number | null;
  ciLowPx: number | null;
  ciHighPx: number | null;
  /**
   * Standard uncertainty (k = 1) of the mean in px and its effective degrees of freedom (Welch-Satterthwaite):
   * the station scatter and, for narrow fibres, the pooled PSF sigma's share. ci*Px = mean -+ t(0.975, dofPx) uPx.
   */
  uPx: number | null;
  dofPx: number | null;
  meanUm: number | null;
  sdUm: number | null;
  minUm: number | null;
  maxUm: number | null;
  ciLowUm: number | null;
  ciHighUm: number | null;
  /** Combined standard uncertainty of meanUm (k = 1), including the pixel size's; ci*Um = meanUm -+ t(0.975, dofUm) uUm. */
  uUm: number | null;
  /** The pixel size's share of uUm: meanUm x pixelSizeUncertainty (null when that was not given). */
  uUmPixelSize: number | null;
  dofUm: number | null;
  /**
   * False when the width is not determined: the fibre is narrower than about RESOLVABLE_WIDTH_PER_SIGMA PSF
   * sigmas, where width and contrast trade off. The mean is then null and upperBound* is given instead.
   */
  determined: boolean;
  /**
   * Upper bound on the width when it is not determined (null otherwise): sqrt(12 V) from the profile's second
   * moment V at its one-sided 95 % limit, so it holds with at least 95 % confidence whatever the blur.
   */
  upperBoundPx: number | null;
  upperBoundUm: number | null;
  /** Lag-1 correlation of neighbouring stations and the effective n the 95 % interval uses. */
  lag1Correlation: number | null;
  nEffective: number | null;
  dropped: number;
  droppedByReason: Partial<Record<DropReason, number>>;
}

export interface FibreDiameter extends DiameterSummary {
  index: number;
  /** How the profiles were fitted: 'edges' (each edge alone; wide), 'bar' (whole profile; narrow) or both. */
  profileFit: 'edges' | 'bar' | 'mixed' | null;
  /** PSF sigma pooled over the fibre's bar stations and its standard uncertainty, px (null for a wide fibre). */
  psfSigmaPx: number | null;
  psfSigmaUPx: number | null;
  /** Axis direction, degrees CCW on screen from +x, in (-90, 90]. */
  axisDeg: number;
  /** First end of the fibre's mask along the axis (where alongPx = 0), px. */
  startXPx: number;
  startYPx: number;
  lengthPx: number;
  stations: DiameterStation[];
  droppedStations: DroppedStation[];
}

export interface DiameterResult extends DiameterSummary {
  /** Every kept station of every fibre, fibre by fibre. */
  stations: DiameterStation[];
  fibres: FibreDiameter[];
  polarity: 'dark' | 'bright';
  /** Fibre contrast over the background and the background noise (image units). */
  contrast: number;
  noiseSd: number;
  shadingDegree: number;
  /** Objects found but too small or too round to be a fibre. */
  ignoredObjects: number;
  pixelSizeUmPerPx: number | null;
  /** Relative standard uncertainty of the pixel size used in the um intervals (null: not given). */
  pixelSizeUncertainty: number | null;
  options: Required<Omit<DiameterOptions, 'pixelSizeUmPerPx' | 'pixelSizeUncertainty' | 'minAreaPx'>> & { minAreaPx: number };
  warnings: string[];
}

/** Defaults and ranges of the options a user sets (docs/methods.md §12.2), for the analysis, the command line and the app. */
export const DIAMETER_LIMITS = {
  stepPx: { what: 'station step', min: 1, max: 1e5, default: 10, unit: 'px' },
  averageLengthPx: { what: 'length each profile is averaged over', min: 1, max: 1e4, default: 5, unit: 'px' },
  shadingDegree: { what: 'shading degree', min: 0, max: 4, default: 2, integer: true },
  pixelSizeUmPerPx: { what: 'pixel size', min: 1e-6, max: 1e6, unit: 'um/px' },
  // At most 50 %: beyond that a length is not worth stating.
  pixelSizeUncertainty: { what: 'relative uncertainty of the pixel size', min: 0, max: 0.5 },
} as const satisfies Record<string, Limit>;

export const DIAMETER_DEFAULTS = {
  stepPx: DIAMETER_LIMITS.stepPx.default, averageLengthPx: DIAMETER_LIMITS.averageLengthPx.default, profileStepPx: 0.5, polarity: 'auto',
  shadingDegree: DIAMETER_LIMITS.shadingDegree.default, minContrastToNoise: 8, minElongation: 2,
} as const;

/** One-sided 95 % normal quantile, for the pixel size's share of an upper bound. */
const ONE_SIDED_95 = normalQuantile(COVERAGE_PROBABILITY);

interface Calibration {
  umPerPx: number | null;
  /** Relative standard uncertainty of umPerPx (null when not given: then left out of the um intervals). */
  relU: number | null;
}

/**
 * Summary of station widths given as runs (one per fibre). The interval (GUM, docs/methods.md §12.5, "Fibre
 * diameters: summary and interval", rules in §11.5 "Uncertainty"): one fibre: u_stat = SD / sqrt(nEff) with
 * nEff - 1 dof (stationStats), combined with
 * `sigmaTermPx` (the pooled PSF sigma's share, infinite dof); several fibres: the fibre means are the
 * sampling unit, u = SD(means) / sqrt(k), k - 1 dof (each fibre's own sigma error is part of that scatter).
 * In um the pixel size adds meanPx x p x u(p)/p (infinite dof).
 */
function summarise(runs: DiameterStation[][], dropped: DroppedStation[], cal: Calibration, sigmaTermPx: number,
  bound: { determined: boolean; upperBoundPx: number | null }): DiameterSummary {
  const s = stationStats(runs.map((r) => r.map((st) => st.diameterPx)), 'run');
  const { umPerPx } = cal;
  const relU = cal.relU ?? 0;
  const um = (v: number | null) => (v === null || umPerPx === null ? null : v * umPerPx);
  const byReason: Partial<Record<DropReason, number>> = {};
  for (const d of dropped) byReason[d.reason] = (byReason[d.reason] ?? 0) + 1;
  let uPx: number | null = null;
  let dofPx: number | null = null;
  let ciPx: [number | null, number | null] = [null, null];
  let uUm: number | null = null;
  let dofUm: number | null = null;
  let ciUm: [number | null, number | null] = [null, null];
  if (s.mean !== null && s.ciHigh !== null && s.ciLow !== null && s.nEffective !== null) {
    // stationStats states its interval as mean +- t(0.975, nEff - 1) u; recover u from it.
    const statDof = s.nEffective - 1;
    const statU = (s.ciHigh - s.ciLow) / 2 / expandedInterval(0, { u: 1, dof: statDof }).k;
    const combined = combineUncertainties([{ u: statU, dof: statDof }, { u: sigmaTermPx, dof: Infinity }]);
    const px = expandedInterval(s.mean, combined);
    [uPx, dofPx, ciPx] = [combined.u, combined.dof, [px.ciLow, px.ciHigh]];
    if (umPerPx !== null) {
      const inUm = combineUncertainties([{ u: combined.u * umPerPx, dof: combined.dof },
        { u: s.mean * umPerPx * relU, dof: Infinity }]);
      const iv = expandedInterval(s.mean * umPerPx, inUm);
      [uUm, dofUm, ciUm] = [inUm.u, inUm.dof, [iv.ciLow, iv.ciHigh]];
    }
  }
  const finite = (v: number | null) => (v === null || !Number.isFinite(v) ? null : v);
  return {
    n: s.n, meanPx: s.mean, sdPx: s.sd, cv: s.cv, minPx: s.min, maxPx: s.max, ciLowPx: ciPx[0], ciHighPx: ciPx[1],
    uPx, dofPx: finite(dofPx), meanUm: um(s.mean), sdUm: um(s.sd), minUm: um(s.min), maxUm: um(s.max),
    ciLowUm: ciUm[0], ciHighUm: ciUm[1], uUm,
    uUmPixelSize: s.mean === null || umPerPx === null || cal.relU === null ? null : s.mean * umPerPx * cal.relU,
    dofUm: finite(dofUm), determined: bound.determined, upperBoundPx: bound.upperBoundPx,
    // The pixel size's share of a one-sided 95 % bound: p (1 + z(0.95) u(p)/p), conservative on top of the px bound.
    upperBoundUm: bound.upperBoundPx === null || umPerPx === null ? null
      : bound.upperBoundPx * umPerPx * (1 + ONE_SIDED_95 * relU),
    lag1Correlation: s.lag1Correlation, nEffective: s.nEffective, dropped: dropped.length, droppedByReason: byReason,
  };
}

/**
 * Measures every fibre in a grey plane.
 *
 * Steps: light Gaussian smoothing (sigma 1.5 px) for detection only; fibre/background split by Otsu
 * and then at 0.3 of the fibre contrast; polarity = the class not owning the image border; illumination
 * flattened by a least-squares polynomial (degree `shadingDegree`) fitted to the background;
 * connected elongated objects are fibres. Along each, stations every `stepPx`: a profile along the
 * local normal (bilinear, `profileStepPx` spacing, averaged over `averageLengthPx`), edges from the
 * gradient peak + 3-point parabola refined by an erf edge-spread fit I = lo + (hi - lo) Phi((x - x0)/sigma)
 * (docs/methods.md §12.3), width = x0(right) - x0(left). Stations are re-centred on a fitted centre line so the
 * width is measured normal to the fibre (an error psi off the normal would read D / cos psi).
 *
 * Summary per fibre and pooled: mean, SD (n - 1), CV, min, max over stations and a 95 % interval
 * mean +- t(0.975, nEff - 1) SD / sqrt(nEff), nEff = n (1 - r1)/(1 + r1) with r1 the lag-1 correlation
 * of neighbouring stations; pooled over two or more fibres the fibres are the sampling unit
 * (t(0.975, k - 1) SD(fibre means) / sqrt k). Dropped stations are counted by reason, never silently lost.
 *
 * @throws InputError for a blank image, pure noise (no object with contrast >= `minContrastToNoise`
 * times the noise) or bad options.
 */
export function measureFibreDiameters(grey: Plane, options: DiameterOptions = {}): DiameterResult {
  const { width, height, data } = grey;
  if (width < 16 || height < 16) {
    throw new InputError(`image ${width}x${height} is too small to measure a fibre`, 'Use an image of at least 16x16 px');
  }
  const stepPx = checkLimit(DIAMETER_LIMITS.stepPx, options.stepPx);
  const averageLengthPx = checkLimit(DIAMETER_LIMITS.averageLengthPx, options.averageLengthPx);
  // Profiles sampled at 0.5 px or finer (docs/methods.md §12.2: step <= 0.5 px).
  const profileStepPx = checkNumber('profileStepPx', options.profileStepPx ?? DIAMETER_DEFAULTS.profileStepPx,
    0.05, 0.5, 'px');
  const shadingDegree = checkLimit(DIAMETER_LIMITS.shadingDegree, options.shadingDegree);
  const minContrastToNoise = checkNumber('minContrastToNoise',
    options.minContrastToNoise ?? DIAMETER_DEFAULTS.minContrastToNoise, 1, 1e6);
  const minElongation = checkNumber('minElongation', options.minElongation ?? DIAMETER_DEFAULTS.minElongation, 1, 1e6);
  const minAreaPx = checkNumber('minAreaPx', options.minAreaPx ?? Math.max(30, Math.round(1e-3 * width * height)),
    1, width * height, 'px');
  const polarity = options.polarity ?? DIAMETER_DEFAULTS.polarity;
  if (!['auto', 'dark', 'bright'].includes(polarity)) {
    throw new InputError(`polarity must be auto, dark or bright, got "${String(polarity)}"`);
  }
  const umPerPx = options.pixelSizeUmPerPx === undefined ? null
    : checkLimit(DIAMETER_LIMITS.pixelSizeUmPerPx, options.pixelSizeUmPerPx);
  const relU = options.pixelSizeUncertainty === undefined ? null
    : checkLimit(DIAMETER_LIMITS.pixelSizeUncertainty, options.pixelSizeUncertainty);
  const cal: Calibration = { umPerPx, relU };

  const seg = segmentFibres(data, width, height, {
    polarity, shadingDegree, minContrastToNoise, minElongation, minAreaPx, smoothSigmaPx: 1.5,
  });
  if (seg.fibres.length === 0) {
    throw new InputError(`no fibre found: ${seg.ignoredObjects} object(s) differ from the background but none is ` +
      `long and thin enough (elongation >= ${minElongation}, area >= ${minAreaPx} px)`,
    'Check that a fibre crosses the field, or lower minElongation');
  }
  // Order fibres by position across the field (top to bottom, then left to right) so output is stable.
  const objects = [...seg.fibres].sort((a, b) => a.centreY - b.centreY || a.centreX - b.centreX);
  const warnings: string[] = [];
  const fibres: FibreDiameter[] = objects.map((obj, index) => {
    const st = measureStations(seg.flattened, width, height, obj, seg.contrast,
      { stepPx, averageLengthPx, profileStepPx });
    const fit = settleBarStations(st.stations, st.dropped, st.pool);
    const stations: DiameterStation[] = fit.kept.map(({ bar: _bar, ...s }) => ({
      ...s, diameterUm: umPerPx === null ? null : s.diameterPx * umPerPx, fibre: index,
    }));
    const bound = { determined: fit.determined, upperBoundPx: fit.upperBoundPx };
    const summary = summarise([stations], st.dropped, cal, fit.sigmaTermPx, bound);
    if (!fit.determined) warnings.push(notDeterminedWarning(index, st.pool!, summary, umPerPx));
    else if (summary.n === 0) {
      const reasons = Object.entries(summary.droppedByReason).map(([r, c]) => `${c} ${r}`).join(', ');
      warnings.push(`fibre ${index}: all ${summary.dropped} stations were dropped (${reasons}); no diameter reported`);
    }
    const steady = steadyChangeWarning(index, summary, umPerPx);
    if (steady) warnings.push(steady);
    const kinds = new Set(stations.map((s) => s.profileFit));
    return {
      index, axisDeg: wrapAxialDeg(radToDeg(Math.atan2(-st.axisUy, st.axisUx))), startXPx: st.startX,
      startYPx: st.startY, lengthPx: st.lengthPx,
      profileFit: kinds.size === 2 ? 'mixed' : kinds.size === 1 ? [...kinds][0] : st.pool ? 'bar' : null,
      psfSigmaPx: st.pool?.sigmaPx ?? null, psfSigmaUPx: st.pool?.sigmaUPx ?? null,
      ...summary, stations, droppedStations: st.dropped,
    };
  });
  const allStations = fibres.flatMap((f) => f.stations);
  const undetermined = fibres.filter((f) => !f.determined);
  const anyDetermined = fibres.some((f) => f.determined);
  const pooled = summarise(fibres.map((f) => f.stations), fibres.flatMap((f) => f.droppedStations), cal,
    fibres.length === 1 ? fibreSigmaTerm(fibres[0]) : 0, {
      determined: anyDetermined,
      upperBoundPx: anyDetermined ? null : Math.max(...undetermined.map((f) => f.upperBoundPx ?? Infinity)),
    });
  if (umPerPx === null) warnings.push('no pixel size given: diameters are in px only (um fields are null)');
  else if (relU === null) {
    warnings.push('no pixel-size uncertainty given: the um intervals hold the measurement\'s own uncertainty only; ' +
      'give the calibration\'s relative uncertainty (k = 1) to include it');
  }
  if (pooled.n > 0 && pooled.n < 5) warnings.push(`only ${pooled.n} stations kept: the interval is wide`);
  return {
    ...pooled, stations: allStations, fibres, polarity: seg.polarity, contrast: seg.contrast, noiseSd: seg.noiseSd,
    shadingDegree: seg.shadingDegree, ignoredObjects: seg.ignoredObjects, pixelSizeUmPerPx: umPerPx,
    pixelSizeUncertainty: relU,
    options: { stepPx, averageLengthPx, profileStepPx, polarity, shadingDegree, minContrastToNoise, minElongation,
      minAreaPx },
    warnings,
  };
}

/**
 * A fibre whose diameter drifts steadily (a taper, or a slow change along a spun line) has neighbouring
 * stations almost perfectly correlated, so its interval rests on very few effective stations and is wide
 * even though each station is sharp. Said in words, so a wide interval is not read as poor edges.
 */
function steadyChangeWarning(index: number, s: DiameterSummary, umPerPx: number | null): string | null {
  if (s.n < 10 || s.nEffective === null || s.lag1Correlation === null || s.nEffective >= 0.1 * s.n) return null;
  const [lo, hi, unit] = umPerPx === null ? [s.minPx, s.maxPx, 'px'] : [s.minUm, s.maxUm, 'um'];
  return `fibre ${index}: the diameter changes steadily along it (from ${lo!.toFixed(2)} to ${hi!.toFixed(2)} ${unit}; ` +
    `lag-1 correlation of neighbouring stations ${s.lag1Correlation.toFixed(2)}), so its 95 % interval rests on ` +
    `${s.nEffective.toFixed(1)} effective stations and is wide; look at the diameter along the fibre rather than its mean`;
}

interface SettledBars {
  kept: MeasuredStation[];
  determined: boolean;
  upperBoundPx: number | null;
  /** |d(mean D)/d(sigma)| u(sigma): the pooled PSF sigma's share of the mean's standard uncertainty, px. */
  sigmaTermPx: number;
}

/**
 * Settles a fibre's bar stations after the PSF was pooled: a fibre narrower than
 * RESOLVABLE_WIDTH_PER_SIGMA sigmas is not determined (its stations are dropped as 'unresolved' and an
 * upper bound is given instead); bar stations whose pooled refit failed are dropped as 'edge-fit'.
 * Moves dropped stations into `dropped`.
 */
function settleBarStations(stations: MeasuredStation[], dropped: DroppedStation[], pool: BarPool | null): SettledBars {
  const drop = (s: MeasuredStation, reason: DropReason) =>
    dropped.push({ alongPx: s.alongPx, xPx: s.xPx, yPx: s.yPx, reason });
  const bars = stations.filter((s) => s.profileFit === 'bar');
  if (bars.length === 0) return { kept: stations, determined: true, upperBoundPx: null, sigmaTermPx: 0 };
  if (pool === null) {
    bars.forEach((s) => drop(s, 'edge-fit'));
    return { kept: stations.filter((s) => s.profileFit !== 'bar'), determined: true, upperBoundPx: null, sigmaTermPx: 0 };
  }
  if (!pool.resolved) {
    stations.forEach((s) => drop(s, 'unresolved'));
    dropped.sort((a, b) => a.alongPx - b.alongPx);
    return { kept: [], determined: false, upperBoundPx: unresolvedUpperBoundPx(pool), sigmaTermPx: 0 };
  }
  const sensitivity = bars.reduce((a, s) => a + (s.bar?.widthPerSigma ?? 0), 0) / stations.length;
  return { kept: stations, determined: true, upperBoundPx: null, sigmaTermPx: Math.abs(sensitivity) * pool.sigmaUPx };
}

/** The pooled sigma's share of a fibre's mean width uncertainty, recomputed from its summary for the pooled row. */
function fibreSigmaTerm(f: FibreDiameter): number {
  if (f.uPx === null || f.psfSigmaUPx === null || f.nEffective === null || f.sdPx === null) return 0;
  const stat = f.sdPx / Math.sqrt(f.nEffective);
  return Math.sqrt(Math.max(0, f.uPx * f.uPx - stat * stat));
}

/** Why a fibre's width is not determined, what it is at most, and what would determine it. */
function notDeterminedWarning(index: number, pool: BarPool, s: DiameterSummary, umPerPx: number | null): string {
  const bound = s.upperBoundPx;
  const boundText = bound === null || !Number.isFinite(bound) ? 'no useful upper bound either (too few stations)'
    : `it is at most ${bound.toFixed(2)} px${s.upperBoundUm === null ? '' : ` (${s.upperBoundUm.toFixed(2)} um)`} ` +
      '(an upper bound from the spread of its profile that holds with at least 95 % confidence whatever the blur)';
  return `fibre ${index}: width not determined: the fibre is narrower than about ${RESOLVABLE_WIDTH_PER_SIGMA} blur ` +
    `widths (PSF sigma ${pool.sigmaPx.toFixed(2)} px, so below about ${(RESOLVABLE_WIDTH_PER_SIGMA * pool.sigmaPx).toFixed(1)} px), ` +
    `where its width and its contrast trade off and only their product is measured; ${boundText}. ` +
    `A higher magnification (more pixels across the fibre${umPerPx === null ? '' : ', a smaller um/px'}) or a sharper focus would determine it`;
}

/** Plain-word meaning of each drop reason (for tables and help). */
export const DROP_REASON_TEXT: Record<DropReason, string> = DROP_REASONS;
