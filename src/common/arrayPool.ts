/**
 * Large typed arrays handed back by their owner for the next image of the same size. A fresh array's memory
 * is zeroed by the operating system page by page on first touch, about 0.5 ms per MB here: a 12 MP analysis
 * touches some 200 MB, so a command reading a batch of images spent a quarter of its time there. An array
 * taken from the pool is zeroed again (memory-speed, some 20 times quicker), so it is in every way a new
 * array; only the one who gives arrays back must be sure nothing else still reads them.
 */

type Kind = Float32ArrayConstructor | Uint8ArrayConstructor | Int32ArrayConstructor;
type Pooled = Float32Array | Uint8Array | Int32Array;

/** Bytes the pool keeps at most; arrays given back beyond this are left to the garbage collector. */
const MAX_POOL_BYTES = 600_000_000;
/**
 * Arrays below this size are left to the allocator, which reuses small blocks without new pages (from 128 KiB
 * up it maps fresh pages for each: a 1280 x 720 image's mask and joined PNG data cost 500 page faults each).
 */
const MIN_POOLED_BYTES = 1 << 17;

const pool: Pooled[] = [];
let pooledBytes = 0;

function take<T extends Pooled>(kind: Kind, length: number, zeroed: boolean): T {
  const k = pool.findIndex((a) => a.constructor === kind && a.length === length);
  if (k < 0) return new kind(length) as T;
  const [a] = pool.splice(k, 1);
  pooledBytes -= a.byteLength;
  return (zeroed ? a.fill(0) : a) as T;
}

/**
 * A zeroed Float32Array of `length` floats: a pooled one when there is one of that length, else new. With
 * `zeroed` false a pooled array keeps its old values: only for a caller that writes every element before
 * anything reads it.
 */
export const takeFloat32 = (length: number, zeroed = true): Float32Array => take<Float32Array>(Float32Array, length, zeroed);

/** A Uint8Array of `length` bytes, as takeFloat32. */
export const takeUint8 = (length: number, zeroed = true): Uint8Array => take<Uint8Array>(Uint8Array, length, zeroed);

/** An Int32Array of `length` integers, as takeFloat32. */
export const takeInt32 = (length: number, zeroed = true): Int32Array => take<Int32Array>(Int32Array, length, zeroed);

/**
 * Gives arrays back for reuse. The caller promises that nothing reads or writes them any more. Views of part
 * of a buffer, arrays of other kinds and small arrays are ignored.
 */
export function giveBack(...arrays: (ArrayBufferView | null | undefined)[]): void {
  for (const a of arrays) {
    if (!(a instanceof Float32Array || a instanceof Uint8Array || a instanceof Int32Array) || a.byteLength < MIN_POOLED_BYTES) continue;
    if (a.byteOffset !== 0 || a.byteLength !== a.buffer.byteLength || !(a.buffer instanceof ArrayBuffer)) continue;
    if (pool.includes(a) || pooledBytes + a.byteLength > MAX_POOL_BYTES) continue;
    pool.push(a);
    pooledBytes += a.byteLength;
  }
}
