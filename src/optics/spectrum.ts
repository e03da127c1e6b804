import { InputError, checkNumber } from '../common/index.ts';
import {
  CIE1931_X_BAR, CIE1931_Y_BAR, CIE1931_Z_BAR, D65_SPD, CIE_TABLE_START_NM, CIE_TABLE_STEP_NM, CIE_TABLE_LENGTH,
} from './cieTables.ts';

/** Wavelength grid the spectral model integrates over (rectangular sum). Default 380-780 nm in 5-nm steps. */
export interface WavelengthGrid {
  wavelengthsNm: Float64Array;
  stepNm: number;
}

/** Evenly spaced grid from startNm to endNm inclusive. */
export function wavelengthGrid(startNm = 380, endNm = 780, stepNm = 5): WavelengthGrid {
  checkNumber('first wavelength', startNm, 300, 900, 'nm');
  checkNumber('last wavelength', endNm, startNm, 900, 'nm');
  checkNumber('wavelength step', stepNm, 0.1, 50, 'nm');
  const n = Math.floor((endNm - startNm) / stepNm + 1e-9) + 1;
  const w = new Float64Array(n);
  for (let i = 0; i < n; i++) w[i] = startNm + i * stepNm;
  return { wavelengthsNm: w, stepNm };
}

/** Linear interpolation in a 5-nm CIE table; 0 outside 360-830 nm. */
function tableAt(table: readonly number[], wavelengthNm: number): number {
  const t = (wavelengthNm - CIE_TABLE_START_NM) / CIE_TABLE_STEP_NM;
  if (t < 0 || t > CIE_TABLE_LENGTH - 1) return 0;
  const i = Math.min(CIE_TABLE_LENGTH - 2, Math.floor(t));
  const f = t - i;
  return table[i] * (1 - f) + table[i + 1] * f;
}

/** CIE 1931 2-degree colour-matching functions [x, y, z] at a wavelength (table values, linear in between). */
export function cmf1931(wavelengthNm: number): [number, number, number] {
  return [tableAt(CIE1931_X_BAR, wavelengthNm), tableAt(CIE1931_Y_BAR, wavelengthNm), tableAt(CIE1931_Z_BAR, wavelengthNm)];
}

/** CIE D65 relative spectral power (100 at 560 nm), from the 5-nm table, linear in between. */
export function d65Spd(wavelengthNm: number): number {
  return tableAt(D65_SPD, wavelengthNm);
}

/** Planck constants (CODATA 2018, from memory): c1 = 2 pi h c^2 in W m^2, c2 = h c / k in m K. */
export const PLANCK_C1 = 3.741771852e-16;
export const PLANCK_C2 = 1.438776877e-2;

/**
 * Blackbody spectral exitance M(lambda, T) = c1 / lambda^5 / (exp(c2 / (lambda T)) - 1), lambda in metres,
 * returned in W m^-3 (only the shape matters here). A halogen lamp is close to a 3200 K blackbody.
 */
export function blackbodySpd(wavelengthNm: number, temperatureK: number): number {
  const l = wavelengthNm * 1e-9;
  return PLANCK_C1 / l ** 5 / Math.expm1(PLANCK_C2 / (l * temperatureK));
}

/**
 * CIE standard illuminant A (CIE 15; ISO 11664-2):
 * S_A = 100 (560/lambda)^5 (exp(1.435e7 / (2848 * 560)) - 1) / (exp(1.435e7 / (2848 lambda)) - 1), lambda in nm.
 */
export function illuminantASpd(wavelengthNm: number): number {
  const c = 1.435e7 / 2848;
  return 100 * (560 / wavelengthNm) ** 5 * Math.expm1(c / 560) / Math.expm1(c / wavelengthNm);
}

/** The lamp spectrum of the optical train. */
export type Illuminant =
  | { kind: 'blackbody'; temperatureK: number }
  | { kind: 'D65' }
  | { kind: 'A' };

export const HALOGEN_3200K: Illuminant = { kind: 'blackbody', temperatureK: 3200 };

/** Relative spectral power of an illuminant at a wavelength. */
export function illuminantSpd(ill: Illuminant, wavelengthNm: number): number {
  switch (ill.kind) {
    case 'D65': return d65Spd(wavelengthNm);
    case 'A': return illuminantASpd(wavelengthNm);
    case 'blackbody': return blackbodySpd(wavelengthNm, ill.temperatureK);
  }
}

/** Parses "3200K", "3200", "D65" or "A" (case-insensitive). Temperatures from 1000 to 25000 K. */
export function parseIlluminant(text: string): Illuminant {
  const t = text.trim().toUpperCase();
  if (t === 'D65') return { kind: 'D65' };
  if (t === 'A') return { kind: 'A' };
  const m = /^(\d+(?:\.\d+)?)\s*K?$/.exec(t);
  if (m) {
    const k = Number(m[1]);
    checkNumber('lamp colour temperature', k, 1000, 25000, 'K');
    return { kind: 'blackbody', temperatureK: k };
  }
  throw new InputError(`illuminant "${text}" is not known`, 'Use a colour temperature such as 3200K, or D65, or A');
}

export function illuminantLabel(ill: Illuminant): string {
  return ill.kind === 'blackbody' ? `${ill.temperatureK}K` : ill.kind;
}
