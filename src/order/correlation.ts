import type { OrientationField } from '../orientation/index.ts';
import { doubledAngles } from './doubledAngles.ts';
import { giveBack, takeFloat32, takeUint8 } from '../common/index.ts';
import { KernelArena, loadedTensorKernel, type KernelExports } from '../wasm/index.ts';

/**
 * The pixels correlationLengthPx reads: a grid every `gridStep` px in both directions (for the mean), and whole
 * rows and whole columns about 32 of each, evenly spaced from the first.
 */
export interface CorrelationPlan { gridStep: number; rows: number[]; columns: number[]; maxLag: number }

/** One line of a field (a row, a column, or the grid's points in row-major order): usable flags and doubled-angle components. */
export interface FieldLine { mask: Uint8Array; cos2: Float32Array; sin2: Float32Array }

/** What correlationLengthPx reads of a field, laid out by a CorrelationPlan. */
export interface CorrelationSamples { grid: FieldLine; rows: FieldLine[]; columns: FieldLine[] }

/** The sampled lines and grid of a `width` x `height` field (see correlationLengthPx). */
export function correlationPlan(width: number, height: number, maxLag = 64): CorrelationPlan {
  const every = (lines: number) => {
    const step = Math.max(1, Math.floor(lines / 32)), out: number[] = [];
    for (let a = 0; a < lines; a += step) out.push(a);
    return out;
  };
  return { gridStep: Math.max(1, Math.floor(Math.sqrt((width * height) / 40_000))), rows: every(height), columns: every(width), maxLag };
}

/**
 * Spatial correlation length of the orientation signal, in px: the lag at which the autocorrelation
 * of cos 2(theta - director) and sin 2(theta - director), along rows and along columns, first falls
 * below 1/e (averaged over the two directions). Rows and columns are sampled sparsely (correlationPlan), so
 * this costs a small fraction of the field's own computation. Used to size bootstrap blocks so that
 * neighbouring blocks are nearly independent.
 */
export function correlationLengthPx(f: OrientationField, maxLag = 64): number {
  const { width, height, mask } = f;
  // Doubled-angle components (the director cancels in the autocorrelation of the complex signal), as
  // arrays rather than accessor functions: quick enough for every frame of the live readout.
  const { cos2: cv, sin2: sv } = doubledAngles(f);
  const plan = correlationPlan(width, height, maxLag);
  // Plain loops: a typed array's `from` with a mapping function took twenty times longer here.
  // Pooled (every element is written below), and handed back once read: no fresh pages per image of a batch.
  const line = (n: number): FieldLine => ({ mask: takeUint8(n, false), cos2: takeFloat32(n, false), sin2: takeFloat32(n, false) });
  const g = plan.gridStep, gx = Math.ceil(width / g), grid = line(gx * Math.ceil(height / g));
  for (let y = 0, j = 0; y < height; y += g) {
    for (let x = 0, i = y * width; x < width; x += g, i += g, j++) { grid.mask[j] = mask[i]; grid.cos2[j] = cv[i]; grid.sin2[j] = sv[i]; }
  }
  const rows = plan.rows.map((y) => ({ mask: mask.subarray(y * width, (y + 1) * width), cos2: cv.subarray(y * width, (y + 1) * width), sin2: sv.subarray(y * width, (y + 1) * width) }));
  const columns = plan.columns.map((x) => {
    const c = line(height);
    for (let y = 0, i = x; y < height; y++, i += width) { c.mask[y] = mask[i]; c.cos2[y] = cv[i]; c.sin2[y] = sv[i]; }
    return c;
  });
  const length = correlationLengthOf(width, height, { grid, rows, columns }, maxLag);
  for (const l of [grid, ...columns]) giveBack(l.mask, l.cos2, l.sin2);
  return length;
}

/**
 * correlationLengthPx from the field's pixels that it reads (a CorrelationSamples laid out by
 * correlationPlan(width, height, maxLag)): the same number, to the bit, however they were gathered.
 */
export function correlationLengthOf(width: number, height: number, s: CorrelationSamples, maxLag = 64): number {
  let mc = 0, ms = 0, m = 0;
  const g = s.grid;
  for (let j = 0; j < g.mask.length; j++) {
    if (!g.mask[j]) continue;
    mc += g.cos2[j]; ms += g.sin2[j]; m++;
  }
  if (m < 16) return 1;
  mc /= m; ms /= m;
  const L = Math.min(maxLag, Math.floor(Math.min(width, height) / 4));
  const lengths: number[] = [];
  for (const lines of [s.rows, s.columns]) {
    const num = new Float64Array(L + 1), cnt = new Float64Array(L + 1);
    const len = lines === s.rows ? width : height;
    const step = Math.max(1, Math.floor(len / 128));
    const k = loadedTensorKernel();
    if (k) lagProductsByKernel(k, lines, len, step, mc, ms, L, num, cnt);
    else for (const { mask, cos2: cv, sin2: sv } of lines) {
      for (let b = 0; b + L < len; b += step) {
        if (!mask[b]) continue;
        const c0 = cv[b] - mc, s0 = sv[b] - ms;
        for (let k = 0, i = b; k <= L; k++, i++) {
          if (!mask[i]) continue;
          num[k] += c0 * (cv[i] - mc) + s0 * (sv[i] - ms); cnt[k]++;
        }
      }
    }
    lengths.push(lagAtOneOverE(num, cnt, L));
  }
  return Math.max(0.5, (lengths[0] + lengths[1]) / 2);
}

/** The lag at which the autocorrelation num[k] / cnt[k] (over that at lag 0) first falls below 1/e, interpolated; L if never. */
function lagAtOneOverE(num: Float64Array, cnt: Float64Array, L: number): number {
  const r0 = num[0] / Math.max(1, cnt[0]);
  for (let k = 1; k <= L; k++) {
    const r = num[k] / Math.max(1, cnt[k]) / (r0 || 1);
    if (r < Math.exp(-1)) {
      const rPrev = k === 1 ? 1 : num[k - 1] / Math.max(1, cnt[k - 1]) / (r0 || 1);
      return k - 1 + (rPrev - Math.exp(-1)) / Math.max(1e-9, rPrev - r); // linear interpolation
    }
  }
  return L;
}

/**
 * The lines' lagged products (the loop above) by the tensor kernel's lagProducts, which adds each lag's terms in
 * the same order: each line's centred components are written into the kernel's memory, then summed there two
 * lags at a time. The same num and cnt to the bit.
 */
function lagProductsByKernel(
  k: KernelExports, lines: FieldLine[], len: number, step: number, mc: number, ms: number,
  L: number, num: Float64Array, cnt: Float64Array,
): void {
  const mem = new KernelArena(k);
  const pc = mem.reserve(2 * len), ps = mem.reserve(2 * len), po = mem.reserve(len / 4 + 1), pn = mem.reserve(2 * (L + 2)), pk = mem.reserve(2 * (L + 2));
  mem.commit();
  const buf = k.memory.buffer;
  const lc = new Float64Array(buf, pc, len), ls = new Float64Array(buf, ps, len), on = new Uint8Array(buf, po, len);
  const kn = new Float64Array(buf, pn, L + 1), kc = new Float64Array(buf, pk, L + 1);
  kn.fill(0); kc.fill(0);
  for (const { mask, cos2: cv, sin2: sv } of lines) {
    on.set(mask);
    for (let b = 0; b < len; b++) {
      lc[b] = cv[b] - mc;
      ls[b] = sv[b] - ms;
    }
    k.lagProducts(pc, ps, po, len, L, step, pn, pk);
  }
  num.set(kn);
  cnt.set(kc);
}
