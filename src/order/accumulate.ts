import { InputError } from '../common/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import type { BlockSums } from './blocks.ts';
import { doubledAngles } from './doubledAngles.ts';
import { KernelArena, loadedTensorKernel, type KernelExports } from '../wasm/index.ts';

/**
 * Pixel weights of the averages. 'none': every usable pixel counts once. Texture fields: 'coherency' (the
 * structure tensor's coherency), 'strength' (texture strength, the tensor trace Jxx + Jyy) or
 * 'strength-coherency' (their product). Optical readings: 'confidence' (how well each pixel's colours or
 * intensities fitted the reading).
 */
export type Weighting = 'none' | 'coherency' | 'strength' | 'strength-coherency' | 'confidence';
export const WEIGHTINGS: Weighting[] = ['none', 'coherency', 'strength', 'strength-coherency', 'confidence'];
/** The weightings a texture field takes. */
export const TEXTURE_WEIGHTINGS: Weighting[] = ['none', 'coherency', 'strength', 'strength-coherency'];
/** The weightings an optical reading takes (it has no texture strength, and its per-pixel layer is a confidence). */
export const OPTICAL_WEIGHTINGS: Weighting[] = ['none', 'confidence'];

/**
 * Refuses a weighting the field cannot give: coherency and texture strength belong to texture fields, the
 * reading's confidence to optical readings.
 * @throws InputError naming the weightings that do apply
 */
export function weightingFits(weighting: Weighting, texture: boolean): void {
  const allowed = texture ? TEXTURE_WEIGHTINGS : OPTICAL_WEIGHTINGS;
  if (!allowed.includes(weighting)) {
    throw new InputError(`weighting "${weighting}" does not apply to ${texture ? 'a texture field' : 'an optical reading'}`,
      `Use one of ${allowed.join(', ')}${texture ? '' : ' (an optical reading has no coherency or texture strength; its pixels carry a confidence)'}`);
  }
}

/**
 * Weighting names of schema 1, read for one more release: 'energy' is now 'strength', 'energy-confidence'
 * 'strength-coherency', and 'confidence' on a texture field is 'coherency'. Null when `name` is not a former name
 * (for that kind of field).
 */
export function formerWeighting(name: string, texture: boolean): Weighting | null {
  if (name === 'energy') return 'strength';
  if (name === 'energy-confidence') return 'strength-coherency';
  if (name === 'confidence' && texture) return 'coherency';
  return null;
}

export interface AccumulateOptions {
  /**
   * Per-pixel group (e.g. channel bin) or -1 to leave the pixel out. Length width*height. `{ region }` is the
   * one-group case without the table: group 0 is every pixel, or those where the region mask is 1.
   */
  groups: Int32Array | { region: Uint8Array | null };
  groupCount: number;
  /** Reference axis in radians (CCW on screen): c, s are taken relative to it. */
  refRad: number;
  /** Side of the square blocks in px. */
  blockPx: number;
  weighting: Weighting;
  /**
   * One-group case only: filled with the number of usable pixels (mask and region) and the sum of their
   * unweighted confidence, counted in the same pass (a 12 MP field is then read once, not twice).
   */
  tally?: { usable: number; confidenceSum: number };
}

/**
 * Sums w, w cos 2(theta - ref), w sin 2(theta - ref) over square blocks of blockPx, separately for
 * each group. Weights (Weighting): 'none' 1, 'coherency' or 'confidence' the field's per-pixel
 * confidence layer, 'strength' the texture strength, 'strength-coherency' their product; masked pixels never count. Works a band of block rows at a time
 * with a dense scratch table, so memory stays at (blocks per row x groups) whatever the image size.
 * Runs of pixels in one group and block are summed in locals, and the rotation to the reference axis
 * is applied per block (it is linear), so the per-pixel work is a few additions.
 */
