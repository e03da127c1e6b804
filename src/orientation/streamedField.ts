import { loadTensorKernel } from '../wasm/index.ts';
import { resolveTensorOptions, streamTileRows, tensorHaloPx, type StructureTensorOptions } from './structureTensor.ts';
import type { Tile } from '../image/index.ts';
import type { PlaneRows } from './tensorStream.ts';
import {
  float32Above, float32Below, maskWarnings, quantileStep, resolveMaskOptions, sampleQuantile, strengthFloorOf, type MaskOptions,
} from './fieldFromTensor.ts';
import { dilate, fillNonFinite, nonFiniteWarning } from './nonFinite.ts';

/**
 * The texture field without holding it: the image streams through the tensor kernel twice, and only what the
 * order numbers read is kept. The first pass (surveyTexture) finds what needs the whole image before any pixel
 * can be masked (the strength floor from quantile's sample, the image's largest |I|) and keeps the few lines
 * and grid points the caller names (for the correlation length); the second (streamMaskedRows) hands out each
 * row with its mask. The kernel gives the same bits on both passes, and the mask is the same comparison in the
 * same kernel, so everything read from the rows equals what orientationField's held field gives, to the bit
 * (tests/order/streamed-order.test.ts, tests/order/streamed-share.test.ts). Memory: the rows the caller keeps, not 17 bytes per pixel.
 */

/** Rows, columns and a grid (every `gridStep` px from the top-left pixel) to keep in the first pass. */
export interface SurveyPlan { rows: number[]; columns: number[]; gridStep: number }

/** Kept pixels of one line (or the grid in row-major order) with their mask: 1 = usable, as the field's. */
export interface MaskedLine { mask: Uint8Array; cos2: Float32Array; sin2: Float32Array }

/** What the first pass found. */
export interface TextureSurvey {
  /** The plane or rows the field comes from (non-finite pixels filled, when there were any). */
  plane: PlaneRows;
  tensor: Required<StructureTensorOptions>;
  /** Masking thresholds as the kernel compares them (float32): strength > strengthAbove and coherency >= coherencyFrom. */
  strengthAbove: number;
  coherencyFrom: number;
  /** Pixels within the filters' reach of a non-finite pixel (masked too), or null; and how many were not finite. */
  reach: Uint8Array | null;
  nonFinite: number;
  /** The field's options, as orientationField records them. */
  options: Record<string, unknown>;
  grid: MaskedLine;
  rows: MaskedLine[];
  columns: MaskedLine[];
}

/** Raw layers of kept pixels before the mask is known. */
export interface RawLine { strength: Float32Array; confidence: Float32Array; cos2: Float32Array; sin2: Float32Array }

const rawLine = (n: number): RawLine => ({ strength: new Float32Array(n), confidence: new Float32Array(n), cos2: new Float32Array(n), sin2: new Float32Array(n) });

/**
 * What the first pass kept from rows y0 <= y < y1: the strength sample of those rows (in the order of the
 * pixels), the largest |value| the kernel read for them, and the grid, planned rows and columns as arrays of
 * the whole image's size with only those rows' pixels set.
 */
export interface SurveyPart { y0: number; y1: number; largest: number; sample: Float32Array; grid: RawLine; rows: RawLine[]; columns: RawLine[] }

/**
 * The horizontal strip of rows y0 <= y < y1 with the tensor's halo above and below (tensorHaloPx): its rows
 * are the whole image's, to the bit (tests/orientation/tile-share.test.ts). Null for the whole plane.
 */
export function stripTile(width: number, height: number, y0: number, y1: number, halo: number): Tile | null {
  if (y0 === 0 && y1 === height) return null;
  const top = Math.max(0, y0 - halo), bottom = Math.min(height, y1 + halo);
  return { x: 0, y: top, w: width, h: bottom - top, innerX: 0, innerY: y0, innerW: width, innerH: y1 - y0 };
}

/**
 * The first pass over rows y0 <= y < y1 of `plane` (all of it by default): what surveyTexture keeps of them.
 * Any cut of the rows into strips gives the same parts, to the bit (mergeSurveyParts puts them together).
 */
