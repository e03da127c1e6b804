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
 * "Normalized and differential convolution", CVPR) with a certainty map c (1 = this pixel's intensity
 * belongs to the material, 0 = it does not, e.g. it is on a wall or within the optics' blur of one):
 *
 *   J(p) = sum_q G(q - p) c(q) g(q) g(q)^T / sum_q G(q - p) c(q),
 *
 * with the field's integration Gaussian G. The gradient g(q) is the field's own derivative filter
 * (Gaussian derivative of sigmaDerivPx, or Sobel; reflected borders) where its window holds only
 * certain pixels, and otherwise the normalised differential convolution: the slope of a plane fitted
 * by weighted least squares to the certain intensities in that window, scaled to the filter's response
 * to a ramp, so material right up to the wall keeps its gradients without reading the wall's edge. A
 * pixel whose window holds no usable gradient is masked. Far from any c = 0 pixel this is the ordinary
 * structure tensor, so only pixels within the derivative and integration reach of the excluded ones
 * need recomputing. The angle, coherency, strength and doubled-angle components follow the same
 * formulas as the field's (fieldFromTensor.ts). Returns a copy of the field; the input is not changed.
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
  // The filter's separable weights (smoothing s, derivative d) and its response D to the ramp I = x,
  // so a fitted slope b gives the gradient the filter itself would: D * b (see gradientAt).
  const sw = sobel ? [1, 2, 1] : Array.from(sk!);
  const dw = sobel ? [-1, 0, 1] : Array.from(dk!);
  let ramp = 0;
  for (let k = -rd; k <= rd; k++) ramp += dw[k + rd] * k;
  ramp *= sw.reduce((a, b) => a + b, 0);
  // Gradients are needed at every certain pixel within the window of a listed pixel; computed once each.
  const gx = new Map<number, number>(), gy = new Map<number, number>();
  const gradientAt = (x: number, y: number): [number, number] => {
    const i = y * w + x;
    const cached = gx.get(i);
    if (cached !== undefined) return [cached, gy.get(i)!];
    let sx = 0, sy = 0, whole = true;
    for (let j = -rd; j <= rd && whole; j++) {
      const row = refl(y + j, h) * w;
      for (let k = -rd; k <= rd; k++) if (!certainty[row + refl(x + k, w)]) { whole = false; break; }
    }
    if (whole) {
      for (let j = -rd; j <= rd; j++) {
        const row = refl(y + j, h) * w;
        for (let k = -rd; k <= rd; k++) {
          const v = I[row + refl(x + k, w)];
          sx += v * dw[k + rd] * sw[j + rd];
          sy += v * sw[k + rd] * dw[j + rd];
        }
      }
    } else {
      // Normalised differential convolution (Knutsson & Westin 1993; Westin 1994, thesis ch. 4): the
      // plane a + b.(q - p) fitted to the certain intensities only, weighted by the filter's smoothing
      // window; its slope b scaled by the filter's ramp response gives what the filter would read if the
      // material went on past the wall. For a window of certain pixels the two agree.
      let m0 = 0, mx = 0, my = 0, mxx = 0, mxy = 0, myy = 0, v0 = 0, vx = 0, vy = 0;
      for (let j = -rd; j <= rd; j++) {
        const yy = y + j;
        if (yy < 0 || yy >= h) continue;
        for (let k = -rd; k <= rd; k++) {
          const xx = x + k;
          if (xx < 0 || xx >= w || !certainty[yy * w + xx]) continue;
          const a = sw[j + rd] * sw[k + rd], v = I[yy * w + xx];
          m0 += a; mx += a * k; my += a * j; mxx += a * k * k; mxy += a * k * j; myy += a * j * j;
          v0 += a * v; vx += a * k * v; vy += a * j * v;
        }
      }
      // Solve [m0 mx my; mx mxx mxy; my mxy myy] [c bx by]^T = [v0 vx vy]^T (Cramer's rule).
      const det = m0 * (mxx * myy - mxy * mxy) - mx * (mx * myy - mxy * my) + my * (mx * mxy - mxx * my);
      // A window whose certain pixels (nearly) lie on one line does not determine a plane: no gradient.
      if (!(det > 1e-6 * m0 * m0 * m0)) { gx.set(i, NaN); gy.set(i, NaN); return [NaN, NaN]; }
      const bx = (m0 * (vx * myy - mxy * vy) - v0 * (mx * myy - mxy * my) + my * (mx * vy - vx * my)) / det;
      const by = (m0 * (mxx * vy - vx * mxy) - mx * (mx * vy - vx * my) + v0 * (mx * mxy - mxx * my)) / det;
      sx = ramp * bx; sy = ramp * by;
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
        if (ax !== ax) continue;
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
