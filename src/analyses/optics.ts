/**
 * The optical readings as analyses (README, "Glossary"): the plate reading (one compensator image), the plate
 * pair (two compensator images, the optics turned by 45 deg between them) and the angle series (crossed
 * polarisers at several angles). Image(s) + plain options -> the orientation field and a JSON-ready result like
 * `orient`'s, plus the median retardance, confidence statistics, the reader's ambiguity and how the reading was
 * made (`reading`). `retarda plate`, `plate-pair`, `angle-series` and the app's worker call exactly these.
 */
import { InputError } from '../common/index.ts';
import { checkLimit, type Limit, type Rect } from '../common/index.ts';
import { toGrey, type Image } from '../image/index.ts';
import { foldEdgeShare, orientationField, FOLD_EDGE_DEG, FOLD_EDGE_MAX_SHARE, type OrientationField } from '../orientation/index.ts';
import { orderParameters, type Weighting } from '../order/index.ts';
import { loadTensorKernel } from '../wasm/index.ts';
import {
  readPlate, readPlatePair, fourAngleAnalysis, angleNoiseFactor, parseIlluminant, fullWavePlate, whiteReference, mirrorChoiceStats,
  compensatorAxisAdvice, resolveMirrorWithTexture, rankCounts, valuesOfCountedRanks, valuesOfRanks, valuesOfRanksOfCounted, type RankSelection, type ReadingCounts,
  type OpticalTrain, type PlateCalibration, type MatchSpace, type CameraCalibration, type PlateReading,
} from '../optics/index.ts';
import { ANGLE_NOISE_MAX_LOSS, ANGLE_NOISE_REMEDY, FOLD_EDGE_REMEDY } from '../channel/index.ts';
import { orientResult, type OrientResult } from './orient.ts';
import { analyseProfile, type ProfileRequest, type ProfileResult } from './profile.ts';

/** The optical train as the command line describes it (crossed polars, full-wave compensator). */
export interface TrainOptions {
  /** Full-wave compensator retardance, nm. Default 550; when not given it is fitted from `background`. */
  compensatorNm?: number;
  /** Compensator slow-axis angle, degrees CCW from +x. Default polariserDeg + 45. */
  compensatorDeg?: number;
  /** Polariser angle, degrees CCW from +x (analyser crossed at +90). Default 0. */
  polariserDeg?: number;
  /** Lamp: a colour temperature such as "3200K", or "D65", or "A". Default 3200 K blackbody. */
  illuminant?: string;
}

/** Options of the compensator-image readers (plate and plate pair). */
export interface PlateReadingOptions extends TrainOptions {
  /** Largest sample retardance searched, nm (default 800). */
  retardanceMaxNm?: number;
  /** Pixels read below this retardance are masked as sample-free (default 20 nm). */
  retardanceMinNm?: number;
  /** Sample-free area: fits compensator retardance, white balance and exposure. */
  sampleFree?: Rect;
  /** White reference: 8-bit codes (as stored) of a sample-free area with parallel polars. */
  whiteRgb?: [number, number, number];
  /** Birefringence of the structure: positive (length-slow, default) or negative (length-fast). */
  sign?: 'positive' | 'negative';
}

/** How the field is summarised: whole-field order parameters, and a channel profile when asked. */
export interface OpticsSummaryOptions {
  /** Reference axis for S_axis, degrees CCW from +x. */
  axisDeg?: number;
  weighting?: Weighting;
  blockPx?: number;
  /** A channel profile of the field (walls given or found); null or absent for none. */
  profile?: ProfileRequest | null;
}

/** A one-image reading constrained to a known sample retardance (a uniform film; thickness x birefringence). */
export interface KnownRetardanceOptions {
  /** Known sample retardance, nm: the lookup is restricted to this band, so each colour fixes the angle (up to the mirror). */
  sampleRetardanceNm?: number;
  /** Half-width of the band, nm (default 10 % of sampleRetardanceNm). */
  sampleRetardanceToleranceNm?: number;
}

export interface PlateOptions extends PlateReadingOptions, KnownRetardanceOptions, OpticsSummaryOptions {
  /** 'lab' (default) or 'chroma' (brightness-independent, for uneven illumination). */
  match?: MatchSpace;
  /** Resolve theta vs its mirror about the compensator axis with the texture direction of the same image. */
  resolveMirror?: boolean;
}

export interface PlatePairAnalysisOptions extends PlateReadingOptions, OpticsSummaryOptions {
  /** Turn of the polariser-compensator-analyser assembly for image B, degrees (default 45). */
  turnDeg?: number;
  /** Warn when the images are shifted against each other by more than this, px (default 1). */
  maxShiftPx?: number;
}

