/**
 * Fibre diameter from an image: find the fibre(s), measure the width across each at stations along
 * its axis with sub-pixel edges, and summarise (domain.md §7).
 */
import { checkNumber, InputError } from '../common/errors.ts';
import { radToDeg, wrapAxialDeg } from '../common/angles.ts';
import type { Plane } from '../common/plane.ts';
import { segmentFibres } from './detect.ts';
import { DROP_REASONS, measureStations } from './stations.ts';
import type { DropReason, DroppedStation, MeasuredStation } from './stations.ts';
import { stationStats } from './stats.ts';
import type { StationStats } from './stats.ts';

export interface DiameterOptions {
  /** Distance between stations along the axis, px. Default 10. */
  stepPx?: number;
  /** Length along the axis each profile is averaged over, px (1 = a single line). Default 5. */
  averageLengthPx?: number;
  /** Sample spacing along each profile, px. Default 0.5 (domain.md §7: at most 0.5). */
  profileStepPx?: number;
  /** Pixel size in the object, um/px; without it the um fields are null. */
  pixelSizeUmPerPx?: number;
  /** Fibre darker or brighter than the background; 'auto' decides from the image. Default 'auto'. */
  polarity?: 'auto' | 'dark' | 'bright';
  /** Degree of the polynomial illumination surface subtracted before measuring. Default 2. */
  backgroundDegree?: number;
  /** Smallest fibre contrast / background noise (after 1.5 px smoothing) accepted. Default 8. */
  minContrastToNoise?: number;
  /** Smallest sqrt(lambda1/lambda2) of an object's second moments for it to count as a fibre. Default 2. */
  minElongation?: number;
  /** Smallest object area, px. Default max(30, 0.1 % of the image). */
  minAreaPx?: number;
}

export interface DiameterStation extends MeasuredStation {
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
  meanUm: number | null;
  sdUm: number | null;
  minUm: number | null;
  maxUm: number | null;
  ciLowUm: number | null;
  ciHighUm: number | null;
  /** Lag-1 correlation of neighbouring stations and the effective n the 95 % interval uses. */
  lag1Correlation: number | null;
  nEffective: number | null;
  dropped: number;
  droppedByReason: Partial<Record<DropReason, number>>;
}

export interface FibreDiameter extends DiameterSummary {
  index: number;
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
  backgroundDegree: number;
  /** Objects found but too small or too round to be a fibre. */
  ignoredObjects: number;
  pixelSizeUmPerPx: number | null;
  options: Required<Omit<DiameterOptions, 'pixelSizeUmPerPx' | 'minAreaPx'>> & { minAreaPx: number };
  warnings: string[];
}

export const DIAMETER_DEFAULTS = {
  stepPx: 10, averageLengthPx: 5, profileStepPx: 0.5, polarity: 'auto', backgroundDegree: 2,
  minContrastToNoise: 8, minElongation: 2,
} as const;

function summarise(runs: DiameterStation[][], dropped: DroppedStation[], umPerPx: number | null): DiameterSummary {
  const s: StationStats = stationStats(runs.map((r) => r.map((st) => st.diameterPx)), 'run');
  const um = (v: number | null) => (v === null || umPerPx === null ? null : v * umPerPx);
  const byReason: Partial<Record<DropReason, number>> = {};
  for (const d of dropped) byReason[d.reason] = (byReason[d.reason] ?? 0) + 1;
  return {
    n: s.n, meanPx: s.mean, sdPx: s.sd, cv: s.cv, minPx: s.min, maxPx: s.max, ciLowPx: s.ciLow, ciHighPx: s.ciHigh,
    meanUm: um(s.mean), sdUm: um(s.sd), minUm: um(s.min), maxUm: um(s.max), ciLowUm: um(s.ciLow),
    ciHighUm: um(s.ciHigh), lag1Correlation: s.lag1Correlation, nEffective: s.nEffective,
    dropped: dropped.length, droppedByReason: byReason,
  };
}

