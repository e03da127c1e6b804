import { InputError } from '../common/index.ts';
import { TENSOR_KERNEL_WASM } from './tensorKernel.wasm.ts';

/** The compiled kernel's exports (src/wasm/tensorKernel.as.ts; pointers are byte offsets, sizes in floats). */
export interface KernelExports {
  memory: WebAssembly.Memory;
  padLine(line: number, width: number, r: number, padded: number): void;
  rowPass(line: number, dst: number, stride: number, k: number, klen: number, sym: number): void;
  inputRow(line: number, width: number, stride: number, kd: number, ks: number, klen: number, rowD: number, rowS: number): number;
  gradientRow(rowsD: number, rowsS: number, kd: number, ks: number, klen: number, width: number, stride: number, ix: number, iy: number,
    lxx: number, lxy: number, lyy: number, kg: number, kglen: number, dxx: number, dxy: number, dyy: number): void;
  outputRow(rowsXX: number, rowsXY: number, rowsYY: number, kg: number, kglen: number, stride: number, lean: number, out0: number, out1: number, out2: number, out3: number): void;
  outputWindows(rowsXX: number, rowsXY: number, rowsYY: number, kg: number, kglen: number, lean: number, xs: number, count: number, tables: number,
    out0: number, out1: number, out2: number, out3: number): void;
  angles(vx: number, vy: number, angle: number, n: number): void;
  orientationWords(vx: number, vy: number, coherency: number, mask: number, n: number, table: number, entries: number, scale: number, alphaMax: number, out: number): void;
  maskPixels(strength: number, coherency: number, n: number, floor: number, least: number, mask: number): number;
  blockRows(mask: number, region: number, weights: number, coherency: number, c2: number, s2: number, width: number, rows: number, B: number,
    sw: number, sc: number, ss: number, sn: number, tally: number): void;
  pngRows(raw: number, above: number, rows: number, rowBytes: number, sixteen: number, samples: number, kind: number, table: number, width: number,
    out0: number, out1: number, out2: number): number;
  samplePlanes(src: number, n: number, sixteen: number, samples: number, kind: number, table: number, out0: number, out1: number, out2: number): void;
  lagProducts(lc: number, ls: number, on: number, len: number, L: number, step: number, num: number, cnt: number): void;
}

let loaded: KernelExports | null = null;

/** The kernel once loadTensorKernel has resolved in this thread, else null (for work that cannot wait). */
export const loadedTensorKernel = (): KernelExports | null => loaded;

let loading: Promise<KernelExports> | null = null;

/** Compiles the kernel once per thread (a 3 kB module: a few milliseconds). */
export function loadTensorKernel(): Promise<KernelExports> {
  loading ??= (async () => {
    if (typeof WebAssembly !== 'object' || typeof WebAssembly.validate !== 'function') {
      throw new InputError('this browser or Node.js has no WebAssembly', 'Use a current Chromium, Firefox, Safari or Node.js 20');
    }
    const bytes = Uint8Array.from(atob(TENSOR_KERNEL_WASM), (c) => c.charCodeAt(0));
    if (!WebAssembly.validate(bytes)) {
      throw new InputError('this browser or Node.js cannot run WebAssembly SIMD, which the structure tensor needs', 'Use Chromium 91, Firefox 89, Safari 16.4, Node.js 16.4 or newer');
    }
    const { instance } = await WebAssembly.instantiate(bytes, {});
    loaded = instance.exports as unknown as KernelExports;
    return loaded;
  })();
  return loading;
}

/** Float32 arrays laid out in the kernel's memory, rows `stride` floats apart. */
export class KernelArena {
  private next: number;

  /** `start`: the first byte offset to use (page 0 is left to the module itself; another arena's `end` to lay one after it). */
  constructor(private readonly k: KernelExports, start = 65_536) {
    this.next = Math.ceil(start / 16) * 16;
  }

  /** The byte offset after everything reserved so far. */
  get end(): number {
    return this.next;
  }

  /** Reserves `floats` floats (16-byte aligned) and returns their byte offset. */
  reserve(floats: number): number {
    const offset = this.next;
    this.next += Math.ceil((floats * 4) / 16) * 16;
    return offset;
  }

  /** Grows the memory to hold everything reserved; call before writing. */
  commit(): void {
    const need = this.next - this.k.memory.buffer.byteLength;
    if (need > 0) {
      try {
        this.k.memory.grow(Math.ceil(need / 65_536));
      } catch {
        throw new InputError(`the structure tensor needs ${(this.next / 2 ** 20).toFixed(0)} MiB for this tile and the memory could not grow`,
          'Use a smaller tile size (tilePixels) or close other tabs');
      }
    }
  }

  /** A view of `floats` floats at `offset` (valid until the memory next grows). */
  view(offset: number, floats: number): Float32Array {
    return new Float32Array(this.k.memory.buffer, offset, floats);
  }

  /** A view of `count` 32-bit addresses at `offset` (a table of row addresses). */
  addresses(offset: number, count: number): Uint32Array {
    return new Uint32Array(this.k.memory.buffer, offset, count);
  }
}
