import { InputError } from '../common/index.ts';
import { TENSOR_KERNEL_WASM } from './tensorKernel.wasm.ts';

/** The compiled kernel's exports (src/wasm/tensorKernel.as.ts; pointers are byte offsets, sizes in floats). */
export interface KernelExports {
  memory: WebAssembly.Memory;
  rowFilter(src: number, dst: number, width: number, height: number, stride: number, k: number, klen: number, line: number): void;
  columnFilter(src: number, dst: number, height: number, stride: number, k: number, klen: number, rows: number): void;
  products(ix: number, iy: number, xx: number, xy: number, yy: number, n: number): void;
  fieldPixels(jxx: number, jxy: number, jyy: number, angle: number, confidence: number, strength: number, cos2: number, sin2: number, n: number): void;
}

let loading: Promise<KernelExports> | null = null;

/** Compiles the kernel once per thread (a 2 kB module: a few milliseconds). */
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
    return instance.exports as unknown as KernelExports;
  })();
  return loading;
}

/** Float32 arrays laid out in the kernel's memory, rows `stride` floats apart. */
export class KernelArena {
  private next = 65_536; // page 0 is left to the module itself

  constructor(private readonly k: KernelExports) {}

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
}