export interface AngleSeriesAnalysisOptions extends TrainOptions, OpticsSummaryOptions {
  /** Angles of the crossed pair for the images, degrees (default 0, 22.5, 45, 67.5). */
  anglesDeg?: number[];
  /** Compensator image that decides the 90-deg choice (read with the train options). */
  plate?: Image;
  /** Sample-free area of the compensator image. */
  plateSampleFree?: Rect;
  flatField?: Image;
  dark?: Image;
  /** Mask pixels below this fraction of the 99th-percentile amplitude (default 0.02). */
  amplitudeFloor?: number;
}

/** Distribution of a field's confidence over its usable pixels (quantiles by the floor rank). */
export interface ConfidenceStats {
  mean: number | null; median: number | null; p10: number | null; p90: number | null;
  fractionAbove05: number | null; n: number;
}

export interface OpticsResult extends Omit<OrientResult, 'analysis'> {
  analysis: string;
  retardanceNmMedian: number | null;
  confidence: ConfidenceStats;
  ambiguity: OrientationField['ambiguity'];
  /** How the reading was made: calibration, mirror assumption, registration, angles, medians of the fit. */
  reading: Record<string, unknown>;
  profile: ProfileResult | null;
}

export interface OpticsAnalysis { result: OpticsResult; field: OrientationField }

export const DEFAULT_ANGLES_DEG = [0, 22.5, 45, 67.5];

/**
 * Defaults and ranges of the optical readings' options (docs/methods.md §3-6), checked here before a reader runs and
 * read by the command line's help, the app's forms and the command lines it shows. The compensator's slow axis has
 * no fixed default: it is the polariser's angle + COMPENSATOR_OFFSET_DEG. The sample retardance's tolerance defaults
 * to 10 % of it and is at most the retardance itself.
 */
export const OPTICS_LIMITS = {
  compensatorNm: { what: 'compensator retardance', min: 1, max: 5000, default: 550, unit: 'nm' },
  compensatorDeg: { what: 'compensator slow axis', min: -360, max: 360, unit: 'deg' },
  polariserDeg: { what: 'polariser angle', min: -360, max: 360, default: 0, unit: 'deg' },
  retardanceMaxNm: { what: 'largest retardance searched', min: 10, max: 3000, default: 800, unit: 'nm' },
  retardanceMinNm: { what: 'smallest retardance read', min: 0, max: 500, default: 20, unit: 'nm' },
  sampleRetardanceNm: { what: 'sample retardance', min: 1, max: 5000, unit: 'nm' },
  sampleRetardanceToleranceNm: { what: 'sample retardance tolerance', min: 0, max: 5000, unit: 'nm' },
  turnDeg: { what: 'turn between the two images', min: -180, max: 180, default: 45, unit: 'deg' },
  maxShiftPx: { what: 'largest shift between the two images', min: 0, max: 1000, default: 1, unit: 'px' },
  amplitudeFloor: { what: 'amplitude floor (fraction of the 99th-percentile amplitude)', min: 0, max: 1, default: 0.02 },
} as const satisfies Record<string, Limit>;

/** The compensator's slow axis, by default, from the polariser, deg (the usual 45-deg position). */
export const COMPENSATOR_OFFSET_DEG = 45;
/** The lamp when none is named: a halogen lamp as a 3200 K blackbody. */
export const DEFAULT_ILLUMINANT = '3200K';

/** The optical readings by their `analysis` (and field method) names, and what the app and reports call them (README, "Glossary"). */
export const READING_NAMES = { plate: 'plate reading', 'plate-pair': 'plate pair', 'angle-series': 'angle series' } as const;
export type ReadingKind = keyof typeof READING_NAMES;

/**
 * Most pixels per image each optical reading takes, so that a whole command (its images as decoded, the reading's
 * per-pixel layers and the summary) stays within 1 GB (10^9 bytes) for any input file of 100 MB or less (issue 12).
 * From measured peaks of whole `retarda` runs on RGB PNGs (tests/bench/maxrss.mjs), about 33 MB per megapixel for the
 * plate reading, 46 for the plate pair (two images) and 70 for the angle series (four images), over 80-110 MB for the
 * program; a design choice from those measurements. The angle series holds each image as its linear intensity
 * (one plane): at 12 MP, tiled sample images peaked at 0.69 GiB, and 0.76 GiB with --flat and --field-out, so it
 * takes 12.5 MP (a 4032 x 3024 camera). With a compensator image (--plate) it also holds that image's colour
 * planes and their look-up: with --plate, --flat and --field-out the peak reached 0.98-1.02 GB at 12 MP (0.75 GB
 * at 8.5 MP), so then its limit is 8.5 MP (ANGLE_SERIES_WITH_PLATE_MAX_PIXELS). Larger images are refused before
 * the reading takes its memory.
 */
