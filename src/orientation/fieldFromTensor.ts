import { checkLimit, type Limit } from '../common/index.ts';
import { withDefaults } from '../common/index.ts';
import type { TileRect } from './structureTensor.ts';
import type { OrientationField } from './types.ts';

export interface MaskOptions {
  /**
   * Pixels whose texture strength (the tensor trace Jxx + Jyy) is below this fraction of the 99th-percentile
   * strength are masked as background. Default 0.02; 0 keeps every pixel with any gradient.
   */
  strengthFloor?: number;
  /** Pixels with coherency below this are masked. Default 0 (keep; coherency still weights averages). */
  coherencyMin?: number;
}

/** Defaults and ranges of the masking thresholds (docs/methods.md §7.4). */
export const MASK_LIMITS = {
  strengthFloor: { what: 'strength floor (fraction of the 99th-percentile texture strength)', min: 0, max: 1, default: 0.02 },
  coherencyMin: { what: 'minimum coherency', min: 0, max: 1, default: 0 },
} as const satisfies Record<string, Limit>;

export const MASK_DEFAULTS = { strengthFloor: MASK_LIMITS.strengthFloor.default, coherencyMin: MASK_LIMITS.coherencyMin.default } as const;

/** The per-pixel arrays the structure tensor fills, on a grid `width` pixels wide. */
export interface FieldPixels {
  width: number;
  angleRad: Float32Array; confidence: Float32Array; strength: Float32Array; cos2: Float32Array; sin2: Float32Array;
}

/** A texture field with all arrays allocated, ready for copyFieldPixels and finishTextureField. */
export function emptyTextureField(width: number, height: number): OrientationField & FieldPixels {
  const n = width * height;
  return {
    width, height, angleRad: new Float32Array(n), confidence: new Float32Array(n), mask: new Uint8Array(n),
    strength: new Float32Array(n), cos2: new Float32Array(n), sin2: new Float32Array(n),
    method: 'texture', ambiguity: 'none', options: {}, warnings: [],
  };
}

/**
 * Copies the field pixels of the part `r` of a tile into `f`. `px` is on its own grid (`px.width` floats
 * per row) whose top-left pixel is `origin` in f's coordinates. The pixels themselves come from the
 * tensor kernel (src/wasm/tensorKernel.as.ts): orientation along the structure
 * theta = 1/2 atan2(2 Jxy, Jyy - Jxx), counter-clockwise on screen from +x with y = row (the stripe
 * direction, 90 deg from the gradient), folded into (-pi/2, pi/2]; coherency
 * C = sqrt((Jyy - Jxx)^2 + 4 Jxy^2) / (Jxx + Jyy) in [0, 1] (the unsquared form, as in the OpenCV
 * tutorial); texture strength = Jxx + Jyy; (cos 2 theta, sin 2 theta) = (Jyy - Jxx, 2 Jxy) / root, so order
 * parameters need no trigonometry.
 */
export function copyFieldPixels(f: FieldPixels, px: FieldPixels, r: TileRect, origin: { x: number; y: number }): void {
  const len = r.x1 - r.x0;
  for (let y = r.y0; y < r.y1; y++) {
    const src = (y - origin.y) * px.width + (r.x0 - origin.x), dst = y * f.width + r.x0;
    for (const k of PIXEL_ARRAYS) f[k].set(px[k].subarray(src, src + len), dst);
  }
}

const PIXEL_ARRAYS = ['angleRad', 'confidence', 'strength', 'cos2', 'sin2'] as const;

export function resolveMaskOptions(options: MaskOptions = {}): Required<MaskOptions> {
  const o = withDefaults<Required<MaskOptions>>({ ...MASK_DEFAULTS }, options);
  checkLimit(MASK_LIMITS.strengthFloor, o.strengthFloor);
  checkLimit(MASK_LIMITS.coherencyMin, o.coherencyMin);
  return o;
}

/**
 * Masks background and weak-texture pixels once every pixel is written, and records options and warnings.
 * `intensityScale` is the largest |I| of the image, for the absolute strength floor.
 */
export function finishTextureField(f: OrientationField, options: MaskOptions, extraOptions: Record<string, unknown>, intensityScale: number): OrientationField {
  const o = resolveMaskOptions(options);
  const n = f.width * f.height;
  const strength = f.strength!, confidence = f.confidence, mask = f.mask;
  // Relative floor, plus an absolute one so float rounding on a flat image is not taken for texture.
  const floor = Math.max(o.strengthFloor * quantile(strength, 0.99), (1e-5 * intensityScale) ** 2);
  const coherencyMin = o.coherencyMin;
  let kept = 0;
  // Without branches: about a third quicker where kept and masked pixels are mixed.
  for (let i = 0; i < n; i++) {
    const ok = (strength[i] > floor ? 1 : 0) & (confidence[i] >= coherencyMin ? 1 : 0);
    mask[i] = ok;
    kept += ok;
  }
  const masked = n - kept;
  const warnings: string[] = [];
  if (masked === n) warnings.push('every pixel was masked: the image has no texture above the strength floor');
  else if (masked > 0.9 * n) warnings.push(`${((100 * masked) / n).toFixed(0)} % of pixels were masked as background or weak texture`);
  f.options = { ...extraOptions, strengthFloor: o.strengthFloor, coherencyMin: o.coherencyMin };
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