export function accumulateBlocks(f: OrientationField, o: AccumulateOptions): BlockSums[] {
  const { width, height } = f;
  const B = Math.max(1, Math.round(o.blockPx));
  const cols = Math.ceil(width / B);
  const G = o.groupCount;
  // One group has at most a block per grid cell: its lists are made that size at once.
  const lists = Array.from({ length: G }, () => new BlockList(G === 1 ? cols * Math.ceil(height / B) : 64));
  const cr = Math.cos(2 * o.refRad), sr = Math.sin(2 * o.refRad);
  const mask = f.mask;
  const groups = o.groups instanceof Int32Array ? o.groups : null;
  const region = o.groups instanceof Int32Array ? null : o.groups.region;
  if (!groups && G !== 1) throw new Error('a region mask makes one group');
  const { cos2: c2, sin2: s2 } = doubledAngles(f);
  const confidence = f.confidence;
  let usable = 0, confidenceSum = 0;
  // One weight array (or none) chosen once: a choice per pixel made this loop three times slower.
  const weights = pixelWeights(f, o.weighting);
  // One group: the tensor kernel's blockRows sums the rows (two pixels per instruction) when it is loaded.
  const kernel = groups ? null : loadedTensorKernel();
  if (kernel) {
    const bands = new BlockRowSums(kernel, width, height, B, { region: region !== null, weights: weights === null ? 'none' : weights === confidence ? 'coherency' : 'own' });
    // A group of rows at a time: each layer copied in one piece.
    for (let y = 0; y < height;) {
      const end = bands.groupEnd(y), v = bands.rows(y, end), from = y * width, to = end * width;
      v.mask.set(mask.subarray(from, to));
      if (v.region && region) v.region.set(region.subarray(from, to));
      if (v.weights && weights) v.weights.set(weights.subarray(from, to));
      v.coherency.set(confidence.subarray(from, to));
      v.c2.set(c2.subarray(from, to));
      v.s2.set(s2.subarray(from, to));
      if (bands.endRow(end - 1)) bands.flush([{ list: lists[0], cr, sr }]);
      y = end;
    }
    [usable, confidenceSum] = bands.tally();
  } else {
    const sw = new Float64Array(cols * G), sc = new Float64Array(cols * G), ss = new Float64Array(cols * G), sn = new Uint32Array(cols * G);
    const run = new Float64Array(6);
    for (let by = 0; by < height; by += B) {
      const yEnd = Math.min(height, by + B);
      for (let y = by; y < yEnd; y++) {
        const row = y * width;
        if (!groups) {
          // One group: no runs to track, only the mask (and region) to skip.
          for (let bx = 0; bx < cols; bx++) {
            sumRun(row + bx * B, row + Math.min(width, (bx + 1) * B), mask, region, weights, confidence, c2, s2, run);
            usable += run[4]; confidenceSum += run[5];
            if (run[3] > 0) { sw[bx] += run[0]; sc[bx] += run[1]; ss[bx] += run[2]; sn[bx] += run[3]; }
          }
          continue;
        }
        for (let bx = 0; bx < cols; bx++) {
          const xEnd = Math.min(width, (bx + 1) * B);
          let g = -1, w = 0, wc = 0, ws = 0, n = 0;
          for (let x = bx * B; x <= xEnd; x++) {
            const i = row + x;
            const gi = x < xEnd && mask[i] ? groups[i] : -1;
            if (gi !== g) {
              if (g >= 0 && n > 0) {
                const k = g * cols + bx;
                sw[k] += w; sc[k] += wc; ss[k] += ws; sn[k] += n;
              }
              g = gi; w = wc = ws = 0; n = 0;
            }
            if (gi < 0) continue;
            const wi = weights ? weights[i] : 1;
            if (!(wi > 0)) continue;
            w += wi; wc += wi * c2[i]; ws += wi * s2[i]; n++;
          }
        }
      }
      flushBand({ sw, sc, ss, sn }, cols, by / B, lists, cr, sr);
      clearBand({ sw, sc, ss, sn });
    }
  }
  if (o.tally) { o.tally.usable = usable; o.tally.confidenceSum = confidenceSum; }
  return lists.map((L) => L.sums());
}

