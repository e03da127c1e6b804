/**
 * The compare view's data: one row per analysed image (of one or several sessions) with core, skin,
 * core/skin ratio and diameter and their intervals; sorting; the CSV table; and the S profiles as
 * series for one overlaid plot. Pure functions of the stored session records.
 */
import type { ProfileResult } from '../../src/analyses/index.ts';
import { toCsv, type CsvValue } from '../../src/report/index.ts';
import type { SessionRecord } from '../storage/records.ts';
import { isMeasured, umPerPxText } from '../setups/calibration.ts';

export interface CompareRow {
  /** sessionId/imageId: unique across sessions. */
  key: string;
  sessionId: string;
  session: string;
  image: string;
  /** Which reader made the profile's field (texture, plate, ...), null without a profile. */
  field: string | null;
  coreOrder: number | null; coreCiLow: number | null; coreCiHigh: number | null; coreN: number | null;
  skinOrder: number | null; skinCiLow: number | null; skinCiHigh: number | null; skinN: number | null;
  ratio: number | null; ratioCiLow: number | null; ratioCiHigh: number | null;
  /** Mean fibre diameter in `diameterUnit` with its 95 % interval and number of stations. */
  diameter: number | null; diameterCiLow: number | null; diameterCiHigh: number | null; diameterN: number | null;
  diameterUnit: 'um' | 'px' | null;
  /** The pixel size the diameter was measured with, um/px, and where it came from in words; null for px diameters. */
  pixelSizeUmPerPx: number | null; pixelSizeFrom: string | null;
  /** Core and skin bands the numbers were made with (|s| below / above). */
  coreMax: number | null; skinMin: number | null;
  /** Why the profile's order numbers (core, skin, ratio) are not determined, when they are withheld. */
  orderNotDetermined: string | null;
  /** Why the core/skin ratio alone is not determined. */
  ratioNotDetermined: string | null;
  profile: ProfileResult | null;
}

const fin = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);

/** Rows for every image of the sessions that has a profile or a diameter, in session then image order. */
export function compareRows(sessions: SessionRecord[]): CompareRow[] {
  const rows: CompareRow[] = [];
  for (const s of sessions) {
    for (const img of s.images) {
      const w = s.work[img.id];
      const p = w?.profile ?? null;
      const d = w?.diameter ?? null;
      if (!p && !d) continue;
      const um = d && fin(d.meanUm) !== null;
      const run = w?.diameterRun ?? null;
      rows.push({
        key: `${s.id}/${img.id}`, sessionId: s.id, session: s.name, image: img.name, field: p ? p.fieldMethod : null,
        coreOrder: fin(p?.core.order), coreCiLow: fin(p?.core.ciLow), coreCiHigh: fin(p?.core.ciHigh), coreN: fin(p?.core.n),
        skinOrder: fin(p?.skin.order), skinCiLow: fin(p?.skin.ciLow), skinCiHigh: fin(p?.skin.ciHigh), skinN: fin(p?.skin.n),
        ratio: fin(p?.coreSkinRatio), ratioCiLow: fin(p?.coreSkinRatioCiLow), ratioCiHigh: fin(p?.coreSkinRatioCiHigh),
        diameter: d ? fin(um ? d.meanUm : d.meanPx) : null,
        diameterCiLow: d ? fin(um ? d.ciLowUm : d.ciLowPx) : null,
        diameterCiHigh: d ? fin(um ? d.ciHighUm : d.ciHighPx) : null,
        diameterN: d ? fin(d.n) : null,
        diameterUnit: d ? (um ? 'um' : 'px') : null,
        pixelSizeUmPerPx: um ? fin(d.pixelSizeUmPerPx) : null,
        pixelSizeFrom: um && fin(d.pixelSizeUmPerPx) !== null ? run?.pixelSizeFrom ?? (d.pixelSizeFrom === 'file' ? "file's resolution tags" : 'value given') : null,
        coreMax: p ? fin(Number(p.options.coreMax)) : null, skinMin: p ? fin(Number(p.options.skinMin)) : null,
        orderNotDetermined: p?.notDetermined?.order ?? null, ratioNotDetermined: p?.notDetermined?.coreSkinRatio ?? null,
        profile: p,
      });
    }
  }
  return rows;
}

/** Columns the table sorts by; diameters in um and in px are separate columns (a length and a pixel count do not compare). */
export type SortColumn = 'session' | 'image' | 'coreOrder' | 'skinOrder' | 'ratio' | 'diameterUm' | 'diameterPx';

/** A row's value in a sort column. */
function sortValue(r: CompareRow, c: SortColumn): string | number | null {
  if (c === 'diameterUm') return r.diameterUnit === 'um' ? r.diameter : null;
  if (c === 'diameterPx') return r.diameterUnit === 'px' ? r.diameter : null;
  return r[c];
}

/** Whether any row has a diameter in this unit (the table shows a column per unit present). */
export const hasDiameterIn = (rows: CompareRow[], unit: 'um' | 'px') => rows.some((r) => r.diameterUnit === unit);

/** The pixel size under a um diameter: "at 0.65 µm/px (micrometer image ruler.png)". */
export const pixelSizeNote = (r: CompareRow) => (r.pixelSizeUmPerPx !== null ? `at ${umPerPxText(r.pixelSizeUmPerPx, isMeasured(r.pixelSizeFrom ?? ''))} µm/px (${r.pixelSizeFrom})` : '');
export interface SortOrder { column: SortColumn; descending: boolean }

/**
 * Rows sorted by one column; rows without a value in it come last in either direction, and ties
 * keep their order (a stable sort), so sorting by session then by a number groups as expected.
 */