export const OPTICS_MAX_PIXELS: Record<ReadingKind, number> = { plate: 24e6, 'plate-pair': 16e6, 'angle-series': 12.5e6 };
/** The angle series' limit per image when a compensator image is read with it (OPTICS_MAX_PIXELS says why). */
export const ANGLE_SERIES_WITH_PLATE_MAX_PIXELS = 8.5e6;

/**
 * Refuses an image larger than the reading takes within its memory limit (OPTICS_MAX_PIXELS, or
 * ANGLE_SERIES_WITH_PLATE_MAX_PIXELS for an angle series read with a compensator image), naming both.
 */
export function checkReadingSize(kind: ReadingKind, img: Image, withPlate = false): void {
  const plateToo = kind === 'angle-series' && withPlate;
  const px = img.width * img.height, max = plateToo ? ANGLE_SERIES_WITH_PLATE_MAX_PIXELS : OPTICS_MAX_PIXELS[kind];
  if (px <= max) return;
  throw new InputError(
    `${img.source.name}: ${img.width} x ${img.height} pixels (${(px / 1e6).toFixed(1)} MP) is more than the ${READING_NAMES[kind]}${plateToo ? ' with a compensator image' : ''} reads within this program's 1 GB memory limit (${(max / 1e6).toFixed(1)} MP per image)`,
    'Crop the region of interest or bin the image (e.g. 2x2) and read it again');
}

/** The train: polariser (default 0), crossed analyser, full-wave compensator (550 nm at polariser + 45 deg), lamp (3200 K). */
export function trainOf(o: TrainOptions): Partial<OpticalTrain> {
  const pol = checkLimit(OPTICS_LIMITS.polariserDeg, o.polariserDeg);
  return {
    polariserDeg: pol, analyserDeg: pol + 90,
    compensator: fullWavePlate(checkLimit(OPTICS_LIMITS.compensatorNm, o.compensatorNm), checkLimit(OPTICS_LIMITS.compensatorDeg, o.compensatorDeg ?? pol + COMPENSATOR_OFFSET_DEG)),
    illuminant: parseIlluminant(o.illuminant ?? DEFAULT_ILLUMINANT),
  };
}

/** The retardance range searched, with its defaults, checked. */
function retardanceRange(o: PlateReadingOptions) {
  return { retardanceMaxNm: checkLimit(OPTICS_LIMITS.retardanceMaxNm, o.retardanceMaxNm), retardanceMinNm: checkLimit(OPTICS_LIMITS.retardanceMinNm, o.retardanceMinNm) };
}

/** The known sample retardance and its tolerance, checked (both undefined when none is known). */
function knownRetardance(o: KnownRetardanceOptions) {
  if (o.sampleRetardanceNm === undefined) {
    if (o.sampleRetardanceToleranceNm !== undefined) throw new InputError('a sample retardance tolerance was given without the sample retardance', 'Give the sample retardance as well (--sample-retardance-nm)');
    return { sampleRetardanceNm: undefined, sampleRetardanceToleranceNm: undefined };
  }
  return {
    sampleRetardanceNm: checkLimit(OPTICS_LIMITS.sampleRetardanceNm, o.sampleRetardanceNm),
    sampleRetardanceToleranceNm: o.sampleRetardanceToleranceNm === undefined ? undefined : checkLimit(OPTICS_LIMITS.sampleRetardanceToleranceNm, o.sampleRetardanceToleranceNm),
  };
}

function signOf(s: string | undefined): 1 | -1 {
  const v = s ?? 'positive';
  if (v !== 'positive' && v !== 'negative') throw new InputError(`the birefringence sign must be positive or negative, got "${v}"`);
  return v === 'positive' ? 1 : -1;
}

/** Camera white balance from an 8-bit white reference, or undefined. */
function cameraOf(white: [number, number, number] | undefined): CameraCalibration | undefined {
  if (!white) return undefined;
  if (white.length !== 3 || white.some((x) => !Number.isFinite(x) || x < 0 || x > 255)) {
    throw new InputError(`the white reference needs three 8-bit codes "R,G,B", got "${white.join(',')}"`);
  }
  return whiteReference([white[0] / 255, white[1] / 255, white[2] / 255], 'srgb');
}

/** Calibration fits the compensator only when its retardance was not given. */
const calibrationOf = (o: TrainOptions) => ({ fitCompensator: o.compensatorNm === undefined });

/**
 * Distribution of a field's confidence over its usable pixels. With `counts` (the field's usable pixels by their
 * readings, as the plate reading and the plate pair count them) from those, without a pass over the pixels: the same numbers.
 */