/** Raw sums of one band of blocks: per block column (and group), w, w c, w s and pixels counted. */
interface BandSums { sw: Float64Array; sc: Float64Array; ss: Float64Array; sn: Uint32Array }

/** Appends a band's blocks that hold pixels to their groups' lists (group = k / cols), rotated to the reference axis (cr, sr = cos, sin of 2 ref). */
function flushBand(b: BandSums, cols: number, by: number, lists: BlockList[], cr: number, sr: number): void {
  const { sw, sc, ss, sn } = b;
  for (let k = 0; k < sn.length; k++) {
    if (sn[k] === 0) continue;
    // Rotate the block's doubled-angle sums to the reference axis.
    lists[(k / cols) | 0].push(sw[k], sc[k] * cr + ss[k] * sr, ss[k] * cr - sc[k] * sr, sn[k], k % cols, by);
  }
}

function clearBand(b: BandSums): void {
  b.sw.fill(0); b.sc.fill(0); b.ss.fill(0); b.sn.fill(0);
}

/** Pixels copied into the kernel's memory at a time. */
const KERNEL_BAND_PX = 1 << 18;

/** One reference axis of the one-group sums: its list and cos, sin of twice its angle. */
export interface BlockTarget { list: BlockList; cr: number; sr: number }

/** A row's places in the kernel's memory (BlockRowSums.row): the caller writes the row's layers there. */
export interface BlockRowViews {
  mask: Uint8Array; region: Uint8Array | null; weights: Float32Array | null; coherency: Float32Array; c2: Float32Array; s2: Float32Array;
  /** Byte offset of `mask` in the kernel's memory. */
  maskAt: number;
}

/**
 * The one-group sums of accumulateBlocks in the tensor kernel (src/wasm/tensorKernel.as.ts, blockRows), fed a
 * row at a time: the caller writes each row's layers into row(y) and calls endRow(y), rows in order from 0. The
 * rows of a band of blocks are summed in groups of up to KERNEL_BAND_PX pixels, always cut at the same rows,
 * so the sums are the same to the bit whoever writes the rows (a held field, or the texture stream). The
 * block sums (sw, sc, ss, sn) and the tally live in the kernel's memory, from `start` on (`end` after them).
 * `weights`: 'none' equal weights, 'coherency' the coherency layer itself, 'own' a layer of their own.
 */
export class BlockRowSums {
  readonly cols: number;
  readonly end: number;
  private readonly bandRows: number;
  private readonly at: { mask: number; region: number; weights: number; coherency: number; c2: number; s2: number; sums: number[]; tally: number };
  private buffer: ArrayBuffer | null = null;
  private v!: { mask: Uint8Array; region: Uint8Array | null; weights: Float32Array | null; coherency: Float32Array; c2: Float32Array; s2: Float32Array; sums: Float64Array[]; sn: Uint32Array; tally: Float64Array };
  private groupFrom = 0;

  constructor(private readonly k: KernelExports, private readonly width: number, private readonly height: number, private readonly B: number,
    private readonly layers: { region: boolean; weights: 'none' | 'coherency' | 'own' }, start?: number) {
    const mem = new KernelArena(k, start);
    this.cols = Math.ceil(width / B);
    this.bandRows = Math.max(1, Math.floor(KERNEL_BAND_PX / width));
    const px = this.bandRows * width, cols = this.cols;
    const sums = [mem.reserve(2 * cols), mem.reserve(2 * cols), mem.reserve(2 * cols), mem.reserve(cols)];
    const tally = mem.reserve(4);
    const mask = mem.reserve(px / 4 + 1), reg = layers.region ? mem.reserve(px / 4 + 1) : 0;
    const wts = layers.weights === 'own' ? mem.reserve(px) : 0, coherency = mem.reserve(px), c2 = mem.reserve(px), s2 = mem.reserve(px);
    mem.commit();
    this.end = mem.end;
    this.at = { mask, region: reg, weights: layers.weights === 'own' ? wts : layers.weights === 'coherency' ? coherency : 0, coherency, c2, s2, sums, tally };
    const v = this.views();
    v.tally.fill(0);
    for (const a of [...v.sums, v.sn]) a.fill(0);
  }