export function sortRows(rows: CompareRow[], o: SortOrder): CompareRow[] {
  const sign = o.descending ? -1 : 1;
  return rows
    .map((r, i) => ({ r, i }))
    .sort((a, b) => {
      const x = sortValue(a.r, o.column), y = sortValue(b.r, o.column);
      if (x === null && y === null) return a.i - b.i;
      if (x === null) return 1;
      if (y === null) return -1;
      const c = typeof x === 'string' ? x.localeCompare(y as string, undefined, { numeric: true }) : (x as number) - (y as number);
      return c !== 0 ? sign * c : a.i - b.i;
    })
    .map((x) => x.r);
}

/**
 * The table as CSV (RFC 4180 through src/report/csv.ts): one header row with units, empty cells
 * where a value was not measured or not determined (`notDetermined` says why). Diameters go in diameterUm or
 * diameterPx by their unit, with the pixel size of the um ones and where it came from.
 */
export function compareCsv(rows: CompareRow[]): string {
  const cols = ['session', 'image', 'field', 'coreOrder', 'coreCiLow', 'coreCiHigh', 'coreN', 'skinOrder', 'skinCiLow', 'skinCiHigh', 'skinN',
    'coreSkinRatio', 'coreSkinRatioCiLow', 'coreSkinRatioCiHigh', 'coreMax', 'skinMin',
    'diameterUm', 'diameterCiLowUm', 'diameterCiHighUm', 'diameterPx', 'diameterCiLowPx', 'diameterCiHighPx', 'diameterN',
    'pixelSizeUmPerPx', 'pixelSizeFrom', 'notDetermined'];
  return toCsv(rows.map((r): Record<string, CsvValue> => {
    const um = r.diameterUnit === 'um', px = r.diameterUnit === 'px';
    return {
      session: r.session, image: r.image, field: r.field,
      coreOrder: r.coreOrder, coreCiLow: r.coreCiLow, coreCiHigh: r.coreCiHigh, coreN: r.coreN,
      skinOrder: r.skinOrder, skinCiLow: r.skinCiLow, skinCiHigh: r.skinCiHigh, skinN: r.skinN,
      coreSkinRatio: r.ratio, coreSkinRatioCiLow: r.ratioCiLow, coreSkinRatioCiHigh: r.ratioCiHigh, coreMax: r.coreMax, skinMin: r.skinMin,
      diameterUm: um ? r.diameter : null, diameterCiLowUm: um ? r.diameterCiLow : null, diameterCiHighUm: um ? r.diameterCiHigh : null,
      diameterPx: px ? r.diameter : null, diameterCiLowPx: px ? r.diameterCiLow : null, diameterCiHighPx: px ? r.diameterCiHigh : null,
      diameterN: r.diameterN, pixelSizeUmPerPx: r.pixelSizeUmPerPx, pixelSizeFrom: r.pixelSizeFrom,
      notDetermined: [r.orderNotDetermined && `order: ${r.orderNotDetermined}`, r.ratioNotDetermined && `core/skin: ${r.ratioNotDetermined}`].filter(Boolean).join(' | ') || null,
    };
  }), cols);
}

export interface SeriesPoint { s: number; order: number; ciLow: number; ciHigh: number; n: number }
export interface ProfileSeries { key: string; label: string; colour: string; dash: string; points: SeriesPoint[] }

/**
 * Colour-blind-safe categorical colours (Okabe & Ito 2008, "Color Universal Design"), black left out
 * for the axes; after seven series the dash pattern changes so every line stays distinguishable.
 */
export const SERIES_COLOURS = ['#E69F00', '#56B4E9', '#009E73', '#0072B2', '#D55E00', '#CC79A7', '#F0E442'];
const DASHES = ['', '6 3', '2 3', '8 3 2 3'];

/** Label of a row: the image name, with the session name when several sessions are compared. */
export function rowLabel(r: CompareRow, severalSessions: boolean): string {
  return severalSessions ? `${r.session}: ${r.image}` : r.image;
}

/** The S-across-the-channel curve of each row that has a profile (bins with n > 0 and a finite S). */
export function profileSeries(rows: CompareRow[], severalSessions: boolean): ProfileSeries[] {
  return rows.filter((r) => r.profile).map((r, i) => ({
    key: r.key, label: rowLabel(r, severalSessions),
    colour: SERIES_COLOURS[i % SERIES_COLOURS.length], dash: DASHES[Math.floor(i / SERIES_COLOURS.length) % DASHES.length],
    points: r.profile!.bins.filter((b) => b.n > 0 && Number.isFinite(b.order))
      .map((b) => ({ s: b.s, order: b.order, ciLow: Number.isFinite(b.ciLow) ? b.ciLow : b.order, ciHigh: Number.isFinite(b.ciHigh) ? b.ciHigh : b.order, n: b.n })),
  }));
}

/** Y range of the plot: [0, 1] widened to whole fifths so every band fits (S_axis can be negative). */
export function plotRange(series: ProfileSeries[]): [number, number] {
  let lo = 0, hi = 1;
  for (const s of series) for (const p of s.points) { lo = Math.min(lo, p.ciLow); hi = Math.max(hi, p.ciHigh); }
  return [Math.max(-1, Math.floor(lo * 5 + 1e-9) / 5), Math.min(1, Math.ceil(hi * 5 - 1e-9) / 5)];
}

/** Whether the rows were made with different core / skin bands (then their numbers are not like for like). */
export function mixedBands(rows: CompareRow[]): boolean {
  const bands = new Set(rows.filter((r) => r.profile).map((r) => `${r.coreMax}/${r.skinMin}`));
  return bands.size > 1;
}