export function confidenceStats(f: OrientationField, readingCounts?: ReadingCounts): ConfidenceStats {
  if (readingCounts) return countedConfidenceStats(readingCounts);
  // Ranks by radix selection on the values in place (src/optics/ranks.ts), not a sort or a copy: the same values. Its
  // first pass also counts the usable pixels, sums their confidence (float64, in pixel order) and counts those at 0.5 or more.
  const sums = { sum: 0, atLeast: 0.5, countAtLeast: 0 };
  const counts = rankCounts(f.confidence, { mask: f.mask }, sums), n = counts.count;
  if (n === 0) return { mean: null, median: null, p10: null, p90: null, fractionAbove05: null, n: 0 };
  const rank = (p: number) => Math.min(n - 1, Math.floor(p * (n - 1)));
  const [median, p10, p90] = valuesOfCountedRanks(counts, [rank(0.5), rank(0.1), rank(0.9)]);
  return { mean: sums.sum / n, median, p10, p90, fractionAbove05: sums.countAtLeast / n, n };
}

/** confidenceStats from the usable pixels' readings and their counts. */
function countedConfidenceStats(c: ReadingCounts): ConfidenceStats {
  let n = 0, atLeast = 0;
  for (let j = 0; j < c.pixels.length; j++) { n += c.pixels[j]; if (c.confidence[j] >= 0.5) atLeast += c.pixels[j]; }
  if (n === 0) return { mean: null, median: null, p10: null, p90: null, fractionAbove05: null, n: 0 };
  const rank = (p: number) => Math.min(n - 1, Math.floor(p * (n - 1)));
  const [median, p10, p90] = valuesOfRanksOfCounted(c.confidence, c.pixels, [rank(0.5), rank(0.1), rank(0.9)]);
  return { mean: c.confidenceSum / n, median, p10, p90, fractionAbove05: atLeast / n, n };
}

/** The middle value (rank n/2 of n, as the readings have always given it) of the selected pixels' values; null for none. */
function middleValue(values: Float32Array, sel: RankSelection): number | null {
  return valuesOfRanks(values, sel, (n) => (n ? [n >> 1] : []))[0] ?? null;
}

/** Median retardance over usable pixels with confidence >= 0.5 (all usable pixels when none is), nm; with `counts` as confidenceStats. */
export function retardanceMedian(f: OrientationField, counts?: ReadingCounts): number | null {
  if (!f.retardanceNm) return null;
  if (counts) {
    const middle = (picked: (j: number) => boolean) => {
      let n = 0;
      for (let j = 0; j < counts.pixels.length; j++) if (picked(j)) n += counts.pixels[j];
      return n ? valuesOfRanksOfCounted(counts.retardanceNm, counts.pixels, [n >> 1], picked)[0] : null;
    };
    return middle((j) => counts.confidence[j] >= 0.5) ?? middle(() => true);
  }
  return middleValue(f.retardanceNm, { mask: f.mask, minOf: f.confidence, min: 0.5 }) ?? middleValue(f.retardanceNm, { mask: f.mask });
}

/**
 * The JSON of an optical reading: like orient (order parameters of the field), plus retardance and confidence. `counts`:
 * the field's usable pixels by their readings, as the reader counted them (the field's mask, confidence and retardance
 * as it left them), from which the confidence and retardance statistics are made.
 */
export async function opticsResult(analysis: string, img: Image, field: OrientationField, o: OpticsSummaryOptions, reading: Record<string, unknown>,
  counts?: ReadingCounts): Promise<OpticsResult> {
  // The block sums run in the tensor kernel once it is loaded (the app's worker loads it at start): load it
  // here too, so the command line sums as the app does, and faster.
  await loadTensorKernel();
  const s = orderParameters(field, { weighting: o.weighting, axisDeg: o.axisDeg, blockPx: o.blockPx });
  const base = orientResult(img, field, s, {});
  const profile = o.profile ? await analyseProfile(img, field, o.profile, field.options) : null;
  const confidence = confidenceStats(field, counts);
  // Say it plainly when the colours do not pin the readings down, rather than let the averages look sure.
  // With the sample retardance given, each colour fixes the angle and the confidence measures something else.
  const constrained = field.options.sampleRetardanceNm !== undefined && field.options.sampleRetardanceNm !== null;
  const unsure = !constrained && confidence.fractionAbove05 !== null && confidence.fractionAbove05 < 0.2
    ? [`only ${(100 * confidence.fractionAbove05).toFixed(1)} % of pixels are read with confidence 0.5 or more: the colours fit several (angle, retardance) pairs, so these orientation numbers are not reliable. ${
      field.method === 'plate' ? 'Take a second image with the optics turned by 45 deg (plate-pair)' : 'Check the calibration (--sample-free) and the optical train'}`]
    : [];
  return {
    ...base, analysis, retardanceNmMedian: retardanceMedian(field, counts), confidence, ambiguity: field.ambiguity, reading, profile,
    warnings: [...base.warnings, ...unsure, ...(profile?.warnings ?? [])],
  };
}