export async function surveyStrip(plane: PlaneRows, t: Required<StructureTensorOptions>, plan: SurveyPlan, y0 = 0, y1 = plane.height): Promise<SurveyPart> {
  const { width: w, height: h } = plane;
  const n = w * h, qStep = quantileStep(n), g = plan.gridStep;
  const gx = Math.ceil(w / g), gy = Math.ceil(h / g);
  const rowSlot = new Map(plan.rows.map((y, k) => [y, k]));
  const tile = stripTile(w, h, y0, y1, tensorHaloPx(t));
  const top = tile ? tile.y : 0;
  // Rows read in part get only the windows of the pixels read (the kernel's last stage is four tenths of its work).
  const most = plan.columns.length + Math.ceil(w / qStep) + 1, starts = new Int32Array(most);
  const windows = {
    most,
    of: (yc: number): Int32Array | null => {
      const y = yc + top;
      if (y % g === 0 || rowSlot.has(y)) return null;
      let count = 0;
      for (const x of plan.columns) starts[count++] = x;
      for (let i = Math.ceil((y * w) / qStep) * qStep; i < (y + 1) * w; i += qStep) starts[count++] = i - y * w;
      return 16 * count < w ? starts.subarray(0, count) : null;
    },
  };
  const sample = new Float32Array(Math.ceil((y1 - y0) * w / qStep) + 1);
  const grid = rawLine(gx * gy), rows = plan.rows.map(() => rawLine(w)), columns = plan.columns.map(() => rawLine(h));
  let kept = 0;
  const largest = await streamTileRows(plane, tile, t, 'lean', (y, a, b, c, d) => {
    const at = y * w;
    for (let i = Math.ceil(at / qStep) * qStep; i < at + w; i += qStep) if (Number.isFinite(a[i - at])) sample[kept++] = a[i - at];
    if (y % g === 0) {
      for (let x = 0, j = (y / g) * gx; x < w; x += g, j++) {
        grid.strength[j] = a[x]; grid.confidence[j] = b[x]; grid.cos2[j] = c[x]; grid.sin2[j] = d[x];
      }
    }
    const r = rowSlot.get(y);
    if (r !== undefined) {
      const line = rows[r];
      line.strength.set(a.subarray(0, w)); line.confidence.set(b.subarray(0, w)); line.cos2.set(c.subarray(0, w)); line.sin2.set(d.subarray(0, w));
    }
    plan.columns.forEach((x, k) => {
      const line = columns[k];
      line.strength[y] = a[x]; line.confidence[y] = b[x]; line.cos2[y] = c[x]; line.sin2[y] = d[x];
    });
  }, { windows });
  return { y0, y1, largest, sample: sample.slice(0, kept), grid, rows, columns };
}

/** The parts of strips that cover the rows from the top, one after another, as one part of the whole plane. */
export function mergeSurveyParts(parts: SurveyPart[], width: number, plan: SurveyPlan): SurveyPart {
  if (parts.length === 1) return parts[0];
  const g = plan.gridStep, gx = Math.ceil(width / g);
  const sample = new Float32Array(parts.reduce((s, p) => s + p.sample.length, 0));
  const first = parts[0], keys = ['strength', 'confidence', 'cos2', 'sin2'] as const;
  let at = 0, largest = 0;
  for (const p of parts) {
    sample.set(p.sample, at);
    at += p.sample.length;
    largest = p.largest > largest || Number.isNaN(p.largest) ? p.largest : largest;
    if (p === first) continue;
    const j0 = Math.ceil(p.y0 / g) * gx, j1 = Math.ceil(p.y1 / g) * gx;
    for (const k of keys) first.grid[k].set(p.grid[k].subarray(j0, j1), j0);
    plan.rows.forEach((y, r) => { if (y >= p.y0 && y < p.y1) for (const k of keys) first.rows[r][k].set(p.rows[r][k]); });
    plan.columns.forEach((_x, c) => { for (const k of keys) first.columns[c][k].set(p.columns[c][k].subarray(p.y0, p.y1), p.y0); });
  }
  return { ...first, y1: parts[parts.length - 1].y1, largest, sample };
}

/** Strips of rows [y0, y1) and who computes their SurveyParts (here and elsewhere, any of them). */
export interface SurveyShare { ranges: Array<[number, number]>; run: (ranges: Array<[number, number]>) => Promise<SurveyPart[]> }

/**
 * First pass: streams `input` through the kernel keeping quantile's strength sample, the planned lines and the
 * grid, then sets the thresholds as finishTextureField does and masks the kept pixels. A plane with values that
 * are not finite is filled and streamed again (here, in one pass), as orientationField does. With `share` the
 * rows are cut into its strips, which it computes (surveyStrip, here or elsewhere): the same survey to the bit.
 */
