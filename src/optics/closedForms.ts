/**
 * Closed-form intensities of the polarising microscope, used to check the Jones matrix product.
 * Angles in radians, retardance and wavelength in nm.
 */

/** Crossed polars, one retarder at theta from the polariser: I/I0 = sin^2(2 theta) sin^2(pi Gamma / lambda). */
export function crossedIntensity(thetaRad: number, retardanceNm: number, wavelengthNm: number): number {
  return Math.sin(2 * thetaRad) ** 2 * Math.sin((Math.PI * retardanceNm) / wavelengthNm) ** 2;
}

/**
 * Polariser at 0, analyser at phi, one retarder with its axis at theta:
 * I/I0 = cos^2 phi - sin 2(theta - phi) sin 2 theta sin^2(pi Gamma / lambda).
 */
export function oneRetarderIntensity(phiRad: number, thetaRad: number, retardanceNm: number, wavelengthNm: number): number {
  return Math.cos(phiRad) ** 2 - Math.sin(2 * (thetaRad - phiRad)) * Math.sin(2 * thetaRad) * Math.sin((Math.PI * retardanceNm) / wavelengthNm) ** 2;
}

/**
 * Crossed polars (0 / 90), sample (delta_s, theta_s) followed by a plate (delta_p, theta_p), with c = cos(delta/2),
 * s = sin(delta/2): I = (cp ss sin 2theta_s + sp cs sin 2theta_p)^2 + (sp ss sin 2(theta_p - theta_s))^2.
 */
export function plateIntensity(thetaSRad: number, retardanceSNm: number, thetaPRad: number, retardancePNm: number, wavelengthNm: number): number {
  const hs = (Math.PI * retardanceSNm) / wavelengthNm, hp = (Math.PI * retardancePNm) / wavelengthNm;
  const cs = Math.cos(hs), ss = Math.sin(hs), cp = Math.cos(hp), sp = Math.sin(hp);
  return (cp * ss * Math.sin(2 * thetaSRad) + sp * cs * Math.sin(2 * thetaPRad)) ** 2 + (sp * ss * Math.sin(2 * (thetaPRad - thetaSRad))) ** 2;
}