  /** Views of the kernel's memory, made again when it has grown (growing detaches the old buffer). */
  private views() {
    const buf = this.k.memory.buffer as ArrayBuffer;
    if (buf !== this.buffer) {
      const { at, cols } = this, px = this.bandRows * this.width;
      this.buffer = buf;
      this.v = {
        mask: new Uint8Array(buf, at.mask, px), region: at.region ? new Uint8Array(buf, at.region, px) : null,
        weights: this.layers.weights === 'own' ? new Float32Array(buf, at.weights, px) : null,
        coherency: new Float32Array(buf, at.coherency, px), c2: new Float32Array(buf, at.c2, px), s2: new Float32Array(buf, at.s2, px),
        sums: at.sums.slice(0, 3).map((p) => new Float64Array(buf, p, cols)), sn: new Uint32Array(buf, at.sums[3], cols),
        tally: new Float64Array(buf, at.tally, 2),
      };
    }
    return this.v;
  }

  /** Where row y's layers go (each `width` long), valid until the kernel's memory grows. */
  row(y: number): BlockRowViews {
    return this.rows(y, y + 1);
  }

  /** The row after the last of the group that row y (the next row to write) starts: rows y to it go in together. */
  groupEnd(y: number): number {
    return Math.min(this.groupFrom + this.bandRows, this.height, (Math.floor(y / this.B) + 1) * this.B);
  }

  /** Where rows y0 <= y < y1 of one group go, each layer's rows one after another (see row). */
  rows(y0: number, y1: number): BlockRowViews {
    const v = this.views(), w = this.width, from = (y0 - this.groupFrom) * w, to = (y1 - this.groupFrom) * w;
    return {
      mask: v.mask.subarray(from, to), region: v.region?.subarray(from, to) ?? null, weights: v.weights?.subarray(from, to) ?? null,
      coherency: v.coherency.subarray(from, to), c2: v.c2.subarray(from, to), s2: v.s2.subarray(from, to),
      maskAt: this.at.mask + from,
    };
  }

  /** Row y is written: sums the group it ends, if any. True when it ends a band of blocks: flush before the next row. */
  endRow(y: number): boolean {
    const B = this.B, bandEnd = Math.min(this.height, (Math.floor(y / B) + 1) * B);
    if (y + 1 - this.groupFrom < this.bandRows && y + 1 < bandEnd) return false;
    const { at } = this;
    this.k.blockRows(at.mask, at.region, at.weights, at.coherency, at.c2, at.s2, this.width, y + 1 - this.groupFrom, B, at.sums[0], at.sums[1], at.sums[2], at.sums[3], at.tally);
    this.groupFrom = y + 1;
    return y + 1 === bandEnd;
  }

  /** Appends the finished band's blocks to each target's list (rotated to its axis), then clears the sums for the next band. */
  flush(targets: BlockTarget[]): void {
    const v = this.views(), b = { sw: v.sums[0], sc: v.sums[1], ss: v.sums[2], sn: v.sn };
    const by = Math.floor((this.groupFrom - 1) / this.B);
    for (const t of targets) flushBand(b, this.cols, by, [t.list], t.cr, t.sr);
    clearBand(b);
  }

  /** Usable pixels and the sum of their coherency. */
  tally(): [number, number] {
    const t = this.views().tally;
    return [t[0], t[1]];
  }

