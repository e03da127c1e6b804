import type { Plane } from '../common/index.ts';
import { gaussianDerivativeKernel, gaussianKernel, gaussianRadius } from './kernels.ts';
import { quantile, resolveMaskOptions } from './fieldFromTensor.ts';
import type { OrientationField } from './types.ts';

/** Reach of the derivative filter a texture field was made with, px (1 for the 3 x 3 Sobel pair). */
export function derivativeReachPx(field: OrientationField): number {
  const o = field.options as { derivative?: string; sigmaDerivPx?: number | null };
  return o.derivative === 'sobel' ? 1 : gaussianRadius(o.sigmaDerivPx ?? 1);
}

/** Reach of the integration window a texture field was made with, px. */
export function integrationReachPx(field: OrientationField): number {
  return gaussianRadius((field.options as { sigmaPx?: number }).sigmaPx ?? 2);
}

/**
 * Recomputes the texture field at the listed pixels by normalised convolution (Knutsson & Westin 1993,
 * "Normalized and differential convolution", CVPR): with a certainty map c (1 = this pixel's gradient
 * belongs to the material, 0 = it does not, e.g. it is on or next to a wall),
 *
 *   J(p) = sum_q G(q - p) c(q) grad I(q) grad I(q)^T / sum_q G(q - p) c(q),
 *
 * with the field's own derivative filter and integration Gaussian. A pixel whose window holds no
 * certain pixel is masked. Far from any c = 0 pixel this is the ordinary structure tensor, so only
 * pixels within the window's reach of the excluded ones need recomputing. The gradients are the same
 * separable filters as the field's (Gaussian derivative of sigmaDerivPx, or Sobel), evaluated directly
 * with reflected borders, and the angle, coherency, strength and doubled-angle components follow the
 * same formulas as the field's (fieldFromTensor.ts). Returns a copy of the field; the input is not
 * changed.
 */
export function recomputeWithCertainty(plane: Plane, field: OrientationField, certainty: Uint8Array, pixels: ArrayLike<number>): OrientationField {
  const { width: w, height: h } = plane;
  const o = field.options as { sigmaPx?: number; sigmaDerivPx?: number | null; derivative?: string };
  const G = gaussianKernel(o.sigmaPx ?? 2);
  const ri = (G.length - 1) / 2;
  const sobel = o.derivative === 'sobel';
  const dk = sobel ? null : gaussianDerivativeKernel(o.sigmaDerivPx ?? 1);
  const sk = sobel ? null : gaussianKernel(o.sigmaDerivPx ?? 1);
  const rd = sobel ? 1 : (dk!.length - 1) / 2;
  const refl = (i: number, n: number) => (i < 0 ? Math.min(n - 1, -i - 1) : i >= n ? Math.max(0, 2 * n - i - 1) : i);
  const I = plane.data;
  // Gradients are needed at every certain pixel within the window of a listed pixel; computed once each.
  const gx = new Map<number, number>(), gy = new Map<number, number>();
  const gradientAt = (x: number, y: number): [number, number] => {
    const i = y * w + x;
    const cached = gx.get(i);
    if (cached !== undefined) return [cached, gy.get(i)!];
    let sx = 0, sy = 0;
    if (sobel) {
      // Unnormalised 3 x 3 Sobel pair, as the field's 'sobel' option.
      for (let j = -1; j <= 1; j++) for (let k = -1; k <= 1; k++) {
        const v = I[refl(y + j, h) * w + refl(x + k, w)];
        sx += v * k * (j === 0 ? 2 : 1);
        sy += v * j * (k === 0 ? 2 : 1);
      }
    } else {
      for (let j = -rd; j <= rd; j++) {
        const row = refl(y + j, h) * w;
        for (let k = -rd; k <= rd; k++) {
          const v = I[row + refl(x + k, w)];
          sx += v * dk![k + rd] * sk![j + rd];
          sy += v * sk![k + rd] * dk![j + rd];
        }
      }
    }
    gx.set(i, sx); gy.set(i, sy);
    return [sx, sy];
  };
  const n = w * h;
  const out: OrientationField = {
    ...field,
    angleRad: Float32Array.from(field.angleRad), confidence: Float32Array.from(field.confidence), mask: Uint8Array.from(field.mask),
    strength: field.strength ? Float32Array.from(field.strength) : undefined,
    cos2: field.cos2 ? Float32Array.from(field.cos2) : undefined, sin2: field.sin2 ? Float32Array.from(field.sin2) : undefined,
  };
  const mo = resolveMaskOptions(field.options as object);
  const floor = field.strength ? mo.strengthFloor * quantile(field.strength, 0.99) : 0;
  for (let m = 0; m < pixels.length; m++) {
    const p = pixels[m];
    if (p < 0 || p >= n) continue;
    const px = p % w, py = (p - px) / w;
    let jxx = 0, jxy = 0, jyy = 0, cw = 0;
    for (let j = -ri; j <= ri; j++) {
      const y = py + j;
      if (y < 0 || y >= h) continue;
      for (let k = -ri; k <= ri; k++) {
        const x = px + k;
        if (x < 0 || x >= w || !certainty[y * w + x]) continue;
        const g = G[j + ri] * G[k + ri];
        const [ax, ay] = gradientAt(x, y);
        jxx += g * ax * ax; jxy += g * ax * ay; jyy += g * ay * ay; cw += g;
      }
    }
    if (!(cw > 1e-3)) { out.mask[p] = 0; continue; }
    jxx /= cw; jxy /= cw; jyy /= cw;
    const strength = jxx + jyy;
    const c = jyy - jxx, s = 2 * jxy;
    const root = Math.hypot(c, s);
    out.angleRad[p] = root > 0 ? 0.5 * Math.atan2(s, c) : 0;
    if (out.angleRad[p] <= -Math.PI / 2) out.angleRad[p] += Math.PI;
    out.confidence[p] = strength > 0 ? root / strength : 0;
    if (out.strength) out.strength[p] = strength;
    if (out.cos2) out.cos2[p] = root > 0 ? c / root : 1;
    if (out.sin2) out.sin2[p] = root > 0 ? s / root : 0;
    out.mask[p] = strength > floor && out.confidence[p] >= mo.coherencyMin ? 1 : 0;
  }
  return out;
}
