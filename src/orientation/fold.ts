import { degToRad, radToDeg, wrapAxialDeg, wrapAxialRad } from '../common/index.ts';
import type { OrientationField } from './types.ts';

/**
 * For a field known only modulo 90 deg (crossed polars alone cannot tell the slow axis from the fast
 * one), picks for every pixel the representative within 45 deg of `centreDeg`: the stated assumption
 * "orientations lie within 45 deg of this axis". Then S_axis against that axis is <|cos 2(theta - axis)|>.
 * Only pixels still ambiguous (field.ambiguous, when present) are moved. Fields with another (or no)
 * ambiguity are returned unchanged.
 */
export function foldMod90(f: OrientationField, centreDeg: number): OrientationField {
  if (f.ambiguity !== 'mod-90') return f;
  const c = degToRad(centreDeg), q = Math.PI / 4, n = f.angleRad.length;
  const angleRad = new Float32Array(n);
  const only = f.ambiguous;
  for (let i = 0; i < n; i++) {
    if (only && !only[i]) { angleRad[i] = f.angleRad[i]; continue; }
    let d = f.angleRad[i] - c;
    d -= (Math.PI / 2) * Math.round(d / (Math.PI / 2)); // into [-45, 45] deg
    if (d <= -q) d += Math.PI / 2;
    angleRad[i] = wrapAxialRad(c + d);
  }
  return {
    ...f, angleRad, cos2: undefined, sin2: undefined,
    options: { ...f.options, mod90FoldedAboutDeg: wrapAxialDeg(centreDeg) },
    warnings: [...f.warnings, `orientation known only modulo 90 deg: taken within 45 deg of ${wrapAxialDeg(centreDeg).toFixed(1)} deg`],
  };
}

/**
 * The axis a mod-90 field is most concentrated about: 1/4 arg <exp(4 i theta)> over usable pixels,
 * which is defined modulo 90 deg like the data; returned in [0, 90).
 */
export function mod90Axis(f: OrientationField): number {
  let c = 0, s = 0;
  for (let i = 0; i < f.angleRad.length; i++) {
    if (!f.mask[i]) continue;
    const w = f.confidence[i];
    c += w * Math.cos(4 * f.angleRad[i]); s += w * Math.sin(4 * f.angleRad[i]);
  }
  let a = radToDeg(0.25 * Math.atan2(s, c));
  if (a < 0) a += 90;
  return a;
}