/** Calibration facts of a plate reading, as the JSON shows them. */
export function calibrationJson(c: PlateCalibration | null) {
  return c && {
    compensatorNm: c.compensatorNm, gains: c.camera.gains, exposure: c.camera.exposure, whiteBalanceTilt: c.whiteBalanceTilt,
    residualDeltaE00: c.residualDeltaE00, fitted: c.fitted,
  };
}

/**
 * One compensator image read into a field (what `plate` and `profile --source plate` use). The mirror
 * choice reports, of theta and its mirror about the compensator axis, the one nearer `axisDeg`
 * (default: compensator axis - 45 deg). With `sampleRetardanceNm` the lookup holds only that retardance band.
 */
export function readPlateField(img: Image, o: PlateReadingOptions & KnownRetardanceOptions & { match?: MatchSpace; axisDeg?: number; countReadings?: boolean }): PlateReading {
  const match = o.match ?? 'lab';
  if (match !== 'lab' && match !== 'chroma') throw new InputError(`the colour match must be lab or chroma, got "${match}"`);
  checkReadingSize('plate', img);
  return readPlate(img, {
    train: trainOf(o), ...retardanceRange(o), match, birefringenceSign: signOf(o.sign),
    background: o.sampleFree, calibration: calibrationOf(o), referenceAxisDeg: o.axisDeg, camera: cameraOf(o.whiteRgb),
    ...knownRetardance(o), countReadings: o.countReadings,
  });
}

/**
 * Orientation (up to the mirror about the compensator axis) and retardance from one full-wave-plate image.
 * With `axisDeg` away from the compensator axis, the advice to align the channel with the slow axis is
 * added to the warnings and `reading.mirrorChoiceMatteredFraction` says for how many pixels the choice mattered.
 */
export async function analysePlate(img: Image, o: PlateOptions = {}): Promise<OpticsAnalysis> {
  // Each reading's usable pixels counted: the summary's confidence and retardance statistics come from them.
  const reading = readPlateField(img, { ...o, countReadings: true });
  let field = reading.field;
  let resolvedFraction: number | null = null;
  if (o.resolveMirror) {
    const texture = await orientationField(toGrey(img));
    const r = resolveMirrorWithTexture(field, texture);
    field = r.field;
    resolvedFraction = r.resolvedFraction;
  }
  const compDeg = trainOf(o).compensator!.axisDeg;
  const advice = compensatorAxisAdvice(o.axisDeg ?? compDeg, compDeg);
  const mirror = o.axisDeg !== undefined ? mirrorChoiceStats(field, o.axisDeg) : null;
  if (o.axisDeg !== undefined && !advice.mirrorFree && field.ambiguity !== 'none') field.warnings.push(advice.text);
  const result = await opticsResult('plate', img, field, o, {
    calibration: calibrationJson(reading.calibration), mirrorAssumption: field.options.mirrorAssumption,
    mirrorChoiceMatteredFraction: mirror?.mattersFraction ?? null, mirrorResolvedFraction: resolvedFraction, advice: advice.text,
    colourCellsSearched: reading.cellsMatched,
  }, reading.counts ?? undefined);
  // The axis the numbers refer to: the one given, or the channel's. (The measured director is no guide: it is
  // itself folded by the mirror choice.)
  const axis = o.axisDeg ?? result.profile?.axisDeg ?? null;
  const gaps = oneImageGaps(o, compDeg, field, axis, result.profile !== null);
  return { result: gaps.length ? withholdOrder(result, gaps) : result, field };
}

/**
 * The channel profile of a one-image field already read (`profile --source plate`, the app's profile on a
 * compensator image): analyseProfile, with the order numbers withheld when one image does not determine them.
 */
export async function analysePlateProfile(img: Image, field: OrientationField, o: PlateReadingOptions & KnownRetardanceOptions, request: ProfileRequest): Promise<ProfileResult> {
  const p = await analyseProfile(img, field, request, field.options);
  const gaps = oneImageGaps(o, trainOf(o).compensator!.axisDeg, field, request.axisDeg ?? p.axisDeg, true);
  return gaps.length ? withholdProfile(p, gaps.join('; ')) : p;
}

