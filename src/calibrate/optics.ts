/**
 * Pixel size from the optical train (docs/methods.md, "Pixel size"): size in the object = sensor pixel x binning /
 * (objective magnification x intermediate (camera-adapter, tube-lens) magnification).
 */
import { InputError } from '../common/index.ts';

function positive(name: string, v: number, max: number): number {
  if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0 || v > max) {
    throw new InputError(`${name} must be a positive number up to ${max}, got ${String(v)}`);
  }
  return v;
}

export interface OpticsInput {
  /** Camera sensor pixel pitch, um. */
  cameraPixelUm: number;
  objectiveMagnification: number;
  /** Camera adapter / intermediate lens magnification (e.g. 0.5, 0.63, 1). Default 1. */
  intermediateMagnification?: number;
  /** On-camera binning (2 = 2x2). Default 1. */
  binning?: number;
}

/** um/px in the object plane: cameraPixelUm * binning / (objective * intermediate). */
export function umPerPxFromOptics(o: OpticsInput): number {
  const pixel = positive('camera pixel size (um)', o.cameraPixelUm, 1000);
  const obj = positive('objective magnification', o.objectiveMagnification, 1000);
  const mid = positive('intermediate magnification', o.intermediateMagnification ?? 1, 100);
  const bin = positive('binning', o.binning ?? 1, 64);
  if (!Number.isInteger(bin)) throw new InputError(`binning must be a whole number, got ${bin}`);
  return (pixel * bin) / (obj * mid);
}

/** Rayleigh resolution r = 0.61 lambda / NA in um (lambda in nm). Sample at a pixel size of r/2 or finer. */
export function rayleighResolutionUm(wavelengthNm: number, numericalAperture: number): number {
  positive('wavelength (nm)', wavelengthNm, 1e5);
  positive('numerical aperture', numericalAperture, 1.7);
  return (0.61 * wavelengthNm * 1e-3) / numericalAperture;
}