export async function surveyTexture(input: PlaneRows, options: StructureTensorOptions & MaskOptions, plan: SurveyPlan, share?: SurveyShare): Promise<TextureSurvey> {
  const t = resolveTensorOptions(options);
  const mo = resolveMaskOptions(options);
  const { width: w, height: h } = input;
  const g = plan.gridStep, gx = Math.ceil(w / g);
  let found = share && share.ranges.length > 1 ? mergeSurveyParts(await share.run(share.ranges), w, plan) : await surveyStrip(input, t, plan);
  let plane: PlaneRows = input, reach: Uint8Array | null = null, nonFinite = 0, largest = found.largest;
  if (!(largest < Infinity)) {
    if (!('data' in input)) throw new Error('rows read on demand held a value that is not finite');
    const filled = fillNonFinite(input);
    found = await surveyStrip(filled.plane, t, plan);
    plane = filled.plane;
    largest = filled.largest;
    nonFinite = filled.count;
    if (filled.bad) reach = dilate(filled.bad, w, h, tensorHaloPx(t));
  }
  const floor = strengthFloorOf(mo.strengthFloor, sampleQuantile(found.sample, 0.99), largest);
  const strengthAbove = float32Below(floor), coherencyFrom = float32Above(mo.coherencyMin);
  const masked = (line: RawLine, index: (k: number) => number): MaskedLine => {
    const mask = new Uint8Array(line.strength.length);
    for (let k = 0; k < mask.length; k++) {
      mask[k] = line.strength[k] > strengthAbove && line.confidence[k] >= coherencyFrom && !(reach && reach[index(k)]) ? 1 : 0;
    }
    return { mask, cos2: line.cos2, sin2: line.sin2 };
  };
  return {
    plane, tensor: t, strengthAbove, coherencyFrom, reach, nonFinite,
    options: {
      sigmaPx: t.sigmaPx, sigmaDerivPx: t.derivative === 'sobel' ? null : t.sigmaDerivPx, derivative: t.derivative,
      strengthFloor: mo.strengthFloor, coherencyMin: mo.coherencyMin,
    },
    grid: masked(found.grid, (j) => Math.floor(j / gx) * g * w + (j % gx) * g),
    rows: found.rows.map((line, r) => masked(line, (x) => plan.rows[r] * w + x)),
    columns: found.columns.map((line, c) => masked(line, (y) => y * w + plan.columns[c])),
  };
}

/** Where a row's mask goes: a view of `width` bytes and its byte offset in the kernel's memory. */
export interface MaskSlot { mask: Uint8Array; maskAt: number }

/**
 * Receives row y of the field: its mask (in the slot given for it) and the kernel's strength, coherency, cos 2
 * theta and sin 2 theta views (a row's width and more), valid only during the call.
 */
export type MaskedRowSink = (y: number, mask: Uint8Array, strength: Float32Array, confidence: Float32Array, cos2: Float32Array, sin2: Float32Array) => void;

/**
 * Second pass: streams the survey's plane through the kernel again, masks each row into `slot(y)` (the kernel's
 * maskPixels with the survey's thresholds, then the non-finite reach) and hands it to `sink`. The kernel's own
 * memory starts at `arenaStart`, above the caller's slots. Returns the field's warnings, as orientationField's.
 */
export async function streamMaskedRows(s: TextureSurvey, arenaStart: number, slot: (y: number) => MaskSlot, sink: MaskedRowSink): Promise<string[]> {
  const { width: w, height: h } = s.plane;
  const { kept, lost } = await streamMaskedStrip(s, arenaStart, slot, sink);
  return maskedWarnings(s, w * h - kept, lost);
}

/** The field's warnings, as orientationField's, from the pixels masked and those lost to the non-finite reach. */
export function maskedWarnings(s: Pick<TextureSurvey, 'plane' | 'reach' | 'nonFinite'>, masked: number, lost: number): string[] {
  const n = s.plane.width * s.plane.height;
  const warnings = maskWarnings(masked, n);
  if (s.reach) warnings.push(nonFiniteWarning(s.nonFinite, lost));
  return warnings;
}

/** What streamMaskedRows needs of the survey to mask rows (a strip's worth can be sent to another worker). */
export type MaskingSurvey = Pick<TextureSurvey, 'plane' | 'tensor' | 'strengthAbove' | 'coherencyFrom' | 'reach'>;

/**
 * streamMaskedRows over rows y0 <= y < y1 (a strip with the tensor's halo: the same rows, to the bit).
 * Returns how many pixels the kernel kept and how many of them the non-finite reach then masked.
 */
export async function streamMaskedStrip(s: MaskingSurvey, arenaStart: number, slot: (y: number) => MaskSlot, sink: MaskedRowSink, y0 = 0, y1 = s.plane.height): Promise<{ kept: number; lost: number }> {
  const k = await loadTensorKernel();
  const { width: w, height: h } = s.plane;
  const reach = s.reach;
  let kept = 0, lost = 0;
  await streamTileRows(s.plane, stripTile(w, h, y0, y1, tensorHaloPx(s.tensor)), s.tensor, 'lean', (y, a, b, c, d) => {
    const { mask, maskAt } = slot(y);
    kept += k.maskPixels(a.byteOffset, b.byteOffset, w, s.strengthAbove, s.coherencyFrom, maskAt);
    if (reach) for (let x = 0, i = y * w; x < w; x++, i++) if (reach[i] && mask[x]) { mask[x] = 0; lost++; }
    sink(y, mask, a, b, c, d);
  }, { arenaStart });
  return { kept, lost };
}
