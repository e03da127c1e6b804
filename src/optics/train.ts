import { InputError, checkNumber } from '../common/index.ts';
import { DEG } from '../common/index.ts';
import { HALOGEN_3200K, type Illuminant } from './spectrum.ts';

/** A fixed linear retarder after the sample (full-wave "first-order red" plate, or a quarter-wave plate). */
export interface Compensator {
  kind: 'full-wave' | 'quarter-wave';
  /** Retardance in nm (full-wave default 550; quarter-wave = design wavelength / 4). */
  retardanceNm: number;
  /** Slow-axis angle, degrees CCW from +x (default +45). */
  axisDeg: number;
}

/**
 * The polarising microscope: polariser, sample, optional compensator, analyser, lamp. Angles in degrees
 * CCW from the image +x axis (docs/methods.md §1.3). Default: polariser 0, analyser 90 (crossed), full-wave
 * 550 nm plate at +45, halogen lamp as a 3200 K blackbody, white light.
 */
export interface OpticalTrain {
  polariserDeg: number;
  analyserDeg: number;
  compensator: Compensator | null;
  illuminant: Illuminant;
  /** Narrow-band filter: the monochrome wavelength in nm; undefined = white light. */
  monochromeNm?: number;
}

export const FULL_WAVE_DEFAULT_NM = 550;
export const MONOCHROME_DEFAULT_NM = 546;

export function fullWavePlate(retardanceNm = FULL_WAVE_DEFAULT_NM, axisDeg = 45): Compensator {
  return { kind: 'full-wave', retardanceNm, axisDeg };
}

/** Quarter-wave plate for a design wavelength (default 546 nm, so 136.5 nm retardance). */
export function quarterWavePlate(designNm = MONOCHROME_DEFAULT_NM, axisDeg = 45): Compensator {
  return { kind: 'quarter-wave', retardanceNm: designNm / 4, axisDeg };
}

export const DEFAULT_TRAIN: OpticalTrain = {
  polariserDeg: 0, analyserDeg: 90, compensator: fullWavePlate(), illuminant: HALOGEN_3200K,
};

/** Fills defaults and checks every value; throws InputError on nonsense. */
export function resolveTrain(partial: Partial<OpticalTrain> = {}): OpticalTrain {
  // Undefined entries keep the default (so callers can pass optional options straight through).
  const given = Object.fromEntries(Object.entries(partial).filter(([, v]) => v !== undefined)) as Partial<OpticalTrain>;
  const t: OpticalTrain = { ...DEFAULT_TRAIN, ...given };
  checkNumber('polariser angle', t.polariserDeg, -360, 360, 'deg');
  checkNumber('analyser angle', t.analyserDeg, -360, 360, 'deg');
  if (t.compensator) {
    const c = t.compensator;
    if (c.kind !== 'full-wave' && c.kind !== 'quarter-wave') {
      throw new InputError(`compensator kind "${String(c.kind)}" is not known`, 'Use full-wave or quarter-wave');
    }
    checkNumber('compensator retardance', c.retardanceNm, 1, 5000, 'nm');
    checkNumber('compensator angle', c.axisDeg, -360, 360, 'deg');
  }
  if (t.illuminant.kind === 'blackbody') checkNumber('lamp colour temperature', t.illuminant.temperatureK, 1000, 25000, 'K');
  if (t.monochromeNm !== undefined) checkNumber('filter wavelength', t.monochromeNm, 380, 780, 'nm');
  return t;
}

/** The sample: a linear retarder. */
export interface SampleRetarder {
  /** Structure (rod/fibre) axis, radians CCW from +x. */
  angleRad: number;
  retardanceNm: number;
  /**
   * +1: length-slow (the structure axis is the slow axis; most drawn polymers, calamitic nematics);
   * -1: length-fast (slow axis across the structure).
   */
  birefringenceSign?: 1 | -1;
}

/** Slow-axis angle of the sample in radians. */
export function slowAxisRad(s: SampleRetarder): number {
  return s.birefringenceSign === -1 ? s.angleRad + 90 * DEG : s.angleRad;
}