/**
 * Sample retardance below which one compensator image is not even tried for S: the colour barely changes with
 * the angle there (on the independent validation renderings the reading missed S by 0.12-0.18 per bin at
 * 40-60 nm).
 */
export const ONE_IMAGE_MIN_RETARDANCE_NM = 100;

/**
 * Why one image's order numbers are withheld even with everything it needs: measured on the independent
 * validation renderings (tests/validation/render/, a channel along the compensator, the sample retardance and
 * a sample-free area given), the per-pixel reading missed the rendered S by 0.11-0.6 per bin at 80-200 nm and
 * 300-500 nm sample retardance and met 0.03 only near 250 nm: where the colour changes least with the angle
 * (rods near the compensator axis, the usual case in a channel laid along it) the angle is least determined.
 * The two-image reading met 0.03 on the same renderings.
 */
export const ONE_IMAGE_MEASURED = 'one image read S 0.11-0.6 off per bin on independent test renderings with everything it needs given (sample retardance 80-500 nm, within 0.03 only near 250 nm), so it gives no S: take the second image with polariser, compensator and analyser turned together by 45 deg (plate-pair)';

/**
 * Largest angle between the reference axis and the compensator axis (or its normal) for a one-image S, deg.
 * On the independent validation renderings a channel 10 deg off the compensator read S 0.2 off through the
 * mirror choice, so only an axis laid along (or across) the slow axis, as closely as the stage allows, counts.
 */
export const ONE_IMAGE_AXIS_TOLERANCE_DEG = 2;

/**
 * What a one-image reading lacks for its order numbers to be determined, each as "what is missing: what
 * would determine it". One colour fits many (angle, retardance) pairs unless the sample retardance is
 * known and the lamp, camera and compensator are calibrated on a sample-free area; and it cannot tell a rod
 * from its mirror image about the compensator axis unless the axis of interest lies along or across it
 * (docs/methods.md, "One compensator image").
 */
export function oneImageGaps(o: PlateReadingOptions & KnownRetardanceOptions, compensatorDeg: number, field: OrientationField, axis: number | null, channel: boolean): string[] {
  const gaps: string[] = [];
  if (o.sampleFree === undefined && !(o.compensatorNm !== undefined && o.whiteRgb !== undefined)) {
    gaps.push('no sample-free area: the compensator, exposure and white balance are not calibrated; draw the sample-free area on the image (--sample-free x,y,w,h)');
  }
  if (o.sampleRetardanceNm === undefined) {
    gaps.push('the sample retardance is not known, so each colour fits many (angle, retardance) pairs; enter the sample retardance (--sample-retardance-nm, thickness x birefringence) or add the second image turned by 45 deg (plate-pair)');
  } else if (o.sampleRetardanceNm < ONE_IMAGE_MIN_RETARDANCE_NM) {
    gaps.push(`the sample retardance (${o.sampleRetardanceNm} nm) is below ${ONE_IMAGE_MIN_RETARDANCE_NM} nm, where one image's colours change too little with the angle to read S within 0.03; add the second image turned by 45 deg (plate-pair)`);
  }
  if (field.ambiguity === 'mirror-about-compensator') {
    const p = channel;
    if (axis !== null) {
      const advice = compensatorAxisAdvice(axis, compensatorDeg, ONE_IMAGE_AXIS_TOLERANCE_DEG);
      if (advice.offsetDeg > ONE_IMAGE_AXIS_TOLERANCE_DEG) {
        gaps.push(`the ${p ? 'channel ' : ''}axis (${axis.toFixed(0)} deg) is ${advice.offsetDeg.toFixed(0)} deg from the compensator's slow axis, and one image cannot tell a rod from its mirror image about that axis; turn the sample so the ${p ? 'channel' : 'structure'} lies along (or across) the slow axis, or add the second image turned by 45 deg (plate-pair)`);
      }
    }
  }
  // With nothing missing, the reading itself is still not good enough for S (measured: ONE_IMAGE_MEASURED).
  if (gaps.length === 0) gaps.push(ONE_IMAGE_MEASURED);
  return gaps;
}

/** A profile with every order number withheld (null in JSON) and the reason under notDetermined.order. */
export function withholdProfile(p: ProfileResult, why: string): ProfileResult {
  const stat = <T extends { order: number; ciLow: number; ciHigh: number }>(x: T): T => ({ ...x, order: NaN, ciLow: NaN, ciHigh: NaN });
  const ratio = { coreSkinRatio: NaN, coreSkinRatioCiLow: NaN, coreSkinRatioCiHigh: NaN };
  return {
    ...p, core: stat(p.core), skin: stat(p.skin), ...ratio,
    bins: p.bins.map((b) => ({ ...stat(b), order2D: NaN, directorDeg: NaN })),
    stations: p.stations.map((st) => ({
      ...st, core: stat(st.core), skin: stat(st.skin), ...ratio,
      bins: st.bins.map((b) => ({ ...stat(b), order2D: NaN, directorDeg: NaN })),
    })),
    notDetermined: { ...p.notDetermined, order: why },
  };
}

