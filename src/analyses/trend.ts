/**
 * A reading against a process variable (docs/methods.md §19): each image's reading (whole-image S, core S, skin S,
 * core/skin or the fibre diameter, from the same result documents `orient`, `profile` and `diameter` make) at the
 * variable's value for that image, and the weighted straight line through them (src/trend). Pure: the command line
 * makes the documents from image files, the app takes the ones kept with the session; both end here.
 */
import { InputError, type Limit } from '../common/index.ts';
import { ANALYSIS_MAX_PIXELS } from '../image/index.ts';
import { fitLine, pointSe, type LineFit } from '../trend/index.ts';
import type { DiameterDocument } from './diameter.ts';
import type { OrientResult } from './orient.ts';
import type { ProfileResult } from './profile.ts';
import { SCHEMA_VERSION, type ResultHead } from './schema.ts';

/** The readings a trend can follow, by their command-line names. */
export const TREND_READINGS = ['whole', 'core', 'skin', 'core-skin', 'diameter'] as const;
export type TrendReading = typeof TREND_READINGS[number];
/** The analysis each reading comes from. */
export const TREND_SOURCE: Record<TrendReading, 'orient' | 'profile' | 'diameter'> = { whole: 'orient', core: 'profile', skin: 'profile', 'core-skin': 'profile', diameter: 'diameter' };
/** A reading in words, as tables, plots and the app name it. */
export const TREND_READING_WORDS: Record<TrendReading, string> = { whole: 'whole-image S', core: 'core S', skin: 'skin S', 'core-skin': 'core / skin', diameter: 'fibre diameter' };
/** The variable's values (any unit the user names). */
export const TREND_VALUE_LIMIT: Limit = { what: 'value of the variable', min: -1e12, max: 1e12 };
/** Longest name or unit of the variable, characters. */
export const TREND_NAME_MAX = 80;

/** One image's reading: its value with a 95 % interval and standard error, or why it has none. */
export interface TrendReadingValue {
  reading: number; ciLow: number; ciHigh: number; se: number;
  /** The reading's unit: '' for order parameters and ratios, 'um' or 'px' for diameters. */
  unit: '' | 'um' | 'px';
  /** Why the reading or its interval is not determined (the point is then left out of the fit). */
  why?: string;
}

const num = (v: number | null | undefined) => (typeof v === 'number' && Number.isFinite(v) ? v : NaN);

/**
 * The reading `kind` of one result document: whole = S_axis against the axis given to `orient`, else S_2D; core,
 * skin and core-skin from the profile's bands (their own standard errors; the ratio's from its Fieller interval);
 * diameter = the mean in um when the pixel size is known, else in px, with its standard uncertainty.
 */
export function readingOf(kind: TrendReading, doc: OrientResult | ProfileResult | DiameterDocument): TrendReadingValue {
  const nd = (doc as { notDetermined?: Record<string, string> }).notDetermined ?? {};
  const out = (reading: number, ciLow: number, ciHigh: number, se: number, unit: TrendReadingValue['unit'], why?: string): TrendReadingValue => {
    const s = pointSe(se, ciLow, ciHigh);
    const w = why ?? (!Number.isFinite(reading) ? 'the reading is not determined' : !Number.isFinite(s) ? 'its interval is open' : undefined);
    return { reading, ciLow, ciHigh, se: s, unit, ...(w ? { why: w } : {}) };
  };
  if (kind === 'whole') {
    const o = doc as OrientResult;
    return o.axisOrder !== null && o.axisOrder !== undefined
      ? out(num(o.axisOrder), num(o.axisOrderCiLow), num(o.axisOrderCiHigh), num(o.axisOrderSe), '', nd.axisOrder)
      : out(num(o.order2D), num(o.order2DCiLow), num(o.order2DCiHigh), num(o.order2DSe), '', nd.order2D);
  }
  if (kind === 'diameter') {
    const d = doc as DiameterDocument;
    const um = Number.isFinite(num(d.meanUm));
    if (!d.determined) return out(NaN, NaN, NaN, NaN, um ? 'um' : 'px', 'the diameter is not determined on this image (see its diameter result)');
    return um ? out(num(d.meanUm), num(d.ciLowUm), num(d.ciHighUm), num(d.uUm), 'um') : out(num(d.meanPx), num(d.ciLowPx), num(d.ciHighPx), num(d.uPx), 'px');
  }
  const p = doc as ProfileResult;
  if (kind === 'core-skin') return out(num(p.coreSkinRatio), num(p.coreSkinRatioCiLow), num(p.coreSkinRatioCiHigh), NaN, '', nd.order ?? nd.coreSkinRatio);
  const band = kind === 'core' ? p.core : p.skin;
  return out(num(band.order), num(band.ciLow), num(band.ciHigh), num(band.se), '', nd.order);
}

/** One point of a trend: the image, the variable's value there and its reading. */
export interface TrendPoint extends TrendReadingValue { source: string; value: number; used: boolean }

export interface TrendVariable { name: string; unit: string }

export interface TrendResult extends ResultHead {
  analysis: 'trend';
  reading: TrendReading;
  readingUnit: '' | 'um' | 'px';
  variable: TrendVariable;
  points: TrendPoint[];
  /** The weighted straight line y = intercept + slope x with 95 % intervals (NaN = null where not determined). */
  fit: Omit<LineFit, 'notDetermined'>;
  options: Record<string, unknown>;
}

