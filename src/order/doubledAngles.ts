import type { OrientationField } from '../orientation/types.ts';

/**
 * cos 2 theta and sin 2 theta of every pixel: the field's own arrays when it has them (texture fields
 * get them from the tensor with no trigonometry), else computed once here (optical readings). Order
 * statistics read these arrays in their pixel loops rather than taking cos and sin per pixel.
 */
export function doubledAngles(f: OrientationField): { cos2: Float32Array; sin2: Float32Array } {
  if (f.cos2 && f.sin2) return { cos2: f.cos2, sin2: f.sin2 };
  const n = f.width * f.height, a = f.angleRad;
  const cos2 = new Float32Array(n), sin2 = new Float32Array(n);
  for (let i = 0; i < n; i++) { cos2[i] = Math.cos(2 * a[i]); sin2[i] = Math.sin(2 * a[i]); }
  return { cos2, sin2 };
}
