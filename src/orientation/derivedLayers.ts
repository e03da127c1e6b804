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
