import { KernelArena, loadedTensorKernel } from '../wasm/index.ts';
import { takeFloat32 } from '../common/index.ts';
import type { OrientationField } from './types.ts';

/**
 * A texture field keeps what the tensor kernel writes (fieldFromTensor.ts, FieldPixels): strength, coherency
 * and (cos 2 theta, sin 2 theta). Its angle is made from the last two the first time it is read, and kept: the
 * order numbers never need it, so a 12 MP analysis for numbers neither computes nor holds one more full-size
 * array; pictures and exports read it.
 */

/** Floats handed to the kernel at a time when making angles. */
const ANGLE_BAND = 1 << 16;

/**
 * theta = 1/2 atan2(sin2, cos2) folded into (-pi/2, pi/2], 0 where both are 0: by the kernel's `angles` (its
 * atan2 polynomial, four pixels at a time) in bands, or by Math.atan2 where the kernel is not loaded.
 */
export function anglesOf(cos2: Float32Array, sin2: Float32Array): Float32Array {
  // Every element is written below: a pooled array need not be cleared (src/common/arrayPool.ts).
  const n = cos2.length, out = takeFloat32(n, false);
  const k = loadedTensorKernel();
  if (!k) {
    for (let i = 0; i < n; i++) {
      const t = 0.5 * Math.atan2(sin2[i], cos2[i]);
      out[i] = t <= -Math.PI / 2 ? t + Math.PI : t;
    }
    return out;
  }
  const mem = new KernelArena(k);
  const x = mem.reserve(ANGLE_BAND), y = mem.reserve(ANGLE_BAND), a = mem.reserve(ANGLE_BAND);
  mem.commit();
  const vx = mem.view(x, ANGLE_BAND), vy = mem.view(y, ANGLE_BAND), va = mem.view(a, ANGLE_BAND);
  for (let i = 0; i < n; i += ANGLE_BAND) {
    const len = Math.min(ANGLE_BAND, n - i);
    vx.set(cos2.subarray(i, i + len));
    vy.set(sin2.subarray(i, i + len));
    k.angles(x, y, a, Math.ceil(len / 4) * 4);
    out.set(va.subarray(0, len), i);
  }
  return out;
}

/**
 * Gives a texture field its angle layer as a property made when first read from cos2 and sin2 (and writable,
 * like the others). Spreading or cloning the field reads it.
 */
export function withLazyAngle<T extends Pick<OrientationField, 'cos2' | 'sin2'>>(f: T): T & Pick<OrientationField, 'angleRad'> {
  Object.defineProperty(f, 'angleRad', {
    enumerable: true, configurable: true,
    get(this: T) {
      const value = anglesOf(this.cos2!, this.sin2!);
      Object.defineProperty(this, 'angleRad', { value, writable: true, enumerable: true, configurable: true });
      return value;
    },
    set(this: T, value: Float32Array) { Object.defineProperty(this, 'angleRad', { value, writable: true, enumerable: true, configurable: true }); },
  });
  return f as T & Pick<OrientationField, 'angleRad'>;
}

/** Whether a field's angle layer is there already (not still to be made from cos2 and sin2 when first read). */
export function anglesMade(f: Pick<OrientationField, 'angleRad'>): boolean {
  const d = Object.getOwnPropertyDescriptor(f, 'angleRad');
  return !d || 'value' in d;
}

/** Whether this machine stores 32-bit words little-endian (the kernel's picture words are R, G, B, A bytes then). */
const LITTLE_ENDIAN = new Uint8Array(Uint32Array.of(1).buffer)[0] === 1;

/**
 * The orientation colour picture's RGBA bytes, as orientationRgba (src/report/colourMap.ts) makes them from the
 * angle layer (the colour table's entry floor(theta n / pi) mod n, opacity round(alphaMax x coherency clamped to
 * [0, 1]), masked pixels clear), made by the kernel's orientationWords straight from cos 2 theta and sin 2 theta
 * a band at a time: the same bytes, without the full-size angle layer and a pass over it. `tableRgb` holds the
 * table's n entries as bytes r, g, b. `into`, when given and of 4 bytes a pixel, is written (every byte) and
 * returned instead of a new array. Null where the kernel is not loaded or words are big-endian (the caller then
 * colours the angle layer).
 */
export function orientationColours(cos2: Float32Array, sin2: Float32Array, coherency: Float32Array, mask: Uint8Array,
  tableRgb: Uint8Array, alphaMax = 255, into?: Uint8ClampedArray): Uint8ClampedArray | null {
  const k = loadedTensorKernel();
  if (!k || !LITTLE_ENDIAN) return null;
  const n = cos2.length, entries = tableRgb.length / 3;
  const out = into && into.length === 4 * n && into.byteOffset % 4 === 0 ? into : new Uint8ClampedArray(4 * n);
  const mem = new KernelArena(k);
  const x = mem.reserve(ANGLE_BAND), y = mem.reserve(ANGLE_BAND), c = mem.reserve(ANGLE_BAND), m = mem.reserve(ANGLE_BAND / 4);
  const t = mem.reserve(entries), o = mem.reserve(ANGLE_BAND);
  mem.commit();
  const buf = k.memory.buffer;
  const vx = mem.view(x, ANGLE_BAND), vy = mem.view(y, ANGLE_BAND), vc = mem.view(c, ANGLE_BAND), vm = new Uint8Array(buf, m, ANGLE_BAND);
  const table = new Uint32Array(buf, t, entries), vo = new Uint32Array(buf, o, ANGLE_BAND), words = new Uint32Array(out.buffer, out.byteOffset, n);
  for (let e = 0; e < entries; e++) table[e] = tableRgb[3 * e] | (tableRgb[3 * e + 1] << 8) | (tableRgb[3 * e + 2] << 16);
  for (let i = 0; i < n; i += ANGLE_BAND) {
    const len = Math.min(ANGLE_BAND, n - i);
    vx.set(cos2.subarray(i, i + len));
    vy.set(sin2.subarray(i, i + len));
    vc.set(coherency.subarray(i, i + len));
    vm.set(mask.subarray(i, i + len));
    k.orientationWords(x, y, c, m, Math.ceil(len / 4) * 4, t, entries, entries / Math.PI, alphaMax, o);
    words.set(vo.subarray(0, len), i);
  }
  return out;
}
