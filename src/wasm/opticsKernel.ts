import { InputError } from '../common/index.ts';
import { OPTICS_KERNEL_WASM } from './opticsKernel.wasm.ts';

/** The optical readings' kernel exports (src/wasm/opticsKernel.as.ts; pointers are byte offsets, counts in elements). */
export interface OpticsKernelExports {
  memory: WebAssembly.Memory;
  intensityRgb(r: number, g: number, b: number, n: number, full: number, table: number, out: number, clip: number): number;
  intensityGrey(p: number, n: number, full: number, table: number, out: number, clip: number): number;
  fitFour(i0: number, i1: number, i2: number, i3: number, dark: number, flat: number, flatMean: number, clip: number, n: number, c: number,
    angle: number, amplitude: number, residual: number, bg: number, confidence: number, cos2: number, sin2: number, mask: number, sums: number, counts: number): void;
  plateCells(r: number, g: number, b: number, n: number, bits: number, full: number, levels: number, subs: number, clip: number, index: number, fresh: number, counts: number): number;
  plateWrite(subs: number, n: number, index: number, readings: number, angle: number, retardance: number, confidence: number, cos2: number, sin2: number, mask: number, sum: number): number;
  pairCells(ra: number, ga: number, ba: number, rb: number, gb: number, bb: number, n: number, bits: number, full: number, levelsA: number, levelsB: number,
    clip: number, table: number, shift: number, cache: number, hits: number, cellsB: number, fresh: number, counts: number): number;
  pairRehash(from: number, fromShift: number, to: number, toShift: number): void;
  pairWrite(hits: number, n: number, table: number, angle: number, retardance: number, confidence: number, cos2: number, sin2: number, mask: number, sum: number): number;
  lookupXyz(ch: number, sh: number, nRp: number, nL: number, nA: number, rows: number, comp: number, cC: number, sC: number, cpH: number, spH: number,
    ax: number, ay: number, wx: number, wy: number, wz: number, out: number): void;
  rankHigh(bits: number, mask: number, minOf: number, min: number, n: number, high: number, stats: number, atLeast: number): number;
  rankLow(bits: number, mask: number, minOf: number, min: number, n: number, slot: number, low: number, any: number, w0: number, w1: number, w2: number, w3: number): void;
  foldMod90(angle: number, cos2: number, sin2: number, only: number, n: number, c: number, slow: number): number;
  fft2(re: number, im: number, n: number, twr: number, twi: number, rev: number): void;
  lowAmplitude(mask: number, amplitude: number, n: number, limit: number, out: number): number;
  cellRows(C: number, es: number, nR: number, nRows: number, stride: number, coarse: number, nCp: number, boxes: number, nBoxes: number, nBp: number, boxEntries: number,
    labs: number, nCells: number, guesses: number, bounds: number, dists: number, rows: number): void;
  pairRead(C: number, D: number, es: number, nA: number, nR: number, stride: number, nRows: number, angles: number, rets: number, aStep: number, rStep: number,
    a0: number, a1: number, a2: number, b0: number, b1: number, b2: number, ra: number, rb: number, bj: number, bk: number, costs: number, out: number): void;
}

let instance: OpticsKernelExports | null = null;

/** Where the sRGB decode table lives in the kernel's memory (written once per thread by decodeTableIn), and its size. */
const DECODE_TABLE_AT = 65_536, DECODE_TABLE_ENTRIES = 65_536;
let decodeTableWritten = false;

/**
 * The byte offset of the 65536-entry sRGB decode table in the kernel's memory, written there from `make()` the first
 * time (OpticsLayout keeps its arrays after it).
 */
export function decodeTableIn(k: OpticsKernelExports, make: () => Float32Array): number {
  if (!decodeTableWritten) {
    new Float32Array(k.memory.buffer, DECODE_TABLE_AT, DECODE_TABLE_ENTRIES).set(make());
    decodeTableWritten = true;
  }
  return DECODE_TABLE_AT;
}

/**
 * The kernel, compiled on first use in this thread. Synchronously (the readers are synchronous functions): Node.js,
 * the CLI and the app's Web Worker allow that for a module of any size (a browser's main thread only for small ones,
 * and no reading runs there).
 */
export function opticsKernel(): OpticsKernelExports {
  if (instance) return instance;
  if (typeof WebAssembly !== 'object' || typeof WebAssembly.Module !== 'function') {
    throw new InputError('this browser or Node.js has no WebAssembly', 'Use a current Chromium, Firefox, Safari or Node.js 20');
  }
  const bytes = Uint8Array.from(atob(OPTICS_KERNEL_WASM), (c) => c.charCodeAt(0));
  if (!WebAssembly.validate(bytes)) {
    throw new InputError('this browser or Node.js cannot run WebAssembly SIMD, which the optical readings need', 'Use Chromium 91, Firefox 89, Safari 16.4, Node.js 16.4 or newer');
  }
  const k = new WebAssembly.Instance(new WebAssembly.Module(bytes), {}).exports as unknown as OpticsKernelExports;
  const need = DECODE_TABLE_AT + 4 * DECODE_TABLE_ENTRIES - k.memory.buffer.byteLength;
  if (need > 0) k.memory.grow(Math.ceil(need / 65_536));
  instance = k;
  return k;
}

/**
 * Arrays laid out one after another in the optics kernel's memory (after page 0, the module's own, and the decode
 * table), each 16-byte aligned. Reserve everything, then `commit` (grows the memory), then take views: a view stays valid
 * until the memory next grows, so a reading lays out all it needs before it starts.
 */
export class OpticsLayout {
  private next = DECODE_TABLE_AT + 4 * DECODE_TABLE_ENTRIES;
  constructor(readonly k: OpticsKernelExports) {}

  /** Reserves `bytes` bytes and returns their byte offset. */
  reserve(bytes: number): number {
    const offset = this.next;
    this.next += Math.ceil(bytes / 16) * 16;
    return offset;
  }

  /** Gives back everything reserved from byte `offset` on (to lay out again from there). */
  release(offset: number): void {
    this.next = Math.min(this.next, Math.ceil(offset / 16) * 16);
  }

  /** Grows the memory to hold everything reserved. */
  commit(): void {
    const need = this.next - this.k.memory.buffer.byteLength;
    if (need <= 0) return;
    try {
      this.k.memory.grow(Math.ceil(need / 65_536));
    } catch {
      throw new InputError(`the optical reading needs ${(this.next / 2 ** 20).toFixed(0)} MiB of working memory and it could not grow`, 'Close other programs or tabs, or read a smaller image');
    }
  }

  f32(offset: number, count: number): Float32Array { return new Float32Array(this.k.memory.buffer, offset, count); }
  f64(offset: number, count: number): Float64Array { return new Float64Array(this.k.memory.buffer, offset, count); }
  i32(offset: number, count: number): Int32Array { return new Int32Array(this.k.memory.buffer, offset, count); }
  u8(offset: number, count: number): Uint8Array { return new Uint8Array(this.k.memory.buffer, offset, count); }
  u16(offset: number, count: number): Uint16Array { return new Uint16Array(this.k.memory.buffer, offset, count); }
}
