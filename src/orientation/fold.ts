import { degToRad, radToDeg, wrapAxialDeg } from '../common/index.ts';
import type { OrientationField } from './types.ts';
import { opticsKernel, OpticsLayout } from '../wasm/index.ts';

/**
 * For a field known only modulo 90 deg (crossed polars alone cannot tell the slow axis from the fast
 * one), picks for every pixel the representative within 45 deg of `centreDeg`: the stated assumption
 * "orientations lie within 45 deg of this axis". Then S_axis against that axis is <|cos 2(theta - axis)|>.
 * Only pixels still ambiguous (field.ambiguous, when present) are moved. Fields with another (or no)
 * ambiguity are returned unchanged. A field's cos 2 theta and sin 2 theta, when it has them, are carried
 * over: both change sign where the angle moves by 90 deg. With `inPlace` (for a reader folding the field it
 * has just made, that nothing else holds) the field's own arrays are changed rather than copied.
 */
export function foldMod90(f: OrientationField, centreDeg: number, inPlace = false): OrientationField {
  if (f.ambiguity !== 'mod-90') return f;
  const c = degToRad(centreDeg), n = f.angleRad.length;
  const from = f.angleRad, angleRad = inPlace ? from : new Float32Array(n);
  const both = f.cos2 && f.sin2;
  const cos2 = both ? (inPlace ? f.cos2! : Float32Array.from(f.cos2!)) : undefined;
  const sin2 = both ? (inPlace ? f.sin2! : Float32Array.from(f.sin2!)) : undefined;
  foldInKernel(from, angleRad, cos2 ?? null, sin2 ?? null, f.ambiguous ?? null, c);
  return {
    ...f, angleRad, cos2, sin2,
    options: { ...f.options, mod90FoldedAboutDeg: wrapAxialDeg(centreDeg) },
    warnings: [...f.warnings, `orientation known only modulo 90 deg: taken within 45 deg of ${wrapAxialDeg(centreDeg).toFixed(1)} deg`],
  };
}

/** Pixels per call of the optics kernel's fold. */
const FOLD_BLOCK_PX = 1 << 14;

/**
 * The fold of every pixel, a block at a time in the optics kernel (src/wasm/opticsKernel.as.ts: foldMod90, the same
 * float64 operations as foldPixel's, two pixels per instruction): each block's angles, cos 2 theta, sin 2 theta and
 * ambiguous flags copied into its memory and the results copied out into angleRad, cos2 and sin2; the few pixels it
 * leaves (see there) are folded by foldPixel.
 */
function foldInKernel(from: Float32Array, angleRad: Float32Array, cos2: Float32Array | null, sin2: Float32Array | null, only: Uint8Array | null, c: number): void {
  const k = opticsKernel(), mem = new OpticsLayout(k), n = from.length, B = Math.min(Math.max(n, 1), FOLD_BLOCK_PX);
  const at = { angle: mem.reserve(4 * B), cos2: cos2 ? mem.reserve(4 * B) : 0, sin2: cos2 ? mem.reserve(4 * B) : 0, only: only ? mem.reserve(B) : 0, slow: mem.reserve(B) };
  mem.commit();
  const angleView = mem.f32(at.angle, B), cos2View = cos2 ? mem.f32(at.cos2, B) : null, sin2View = cos2 ? mem.f32(at.sin2, B) : null;
  const onlyView = only ? mem.u8(at.only, B) : null, slowView = mem.u8(at.slow, B);
  slowView.fill(0);
  const whole = (v: Float32Array, len: number) => (len === B ? v : v.subarray(0, len));
  for (let i0 = 0; i0 < n; i0 += B) {
    const len = Math.min(B, n - i0), i1 = i0 + len;
    angleView.set(from.subarray(i0, i1));
    if (cos2) { cos2View!.set(cos2.subarray(i0, i1)); sin2View!.set(sin2!.subarray(i0, i1)); }
    if (onlyView) onlyView.set(only!.subarray(i0, i1));
    const slow = k.foldMod90(at.angle, at.cos2, at.sin2, at.only, len, c, at.slow);
    angleRad.set(whole(angleView, len), i0);
    if (cos2) { cos2.set(whole(cos2View!, len), i0); sin2!.set(whole(sin2View!, len), i0); }
    if (slow === 0) continue;
    for (let t = 0; t < len; t++) if (slowView[t]) foldPixel(from, angleRad, cos2, sin2, c, i0 + t);
    slowView.fill(0);
  }
}

/**
 * Pixel i's representative within 45 deg of c (radians), into angleRad[i]; cos2[i] and sin2[i] change sign where the
 * angle moves by an odd multiple of 90 deg.
 */
