import type { OrientationField } from '../orientation/index.ts';

/**
 * cos 2 theta and sin 2 theta of every pixel: the field's own arrays when it has them (texture fields
 * get them from the tensor with no trigonometry), else computed here once per reading (optical
 * readings). Order statistics read these arrays in their pixel loops rather than taking cos and sin.
 */
export function doubledAngles(f: OrientationField): { cos2: Float32Array; sin2: Float32Array } {
  if (f.cos2 && f.sin2) return { cos2: f.cos2, sin2: f.sin2 };
  const a = f.angleRad;
  let known = computed.get(a);
  if (!known) {
    const n = a.length, cos2 = new Float32Array(n), sin2 = new Float32Array(n);
    for (let i = 0; i < n; i++) { cos2[i] = Math.cos(2 * a[i]); sin2[i] = Math.sin(2 * a[i]); }
    known = { cos2, sin2 };
    computed.set(a, known);
  }
  return known;
}

/**
 * Per angle array, so the correlation length and each block sum of one reading share one computation
 * (angles are written once, when a reading is made, and never changed after).
 */
const computed = new WeakMap<Float32Array, { cos2: Float32Array; sin2: Float32Array }>();
