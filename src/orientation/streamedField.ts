import { loadTensorKernel } from '../wasm/index.ts';
import { resolveTensorOptions, streamTileRows, tensorHaloPx, type StructureTensorOptions } from './structureTensor.ts';
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
 * (tests/orientation/streamed-field.test.ts). Memory: the rows the caller keeps, not 17 bytes per pixel.
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
interface RawLine { strength: Float32Array; confidence: Float32Array; cos2: Float32Array; sin2: Float32Array }

const rawLine = (n: number): RawLine => ({ strength: new Float32Array(n), confidence: new Float32Array(n), cos2: new Float32Array(n), sin2: new Float32Array(n) });

/**
 * First pass: streams `input` through the kernel keeping quantile's strength sample, the planned lines and the
 * grid, then sets the thresholds as finishTextureField does and masks the kept pixels. A plane with values that
 * are not finite is filled and streamed again, as orientationField does.
 */
export async function surveyTexture(input: PlaneRows, options: StructureTensorOptions & MaskOptions, plan: SurveyPlan): Promise<TextureSurvey> {
  const t = resolveTensorOptions(options);
  const mo = resolveMaskOptions(options);
  const { width: w, height: h } = input;
  const n = w * h, qStep = quantileStep(n), g = plan.gridStep;
  const gx = Math.ceil(w / g), gy = Math.ceil(h / g);
  const rowSlot = new Map(plan.rows.map((y, k) => [y, k]));
  // Rows read in part get only the windows of the pixels read (the kernel's last stage is four tenths of its work).
  const most = plan.columns.length + Math.ceil(w / qStep) + 1, starts = new Int32Array(most);
  const windows = {
    most,
    of: (y: number): Int32Array | null => {
      if (y % g === 0 || rowSlot.has(y)) return null;
      let count = 0;
      for (const x of plan.columns) starts[count++] = x;
      for (let i = Math.ceil((y * w) / qStep) * qStep; i < (y + 1) * w; i += qStep) starts[count++] = i - y * w;
      return 16 * count < w ? starts.subarray(0, count) : null;
    },
  };
  const pass = async (plane: PlaneRows) => {
    const sample = new Float32Array(Math.ceil(n / qStep));
    const grid = rawLine(gx * gy), rows = plan.rows.map(() => rawLine(w)), columns = plan.columns.map(() => rawLine(h));
    let kept = 0;
    const largest = await streamTileRows(plane, null, t, 'lean', (y, a, b, c, d) => {
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
    return { largest, sample: sample.subarray(0, kept), grid, rows, columns };
  };
  let found = await pass(input), plane: PlaneRows = input, reach: Uint8Array | null = null, nonFinite = 0, largest = found.largest;
  if (!(largest < Infinity)) {
    if (!('data' in input)) throw new Error('rows read on demand held a value that is not finite');
    const filled = fillNonFinite(input);
    found = await pass(filled.plane);
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
  const k = await loadTensorKernel();
  const { width: w, height: h } = s.plane;
  const reach = s.reach;
  let kept = 0, lost = 0;
  await streamTileRows(s.plane, null, s.tensor, 'lean', (y, a, b, c, d) => {
    const { mask, maskAt } = slot(y);
    kept += k.maskPixels(a.byteOffset, b.byteOffset, w, s.strengthAbove, s.coherencyFrom, maskAt);
    if (reach) for (let x = 0, i = y * w; x < w; x++, i++) if (reach[i] && mask[x]) { mask[x] = 0; lost++; }
    sink(y, mask, a, b, c, d);
  }, { arenaStart });
  const warnings = maskWarnings(w * h - kept, w * h);
  if (reach) warnings.push(nonFiniteWarning(s.nonFinite, lost));
  return warnings;
}
