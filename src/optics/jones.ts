/**
 * Jones calculus for the polarising microscope. Column vector E = (Ex, Ey); a linear retarder with its
 * slow axis ("axis 1") at theta is W = R(theta) diag(e^{+i delta/2}, e^{-i delta/2}) R(-theta), delta = 2 pi Gamma / lambda.
 * Sample and compensator use the same convention, so only their relative orientation matters.
 */

/** A complex 2-vector as [re x, im x, re y, im y]. */
export type JonesVector = [number, number, number, number];

/** Applies a linear retarder (slow axis at `axisRad`, phase `deltaRad`) to a Jones vector. */
export function applyRetarder(e: JonesVector, axisRad: number, deltaRad: number): JonesVector {
  const c = Math.cos(axisRad), s = Math.sin(axisRad);
  const ch = Math.cos(deltaRad / 2), sh = Math.sin(deltaRad / 2);
  return retard(e, c, s, ch, sh);
}

/** Retarder with precomputed cos/sin of the axis and of half the phase. */
export function retard(e: JonesVector, c: number, s: number, ch: number, sh: number): JonesVector {
  // Into the retarder's axes.
  const r1 = c * e[0] + s * e[2], i1 = c * e[1] + s * e[3];
  const r2 = -s * e[0] + c * e[2], i2 = -s * e[1] + c * e[3];
  // axis 1 times (ch + i sh), axis 2 times (ch - i sh).
  const p1r = r1 * ch - i1 * sh, p1i = r1 * sh + i1 * ch;
  const p2r = r2 * ch + i2 * sh, p2i = i2 * ch - r2 * sh;
  return [c * p1r - s * p2r, c * p1i - s * p2i, s * p1r + c * p2r, s * p1i + c * p2i];
}

/** retard's result written over `e` (the same operations; no new array, for loops over many wavelengths). */
export function retardInPlace(e: Float64Array, c: number, s: number, ch: number, sh: number): void {
  const r1 = c * e[0] + s * e[2], i1 = c * e[1] + s * e[3];
  const r2 = -s * e[0] + c * e[2], i2 = -s * e[1] + c * e[3];
  const p1r = r1 * ch - i1 * sh, p1i = r1 * sh + i1 * ch;
  const p2r = r2 * ch + i2 * sh, p2i = i2 * ch - r2 * sh;
  e[0] = c * p1r - s * p2r; e[1] = c * p1i - s * p2i; e[2] = s * p1r + c * p2r; e[3] = s * p1i + c * p2i;
}

/** Light after a linear polariser at `angleRad` (unit amplitude). */
export function polarised(angleRad: number): JonesVector {
  return [Math.cos(angleRad), 0, Math.sin(angleRad), 0];
}

/** Intensity passed by an analyser at `angleRad`: |(cos a, sin a) . E|^2. */
export function analyse(e: JonesVector, angleRad: number): number {
  const c = Math.cos(angleRad), s = Math.sin(angleRad);
  const re = c * e[0] + s * e[2], im = c * e[1] + s * e[3];
  return re * re + im * im;
}

/** One element of a train: a retarder with slow axis and retardance. */
export interface RetarderElement {
  axisRad: number;
  retardanceNm: number;
}

/**
 * I / I0 at one wavelength for polariser -> retarders (in order) -> analyser, where I0 is the intensity
 * after the polariser (so the open beam with parallel polars gives 1).
 */
export function trainIntensity(polariserRad: number, elements: RetarderElement[], analyserRad: number, wavelengthNm: number): number {
  let e = polarised(polariserRad);
  for (const el of elements) e = applyRetarder(e, el.axisRad, (2 * Math.PI * el.retardanceNm) / wavelengthNm);
  return analyse(e, analyserRad);
}
