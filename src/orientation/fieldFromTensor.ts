import { checkNumber } from '../common/errors.ts';
import { fastAtan2 } from '../common/fastAtan2.ts';
import { withDefaults } from '../common/options.ts';
import type { TensorField, TileRect } from './structureTensor.ts';
import type { OrientationField } from './types.ts';

export interface MaskOptions {
  /**
   * Pixels whose tensor energy (Jxx + Jyy) is below this fraction of the 99th-percentile energy are
   * masked as background. Default 0.02; 0 keeps every pixel with any gradient.
   */
  energyFloor?: number;
  /** Pixels with coherency below this are masked. Default 0 (keep; coherency still weights averages). */
  coherencyMin?: number;
}

/** Largest float32 not above pi/2: float32(pi/2) itself rounds up to just over 90 deg. */
export const HALF_PI_F32 = 1.5707962513;

export const MASK_DEFAULTS = { energyFloor: 0.02, coherencyMin: 0 } as const;

/** The per-pixel arrays the structure tensor fills, on a grid `width` pixels wide. */
export interface FieldPixels {
  width: number;
  angleRad: Float32Array; confidence: Float32Array; energy: Float32Array; cos2: Float32Array; sin2: Float32Array;
}

/** A texture field with all arrays allocated, ready for writeTensorPixels and finishTextureField. */
export function emptyTextureField(width: number, height: number): OrientationField & FieldPixels {
  const n = width * height;
  return {
    width, height, angleRad: new Float32Array(n), confidence: new Float32Array(n), mask: new Uint8Array(n),
    energy: new Float32Array(n), cos2: new Float32Array(n), sin2: new Float32Array(n),
    method: 'texture', ambiguity: 'none', options: {}, warnings: [],
  };
}

/**
 * Angle, coherency, energy and doubled-angle components of the pixels in `r` from a (tile's) tensor:
 * orientation along the structure theta = 1/2 atan2(2 Jxy, Jyy - Jxx), counter-clockwise on screen
 * from +x with y = row (the stripe direction, 90 deg from the gradient); coherency
 * C = sqrt((Jyy - Jxx)^2 + 4 Jxy^2) / (Jxx + Jyy) in [0, 1] (the unsquared form, as in the OpenCV
 * tutorial); energy = Jxx + Jyy.
 */
export function writeTensorPixels(f: FieldPixels, t: TensorField, r: TileRect, origin: { x: number; y: number }): void {
  const { angleRad, confidence, energy, cos2, sin2 } = f;
  const { jxx, jxy, jyy } = t;
  for (let y = r.y0; y < r.y1; y++) {
    let j = (y - origin.y) * t.width + (r.x0 - origin.x);
    for (let i = y * f.width + r.x0, end = y * f.width + r.x1; i < end; i++, j++) {
      const a = jxx[j], b2 = 2 * jxy[j], c = jyy[j];
      const e = a + c, d = c - a;
      const root = Math.sqrt(d * d + b2 * b2);
      energy[i] = e;
      // (cos 2 theta, sin 2 theta) = (Jyy - Jxx, 2 Jxy) / root: no trigonometry needed for order parameters.
      if (root > 0) { const inv = 1 / root; cos2[i] = d * inv; sin2[i] = b2 * inv; } else { cos2[i] = 1; sin2[i] = 0; }
      // atan2 returns [-pi, pi] (-pi for a -0 numerator); fold -pi/2 to +pi/2 so angles stay in (-pi/2, pi/2].
      const half = 0.5 * fastAtan2(b2, d);
      angleRad[i] = Math.min(HALF_PI_F32, half <= -Math.PI / 2 ? half + Math.PI : half);
      confidence[i] = e > 0 ? Math.min(1, root / e) : 0;
    }
  }
}

export function resolveMaskOptions(options: MaskOptions = {}): Required<MaskOptions> {
  const o = withDefaults<Required<MaskOptions>>({ ...MASK_DEFAULTS }, options);
  checkNumber('energy floor', o.energyFloor, 0, 1);
  checkNumber('minimum coherency', o.coherencyMin, 0, 1);
  return o;
}

/**
 * Masks background and low-energy pixels once every pixel is written, and records options and warnings.
 * `intensityScale` is the largest |I| of the image, for the absolute energy floor.
 */
export function finishTextureField(f: OrientationField, options: MaskOptions, extraOptions: Record<string, unknown>, intensityScale: number): OrientationField {
  const o = resolveMaskOptions(options);
  const n = f.width * f.height;
  const energy = f.energy!, confidence = f.confidence, mask = f.mask;
  // Relative floor, plus an absolute one so float rounding on a flat image is not taken for texture.
  const floor = Math.max(o.energyFloor * quantile(energy, 0.99), (1e-5 * intensityScale) ** 2);
  const coherencyMin = o.coherencyMin;
  let kept = 0;
  // Without branches: about a third quicker where kept and masked pixels are mixed.
  for (let i = 0; i < n; i++) {
    const ok = (energy[i] > floor ? 1 : 0) & (confidence[i] >= coherencyMin ? 1 : 0);
    mask[i] = ok;
    kept += ok;
  }
  const masked = n - kept;
  const warnings: string[] = [];
  if (masked === n) warnings.push('every pixel was masked: the image has no texture above the energy floor');
  else if (masked > 0.9 * n) warnings.push(`${((100 * masked) / n).toFixed(0)} % of pixels were masked as background or low energy`);
  f.options = { ...extraOptions, energyFloor: o.energyFloor, coherencyMin: o.coherencyMin };
  f.warnings = warnings;
  return f;
}

/** Quantile from a strided sample (at most ~20 000 values), enough for a threshold. */
export function quantile(v: Float32Array, q: number): number {
  const step = Math.max(1, Math.floor(v.length / 20_000));
  const s = new Float32Array(Math.ceil(v.length / step));
  let k = 0;
  for (let i = 0; i < v.length; i += step) if (Number.isFinite(v[i])) s[k++] = v[i];
  if (k === 0) return 0;
  const t = s.subarray(0, k).sort();
  return t[Math.min(k - 1, Math.floor(q * (k - 1)))];
}