/** The result with every order number withheld (null in JSON) and the reasons under notDetermined. */
export function withholdOrder(r: OpticsResult, gaps: string[]): OpticsResult {
  const why = gaps.join('; ');
  const profile = r.profile && withholdProfile(r.profile, why);
  const axis = r.axisOrder === null ? null : NaN;
  return {
    ...r, directorDeg: NaN, order2D: NaN, order2DCiLow: NaN, order2DCiHigh: NaN, order2DSe: NaN, axisOrder: axis, axisOrderCiLow: axis, axisOrderCiHigh: axis, axisOrderSe: axis,
    profile, notDetermined: { ...r.notDetermined, order: why },
  };
}

/** Full orientation (0-180 deg) and retardance from two compensator images, B with the optics turned by turnDeg. */
export async function analysePlatePair(imgA: Image, imgB: Image, o: PlatePairAnalysisOptions = {}): Promise<OpticsAnalysis> {
  checkReadingSize('plate-pair', imgA);
  checkReadingSize('plate-pair', imgB);
  const r = readPlatePair(imgA, imgB, {
    train: trainOf(o), turnDeg: checkLimit(OPTICS_LIMITS.turnDeg, o.turnDeg), ...retardanceRange(o), birefringenceSign: signOf(o.sign),
    background: o.sampleFree, calibration: calibrationOf(o), maxShiftPx: checkLimit(OPTICS_LIMITS.maxShiftPx, o.maxShiftPx), camera: cameraOf(o.whiteRgb),
  });
  const result = await opticsResult('plate-pair', imgA, r.field, o, {
    imageB: imgB.source.name, calibrationA: calibrationJson(r.calibrationA), calibrationB: calibrationJson(r.calibrationB),
    registration: r.registration,
  }, r.counts);
  return { result, field: r.field };
}

/**
 * Angle series, crossed polarisers at several angles: orientation mod 90 deg, amplitude (relative, not nm) and fit
 * residual per pixel; a compensator image (`plate`) decides the 90-deg choice. Medians of amplitude and residual over
 * the usable pixels go to `reading`.
 */
export async function analyseAngleSeries(images: Image[], o: AngleSeriesAnalysisOptions = {}): Promise<OpticsAnalysis & { amplitude: Float32Array; residual: Float32Array }> {
  const anglesDeg = o.anglesDeg ?? DEFAULT_ANGLES_DEG;
  if (images.length !== anglesDeg.length) {
    throw new InputError(`${images.length} images for ${anglesDeg.length} angles`, 'Give one image per polariser angle (--angles for other sets)');
  }
  for (const img of [...images, ...(o.plate ? [o.plate] : [])]) checkReadingSize('angle-series', img, !!o.plate);
  const r = fourAngleAnalysis(images, {
    anglesDeg, flatField: o.flatField, dark: o.dark, amplitudeFloor: checkLimit(OPTICS_LIMITS.amplitudeFloor, o.amplitudeFloor),
    plate: o.plate, plateOptions: { train: trainOf(o), background: o.plateSampleFree }, keepBackground: false,
  });
  const usable = { mask: r.field.mask };
  const result = await opticsResult('angle-series', images[0], r.field, o, {
    anglesDeg, amplitudeMedian: r.amplitudeMedian, residualMedian: middleValue(r.residual, usable), plateResolvedFraction: o.plate ? r.resolvedFraction : null,
  });
  // Without a compensator image no order number is given (NO_PLATE_GAP), the profile's included. With one, the whole
  // image's numbers by the fold's share and the angle noise over the whole field; a profile's bins and bands were
  // judged each on their own pixels (channelProfile), so they stay as they are.
  if (!o.plate) return { result: withholdOrder(result, [NO_PLATE_GAP]), field: r.field, amplitude: r.amplitude, residual: r.residual };
  // Without its sample-free area the compensator image's 90-deg choice is made on colours nothing calibrated
  // (PLATE_SAMPLE_FREE_GAP): every order number is withheld, the profile's included; the maps stay.
  if (!o.plateSampleFree) {
    const gaps = [PLATE_SAMPLE_FREE_GAP, angleNoiseGap(r.field)].filter((g): g is string => g !== null);
    return { result: withholdOrder(result, gaps), field: r.field, amplitude: r.amplitude, residual: r.residual };
  }
  const gaps = [foldGap(r.field), angleNoiseGap(r.field)].filter((g): g is string => g !== null);
  return { result: gaps.length ? { ...withholdOrder(result, gaps), profile: result.profile } : result, field: r.field, amplitude: r.amplitude, residual: r.residual };
}