function foldPixel(from: Float32Array, angleRad: Float32Array, cos2: Float32Array | null, sin2: Float32Array | null, c: number, i: number): void {
  const q = Math.PI / 4, h = Math.PI / 2;
  let d = from[i] - c;
  let k = Math.round(d / h);
  d -= h * k; // into [-45, 45] deg
  if (d <= -q) { d += h; k--; }
  // wrapAxialRad(c + d), whose remainder is the value itself below pi in size.
  const x = c + d;
  let a = x < Math.PI && x > -Math.PI ? x : x % Math.PI;
  if (a <= -h) a += Math.PI;
  if (a > h) a -= Math.PI;
  angleRad[i] = a;
  // The angle moved by k * 90 deg (mod 180): an odd k turns 2 theta by 180 deg.
  if (cos2 && k & 1) { cos2[i] = -cos2[i]; sin2![i] = -sin2![i]; }
}

/**
 * The axis, deg in [0, 90), of sums C = sum w cos 4 theta and S = sum w sin 4 theta: 1/4 atan2(S, C).
 */
export function mod90AxisOfSums(c: number, s: number): number {
  let a = radToDeg(0.25 * Math.atan2(s, c));
  if (a < 0) a += 90;
  return a;
}

/**
 * The axis a mod-90 field is most concentrated about: 1/4 arg <exp(4 i theta)> over usable pixels,
 * weighted by confidence, which is defined modulo 90 deg like the data; returned in [0, 90).
 */
export function mod90Axis(f: OrientationField): number {
  let c = 0, s = 0;
  for (let i = 0; i < f.angleRad.length; i++) {
    if (!f.mask[i]) continue;
    const w = f.confidence[i];
    c += w * Math.cos(4 * f.angleRad[i]); s += w * Math.sin(4 * f.angleRad[i]);
  }
  return mod90AxisOfSums(c, s);
}

/** Distance from the fold's boundary (45 deg from its axis) within which foldEdgeShare counts a pixel, deg. */
export const FOLD_EDGE_DEG = 10;
/**
 * Largest share of a folded field's usable pixels that may lie, still ambiguous, within FOLD_EDGE_DEG of the fold's
 * boundary for its order numbers to be given. A pixel beyond the boundary is folded back inside it and reads
 * cos 2(theta - axis) too high. How many lie beyond cannot be seen; how many lie just inside can, and for any smooth
 * spread of directors the two go together. For the worst case of a smooth spread, a share p of isotropic pixels
 * among aligned ones, the folded S reads 2/pi p = 0.64 p too high while 10/45 p = 0.22 p lie within 10 deg of the
 * boundary (derived): 1 % there means about 0.03 of bias, the channel goal. For a wrapped-normal spread of directors
 * it withholds below S of about 0.88, where the bias is still under 0.005 (derived): a cautious rule, our own choice.
 */
export const FOLD_EDGE_MAX_SHARE = 0.01;

/**
 * The usable pixels (mask) of a folded mod-90 field that are still ambiguous (field.ambiguous, when present) and lie
 * within FOLD_EDGE_DEG of 45 deg from the axis they were folded about (options.mod90FoldedAboutDeg): 1 there, else
 * 0. null for a field with no mod-90 ambiguity or not folded.
 */
export function foldEdgeMap(f: OrientationField): Uint8Array | null {
  const centre = (f.options as { mod90FoldedAboutDeg?: number }).mod90FoldedAboutDeg;
  if (f.ambiguity !== 'mod-90' || typeof centre !== 'number') return null;
  const c = degToRad(centre), edge = degToRad(45 - FOLD_EDGE_DEG), only = f.ambiguous;
  const out = new Uint8Array(f.angleRad.length);
  for (let i = 0; i < out.length; i++) {
    if (!f.mask[i] || (only && !only[i])) continue;
    // Distance from the axis, folded into [0, 45] deg: the field's angles are axial and known modulo 90 deg.
    let d = Math.abs(f.angleRad[i] - c) % (Math.PI / 2);
    if (d > Math.PI / 4) d = Math.PI / 2 - d;
    if (d >= edge) out[i] = 1;
  }
  return out;
}

/** Share of a folded mod-90 field's usable pixels that foldEdgeMap marks; NaN where it gives no map or no pixel is usable. */
export function foldEdgeShare(f: OrientationField): number {
  const map = foldEdgeMap(f);
  if (!map) return NaN;
  let usable = 0, near = 0;
  for (let i = 0; i < map.length; i++) if (f.mask[i]) { usable++; near += map[i]; }
  return usable ? near / usable : NaN;
}