/**
 * Measures every fibre in a grey plane.
 *
 * Steps: light Gaussian smoothing (sigma 1.5 px) for detection only; fibre/background split by Otsu
 * and then at 0.3 of the fibre contrast; polarity = the class not owning the image border; illumination
 * flattened by a least-squares polynomial (degree `backgroundDegree`) fitted to the background;
 * connected elongated objects are fibres. Along each, stations every `stepPx`: a profile along the
 * local normal (bilinear, `profileStepPx` spacing, averaged over `averageLengthPx`), edges from the
 * gradient peak + 3-point parabola refined by an erf edge-spread fit I = lo + (hi - lo) Phi((x - x0)/sigma)
 * (domain.md §7), width = x0(right) - x0(left). Stations are re-centred on a fitted centre line so the
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
  const stepPx = checkNumber('stepPx', options.stepPx ?? DIAMETER_DEFAULTS.stepPx, 1, 1e5, 'px');
  const averageLengthPx = checkNumber('averageLengthPx', options.averageLengthPx ?? DIAMETER_DEFAULTS.averageLengthPx,
    1, 1e4, 'px');
  // Profiles sampled at 0.5 px or finer (domain.md §7: step <= 0.5 px).
  const profileStepPx = checkNumber('profileStepPx', options.profileStepPx ?? DIAMETER_DEFAULTS.profileStepPx,
    0.05, 0.5, 'px');
  const backgroundDegree = checkNumber('backgroundDegree', options.backgroundDegree ?? DIAMETER_DEFAULTS.backgroundDegree,
    0, 4);
  if (!Number.isInteger(backgroundDegree)) throw new InputError('backgroundDegree must be a whole number from 0 to 4');
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
    : checkNumber('pixelSizeUmPerPx', options.pixelSizeUmPerPx, 1e-6, 1e6, 'um/px');

  const seg = segmentFibres(data, width, height, {
    polarity, backgroundDegree, minContrastToNoise, minElongation, minAreaPx, smoothSigmaPx: 1.5,
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
    const stations: DiameterStation[] = st.stations.map((s) => ({
      ...s, diameterUm: umPerPx === null ? null : s.diameterPx * umPerPx, fibre: index,
    }));
    const summary = summarise([stations], st.dropped, umPerPx);
    if (summary.n === 0) {
      const reasons = Object.entries(summary.droppedByReason).map(([r, c]) => `${c} ${r}`).join(', ');
      warnings.push(`fibre ${index}: all ${summary.dropped} stations were dropped (${reasons}); no diameter reported`);
    }
    const steady = steadyChangeWarning(index, summary, umPerPx);
    if (steady) warnings.push(steady);
    return {
      index, axisDeg: wrapAxialDeg(radToDeg(Math.atan2(-st.axisUy, st.axisUx))), startXPx: st.startX,
      startYPx: st.startY, lengthPx: st.lengthPx, ...summary, stations, droppedStations: st.dropped,
    };
  });
  const allStations = fibres.flatMap((f) => f.stations);
  const pooled = summarise(fibres.map((f) => f.stations), fibres.flatMap((f) => f.droppedStations), umPerPx);
  if (umPerPx === null) warnings.push('no pixel size given: diameters are in px only (um fields are null)');
  if (pooled.n > 0 && pooled.n < 5) warnings.push(`only ${pooled.n} stations kept: the interval is wide`);
  return {
    ...pooled, stations: allStations, fibres, polarity: seg.polarity, contrast: seg.contrast, noiseSd: seg.noiseSd,
    backgroundDegree: seg.backgroundDegree, ignoredObjects: seg.ignoredObjects, pixelSizeUmPerPx: umPerPx,
    options: { stepPx, averageLengthPx, profileStepPx, polarity, backgroundDegree, minContrastToNoise, minElongation,
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

/** Plain-word meaning of each drop reason (for tables and help). */
export const DROP_REASON_TEXT: Record<DropReason, string> = DROP_REASONS;
