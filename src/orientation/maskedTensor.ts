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
 * formulas as the field's (fieldFromTensor.ts). Returns the listed pixels' new values (FieldPatch; read the
 * field with them through withFieldPatch); the input is not changed.
 */
export function recomputeWithCertainty(plane: Plane, field: OrientationField, certainty: Uint8Array, pixels: ArrayLike<number>): FieldPatch {
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
  // Gradients are needed at every certain pixel within the window of a listed pixel: computed once each, into
  // arrays laid out by the rows' runs of such pixels (neededRuns), so the windows read them without a lookup.
  const gradientAt = (x: number, y: number): [number, number] => {
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
      return [sx, sy];
    }
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
    if (!(det > 1e-6 * m0 * m0 * m0)) return [NaN, NaN];
    const bx = (m0 * (vx * myy - mxy * vy) - v0 * (mx * myy - mxy * my) + my * (mx * vy - vx * my)) / det;
    const by = (m0 * (mxx * vy - vx * mxy) - mx * (mx * vy - vx * my) + v0 * (mx * mxy - mxx * my)) / det;
    return [ramp * bx, ramp * by];
  };
  const n = w * h;
  // The new values of the listed pixels only (a whole copy of the field would double what a large image holds).
  const m0 = pixels.length;
  const out: FieldPatch = {
    pixels: Int32Array.from(pixels), angleRad: new Float32Array(m0), confidence: new Float32Array(m0), mask: new Uint8Array(m0),
    strength: field.strength ? new Float32Array(m0) : undefined, cos2: field.cos2 ? new Float32Array(m0) : undefined, sin2: field.sin2 ? new Float32Array(m0) : undefined,
  };
  for (let m = 0; m < m0; m++) {
    const p = out.pixels[m];
    if (p < 0 || p >= n) { out.pixels[m] = -1; continue; }
    out.angleRad[m] = field.angleRad[p]; out.confidence[m] = field.confidence[p]; out.mask[m] = field.mask[p];
    if (out.strength) out.strength[m] = field.strength![p];
    if (out.cos2) out.cos2[m] = field.cos2![p];
    if (out.sin2) out.sin2[m] = field.sin2![p];
  }
  const mo = resolveMaskOptions(field.options as object);
  const floor = field.strength ? mo.strengthFloor * quantile(field.strength, 0.99) : 0;
  const runs = neededRuns(out.pixels, w, h, ri);
  const gxs = new Float64Array(runs.slots), gys = new Float64Array(runs.slots);
  for (let y = 0; y < h; y++) {
    const r = runs.byRow[y];
    for (let q = 0; q < r.length; q += 3) {
      for (let x = r[q]; x <= r[q + 1]; x++) {
        if (!certainty[y * w + x]) continue;
        const [ax, ay] = gradientAt(x, y);
        gxs[r[q + 2] + x - r[q]] = ax; gys[r[q + 2] + x - r[q]] = ay;
      }
    }
  }
  for (let m = 0; m < m0; m++) {
    const p = out.pixels[m];
    if (p < 0) continue;
    const px = p % w, py = (p - px) / w;
    let jxx = 0, jxy = 0, jyy = 0, cw = 0;
    for (let j = -ri; j <= ri; j++) {
      const y = py + j;
      if (y < 0 || y >= h) continue;
      // The run of row y holding this window's columns: its gradients from slot `base` + x.
      const base = runs.slotBase(y, Math.max(0, px - ri));
      for (let k = -ri; k <= ri; k++) {
        const x = px + k;
        if (x < 0 || x >= w || !certainty[y * w + x]) continue;
        const g = G[j + ri] * G[k + ri];
        const ax = gxs[base + x], ay = gys[base + x];
        if (ax !== ax) continue;
        jxx += g * ax * ax; jxy += g * ax * ay; jyy += g * ay * ay; cw += g;
      }
    }
    if (!(cw > 1e-3)) { out.mask[m] = 0; continue; }
    jxx /= cw; jxy /= cw; jyy /= cw;
    const strength = jxx + jyy;
    const c = jyy - jxx, s = 2 * jxy;
    const root = Math.hypot(c, s);
    out.angleRad[m] = root > 0 ? 0.5 * Math.atan2(s, c) : 0;
    if (out.angleRad[m] <= -Math.PI / 2) out.angleRad[m] += Math.PI;
    out.confidence[m] = strength > 0 ? root / strength : 0;
    if (out.strength) out.strength[m] = strength;
    if (out.cos2) out.cos2[m] = root > 0 ? c / root : 1;
    if (out.sin2) out.sin2[m] = root > 0 ? s / root : 0;
    out.mask[m] = strength > floor && out.confidence[m] >= mo.coherencyMin ? 1 : 0;
  }
  return out;
}