/** The variable's name and unit checked: plain text of at most TREND_NAME_MAX characters; a blank name reads "value". */
export function trendVariable(name: string | undefined, unit: string | undefined): TrendVariable {
  const n = (name ?? '').trim() || 'value', u = (unit ?? '').trim();
  for (const [what, v] of [['name', n], ['unit', u]] as const) {
    if (v.length > TREND_NAME_MAX || [...v].some((c) => c.charCodeAt(0) < 32)) throw new InputError(`the variable's ${what} must be one line of at most ${TREND_NAME_MAX} characters`, 'Shorten it');
  }
  return { name: n, unit: u };
}

/**
 * The trend of `reading` over the images: `items` give each image's name, the variable's value and the result
 * document its reading comes from (null when the image has none: a point without a reading, left out, with `why`). Every
 * reading must share one unit (diameters in um, or all in px); a point of the other unit is left out and said so.
 */
export function trendResult(
  items: readonly { source: string; value: number; doc: OrientResult | ProfileResult | DiameterDocument | null; why?: string }[],
  reading: TrendReading, variable: TrendVariable, options: Record<string, unknown> = {},
): TrendResult {
  if (!(TREND_READINGS as readonly string[]).includes(reading)) throw new InputError(`unknown reading "${reading}"`, `Use one of ${TREND_READINGS.join(', ')}`);
  if (items.length === 0) throw new InputError('no images given', 'Name the images and the variable\'s value for each');
  for (const it of items) {
    if (!Number.isFinite(it.value) || it.value < TREND_VALUE_LIMIT.min || it.value > TREND_VALUE_LIMIT.max) {
      throw new InputError(`the ${variable.name} of ${it.source} must be a number from ${TREND_VALUE_LIMIT.min} to ${TREND_VALUE_LIMIT.max}, got ${String(it.value)}`, 'Give every image its value');
    }
  }
  const values = items.map((it) => (it.doc ? readingOf(reading, it.doc) : { reading: NaN, ciLow: NaN, ciHigh: NaN, se: NaN, unit: '' as const, why: it.why ?? `no ${TREND_SOURCE[reading]} result for this image` }));
  // Diameters: the unit most readings have (um when tied); readings in the other are left out.
  const ums = values.filter((v) => v.unit === 'um' && !v.why).length, pxs = values.filter((v) => v.unit === 'px' && !v.why).length;
  const unit: TrendResult['readingUnit'] = reading !== 'diameter' ? '' : ums >= pxs ? 'um' : 'px';
  const points: TrendPoint[] = items.map((it, i) => {
    const v = values[i];
    const why = v.why ?? (reading === 'diameter' && v.unit !== unit ? `measured in ${v.unit} while the others are in ${unit}; give this image its pixel size` : undefined);
    return { source: it.source, value: it.value, ...v, ...(why ? { why } : {}), used: !why };
  });
  const fit = fitLine(points.map((p) => (p.used ? { x: p.value, y: p.reading, se: p.se } : { x: p.value, y: NaN, se: NaN })), variable.name === 'value' ? 'the variable' : variable.name);
  const { notDetermined: nd, ...fitValues } = fit;
  const warnings = points.filter((p) => !p.used).map((p) => `${p.source}: left out of the fit, ${p.why}`);
  if (fit.birgeRatio > 1 && fit.dof > 0) {
    warnings.push(`the points scatter about the line ${fit.birgeRatio.toFixed(2)} times more than their own intervals allow (chi2 ${fit.chiSquare.toPrecision(3)} on ${fit.dof} degree${fit.dof === 1 ? '' : 's'} of freedom): the intervals are widened by that factor; a curved trend or a condition not held steady can cause it`);
  }
  const first = items.find((it) => it.doc)?.doc;
  return {
    schemaVersion: SCHEMA_VERSION, analysis: 'trend', source: items.map((it) => it.source).join(', '),
    width: first?.width ?? 0, height: first?.height ?? 0, pixelSizeUmPerPx: first?.pixelSizeUmPerPx ?? null,
    reading, readingUnit: unit, variable, points, fit: fitValues, options: { reading, ...options }, warnings,
    ...(nd ? { notDetermined: nd } : {}),
  };
}

/**
 * Largest image a trend reads, by the analysis its reading comes from (the whole-image S holds its field as a
 * series frame does; the others as their own commands).
 */
export const TREND_MAX_PIXELS = {
  orient: { pixels: ANALYSIS_MAX_PIXELS.series.pixels, what: 'the whole-image S of a trend (its field is held)' },
  profile: ANALYSIS_MAX_PIXELS.profile,
  diameter: ANALYSIS_MAX_PIXELS.diameter,
} as const;

/**
 * The trend as CSV rows (`retarda trend --csv` and the app's export): one `point` row per image (value, reading,
 * interval, standard error, whether it is in the fit, why not), then a `slope` and an `intercept` row with their
 * intervals; empty cells where a value is not determined (notDetermined says why).
 */
export function trendCsvRows(r: TrendResult): Record<string, string | number | null>[] {
  const f = r.fit, nd = r.notDetermined ?? {};
  const n = (v: number) => (Number.isFinite(v) ? v : null);
  return [
    ...r.points.map((p) => ({ kind: 'point', image: p.source, value: p.value, reading: n(p.reading), ciLow: n(p.ciLow), ciHigh: n(p.ciHigh), se: n(p.se), used: p.used ? 1 : 0, notDetermined: p.why ?? null })),
    { kind: 'slope', image: null, value: null, reading: n(f.slope), ciLow: n(f.slopeCiLow), ciHigh: n(f.slopeCiHigh), se: n(f.slopeSe), used: null, notDetermined: nd.slope ?? null },
    { kind: 'intercept', image: null, value: null, reading: n(f.intercept), ciLow: n(f.interceptCiLow), ciHigh: n(f.interceptCiHigh), se: n(f.interceptSe), used: null, notDetermined: nd.intercept ?? null },
  ];
}