  /**
   * The tally since it was last taken, then cleared. Each group of rows adds its own sums to the tally once
   * (the kernel's blockRows), so taking it after every row and adding the values in the same order gives
   * tally()'s numbers to the bit, also when the rows were summed in strips (src/order/streamedOrder.ts).
   */
  takeTally(): [number, number] {
    const t = this.views().tally, taken: [number, number] = [t[0], t[1]];
    t.fill(0);
    return taken;
  }
}

/** Block sums as they are found: typed arrays grown by doubling. */
export class BlockList {
  private at = 0;
  private w: Float64Array; private wc: Float64Array; private ws: Float64Array;
  private n: Uint32Array; private bx: Int32Array; private by: Int32Array;

  constructor(capacity: number) {
    const c = Math.max(1, capacity);
    this.w = new Float64Array(c); this.wc = new Float64Array(c); this.ws = new Float64Array(c);
    this.n = new Uint32Array(c); this.bx = new Int32Array(c); this.by = new Int32Array(c);
  }

  push(w: number, wc: number, ws: number, n: number, bx: number, by: number): void {
    if (this.at === this.w.length) this.grow();
    const k = this.at++;
    this.w[k] = w; this.wc[k] = wc; this.ws[k] = ws; this.n[k] = n; this.bx[k] = bx; this.by[k] = by;
  }

  private grow(): void {
    const twice = <T extends Float64Array | Uint32Array | Int32Array>(a: T): T => {
      const b = new (a.constructor as new (n: number) => T)(a.length * 2);
      b.set(a);
      return b;
    };
    this.w = twice(this.w); this.wc = twice(this.wc); this.ws = twice(this.ws);
    this.n = twice(this.n); this.bx = twice(this.bx); this.by = twice(this.by);
  }

  /** The sums found, as arrays of their own length. */
  sums(): BlockSums {
    const k = this.at;
    return { w: this.w.slice(0, k), wc: this.wc.slice(0, k), ws: this.ws.slice(0, k), n: this.n.slice(0, k), bx: this.bx.slice(0, k), by: this.by.slice(0, k) };
  }
}

/** Per-pixel weights of a weighting, or null for equal weights (the product is formed once when both count). */
function pixelWeights(f: OrientationField, weighting: Weighting): Float32Array | null {
  const conf = weighting === 'coherency' || weighting === 'confidence' || weighting === 'strength-coherency' ? f.confidence : null;
  const strength = weighting === 'strength' || weighting === 'strength-coherency' ? f.strength ?? null : null;
  weightingFits(weighting, f.method === 'texture');
  if ((weighting === 'strength' || weighting === 'strength-coherency') && !strength) throw new Error('a texture field without its strength layer');
  if (conf && strength) {
    const w = new Float32Array(conf.length);
    for (let i = 0; i < w.length; i++) w[i] = conf[i] * strength[i];
    return w;
  }
  return conf ?? strength;
}

/**
 * Sums of pixels i0 <= i < end in `out`: w, w c, w s, counted pixels, usable pixels, their confidence.
 * A function of its own so the engine compiles this loop alone, with every array of one known kind.
 */
function sumRun(
  i0: number, end: number, mask: Uint8Array, region: Uint8Array | null, weights: Float32Array | null,
  confidence: Float32Array, c2: Float32Array, s2: Float32Array, out: Float64Array,
): void {
  let w = 0, wc = 0, ws = 0, n = 0, usable = 0, conf = 0;
  for (let i = i0; i < end; i++) {
    if (!mask[i] || (region && !region[i])) continue;
    usable++; conf += confidence[i];
    const wi = weights ? weights[i] : 1;
    if (!(wi > 0)) continue;
    w += wi; wc += wi * c2[i]; ws += wi * s2[i]; n++;
  }
  out[0] = w; out[1] = wc; out[2] = ws; out[3] = n; out[4] = usable; out[5] = conf;
}