/**
 * The pixels within `r` columns and rows of the listed ones (-1: none), row by row as runs of columns: byRow[y]
 * holds [first, last, slot] triples in column order, slot being where the run's first pixel goes in arrays of
 * `slots` entries; slotBase(y, x) is the slot of row y's pixel 0 in the run holding column x (which must be in one).
 */
function neededRuns(pixels: Int32Array, w: number, h: number, r: number): { byRow: Int32Array[]; slots: number; slotBase(y: number, x: number): number } {
  const columns: number[][] = Array.from({ length: h }, () => []);
  for (const p of pixels) if (p >= 0) columns[Math.floor(p / w)].push(p % w);
  // Each listed row's columns widened by r and merged, then each row's runs from the listed rows within r of it.
  const merge = (spans: number[][]): number[][] => {
    spans.sort((a, b) => a[0] - b[0]);
    const out: number[][] = [];
    for (const s of spans) {
      const last = out[out.length - 1];
      if (last && s[0] <= last[1] + 1) last[1] = Math.max(last[1], s[1]);
      else out.push([s[0], s[1]]);
    }
    return out;
  };
  const listed = columns.map((xs) => merge(xs.map((x) => [Math.max(0, x - r), Math.min(w - 1, x + r)])));
  const byRow: Int32Array[] = [];
  let slots = 0;
  for (let y = 0; y < h; y++) {
    const spans: number[][] = [];
    for (let t = Math.max(0, y - r); t <= Math.min(h - 1, y + r); t++) for (const s of listed[t]) spans.push([s[0], s[1]]);
    const row = merge(spans), flat = new Int32Array(3 * row.length);
    row.forEach(([a, b], q) => { flat.set([a, b, slots], 3 * q); slots += b - a + 1; });
    byRow.push(flat);
  }
  return {
    byRow, slots,
    slotBase(y, x) {
      const row = byRow[y];
      for (let q = 0; q < row.length; q += 3) if (x >= row[q] && x <= row[q + 1]) return row[q + 2] - row[q];
      throw new Error(`column ${x} of row ${y} is not in a run`);
    },
  };
}

/** New values for some pixels of a field (pixel index -1: none), as recomputeWithCertainty gives them. */
export interface FieldPatch {
  pixels: Int32Array;
  angleRad: Float32Array; confidence: Float32Array; mask: Uint8Array;
  strength?: Float32Array; cos2?: Float32Array; sin2?: Float32Array;
}

/** Swaps the patch's values with the field's (twice restores the field). */
function swapPatch(field: OrientationField, patch: FieldPatch): void {
  const pairs: [Float32Array | Uint8Array | undefined, Float32Array | Uint8Array | undefined][] = [
    [field.angleRad, patch.angleRad], [field.confidence, patch.confidence], [field.mask, patch.mask],
    [field.strength, patch.strength], [field.cos2, patch.cos2], [field.sin2, patch.sin2],
  ];
  for (const [f, q] of pairs) {
    if (!f || !q) continue;
    for (let m = 0; m < patch.pixels.length; m++) {
      const p = patch.pixels[m];
      if (p < 0) continue;
      const v = f[p]; f[p] = q[m]; q[m] = v;
    }
  }
}

/**
 * Runs `use` on the field with the patch applied, then puts the field back as it was: the field is lent,
 * not copied, so `use` must be synchronous and must not keep the field's arrays.
 */
export function withFieldPatch<T>(field: OrientationField, patch: FieldPatch, use: (patched: OrientationField) => T): T {
  swapPatch(field, patch);
  try { return use(field); } finally { swapPatch(field, patch); }
}
