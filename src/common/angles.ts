/**
 * Angles: radians inside the code, degrees at the edges (docs/methods.md §1.2 "Angles and orientations"). Orientations are axial,
 * counter-clockwise on screen from +x, wrapped to (-90, 90] degrees.
 */
export const DEG = Math.PI / 180;

export const degToRad = (deg: number): number => deg * DEG;
export const radToDeg = (rad: number): number => rad / DEG;

/** Wraps an axial angle in degrees to (-90, 90]. */
export function wrapAxialDeg(deg: number): number {
  let a = deg % 180;
  if (a <= -90) a += 180;
  if (a > 90) a -= 180;
  return a;
}

/** Wraps an axial angle in radians to (-pi/2, pi/2]. */
export function wrapAxialRad(rad: number): number {
  let a = rad % Math.PI;
  if (a <= -Math.PI / 2) a += Math.PI;
  if (a > Math.PI / 2) a -= Math.PI;
  return a;
}

/** Smallest difference between two axial angles in degrees, in [0, 90]. */
export function axialDiffDeg(a: number, b: number): number {
  return Math.abs(wrapAxialDeg(a - b));
}