/**
 * Why an angle series without a compensator image gives no order number (docs/methods.md §6.3): crossed polarisers
 * fix a slow axis only up to 90 deg, so S rests on taking every rod within 45 deg of an axis, and whether rods lie
 * beyond it cannot be seen in these images. A rule on the images' own spread near the fold's boundary gave S only
 * where a field of view happened to be more ordered than its material: on independent validation renderings those
 * numbers' 95 % intervals covered the material's order in 54-84 % of renderings.
 */
export const NO_PLATE_GAP = 'crossed polarisers alone do not tell a slow axis from the one at 90 deg to it, and whether rods lie beyond 45 deg from the axis cannot be seen in these images, so S would rest on that assumption (on independent test renderings the numbers such a reading gave covered the material\'s order in 54-84 % of cases, not 95 %). Add an image with the compensator in (--plate, with its sample-free area --plate-sample-free) to decide the 90-deg choice, or read the sample with two compensator images (plate-pair)';

/**
 * Why an angle series' order numbers are withheld when its compensator image has no sample-free area
 * (docs/methods.md §6.3): the 90-deg choice compares the compensator image's colours with the model's, and only a
 * sample-free area calibrates the camera's exposure and white balance and the compensator's retardance for that
 * (§3.4). Taken as they are (exposure 1, neutral gains, 550 nm), the choice went wrong for pixels a few degrees from
 * the polars: on the independent validation renderings at exposures 0.6-0.8 (tests/validation/angles.ts) bins read
 * 0.055-0.15 off; on the demo (exposure 0.8) the core read 0.574 and its 95 % interval (0.556-0.591) missed the
 * rendered 0.621-0.625. The same missing calibration withholds one compensator image's numbers (oneImageGaps).
 */
export const PLATE_SAMPLE_FREE_GAP = 'the compensator image has no sample-free area, so its exposure, white balance and compensator retardance are not calibrated, and the 90-deg choice it makes rests on them (on independent test renderings at exposures 0.6-0.8 bins read up to 0.15 off); draw the compensator image\'s sample-free area on the image (--plate-sample-free x,y,w,h), or read the sample with two compensator images (plate-pair)';

/**
 * Why an angle series' whole-image order numbers are withheld for angle noise, or null: the mean over the usable
 * pixels of angleNoiseFactor (src/optics/fourAngle.ts) takes more than ANGLE_NOISE_MAX_LOSS of S (as for a profile's
 * bins, src/channel/profile.ts).
 */
function angleNoiseGap(field: OrientationField): string | null {
  const gain = (field.options as { angleNoiseGain?: number | null }).angleNoiseGain;
  if (typeof gain !== 'number') return null;
  let n = 0;
  const sum = new Float64Array(1);
  for (let i = 0; i < field.mask.length; i++) if (field.mask[i]) { n++; sum[0] += angleNoiseFactor(field.confidence[i], gain); }
  const loss = n ? 1 - sum[0] / n : 0;
  if (!(loss > ANGLE_NOISE_MAX_LOSS)) return null;
  return `the angle noise (the images' noise against the amplitude of their modulation) reads S ${(100 * loss).toFixed(1)} % low (at most ${100 * ANGLE_NOISE_MAX_LOSS} % allowed): ${ANGLE_NOISE_REMEDY}`;
}

/**
 * Why an angle series' order numbers are withheld with a compensator image, or null: crossed polarisers fix a slow axis
 * only up to 90 deg, and the pixels the compensator image left undecided were folded to within 45 deg of one axis;
 * with more than FOLD_EDGE_MAX_SHARE of the usable pixels, still undecided, near 45 deg from that axis, some lie
 * beyond it and read too high (foldEdgeShare).
 */
function foldGap(field: OrientationField): string | null {
  const share = foldEdgeShare(field);
  if (!(share > FOLD_EDGE_MAX_SHARE)) return null;
  const axis = Number((field.options as { mod90FoldedAboutDeg?: number }).mod90FoldedAboutDeg).toFixed(1);
  return `${(100 * share).toFixed(1)} % of the pixels the compensator image leaves undecided lie within ${FOLD_EDGE_DEG} deg of 45 deg from the axis their 90-deg choice was made about (${axis} deg); crossed polarisers cannot tell such a slow axis from the one at 90 deg to it, so some are read on the wrong side and S would read high by more than 0.03 (at most ${100 * FOLD_EDGE_MAX_SHARE} % allowed). To decide them, ${FOLD_EDGE_REMEDY}`;
}

