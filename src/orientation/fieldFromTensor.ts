import { checkLimit, type Limit } from '../common/index.ts';
import { withDefaults } from '../common/index.ts';
import type { TileRect } from './structureTensor.ts';
import type { OrientationField } from './types.ts';
import { anglesMade, withLazyAngle } from './derivedLayers.ts';
import { giveBack, takeFloat32, takeUint8, valueOfRank } from '../common/index.ts';
import { KernelArena, loadedTensorKernel } from '../wasm/index.ts';

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

/**
 * The per-pixel layers the structure tensor writes (src/wasm/tensorKernel.as.ts, outputRow), on a grid `width`
 * pixels wide: texture strength = Jxx + Jyy; coherency C = sqrt((Jyy - Jxx)^2 + 4 Jxy^2) / (Jxx + Jyy) in
 * [0, 1] (the unsquared form, as in the OpenCV tutorial); (cos 2 theta, sin 2 theta) = (Jyy - Jxx, 2 Jxy) / root
 * ((1, 0) where there is no gradient), so order parameters need no trigonometry. The orientation along the
 * structure, theta = 1/2 atan2(2 Jxy, Jyy - Jxx), counter-clockwise on screen from +x with y = row (the stripe
 * direction, 90 deg from the gradient), folded into (-pi/2, pi/2], is made from (cos 2 theta, sin 2 theta) the
 * first time it is read (derivedLayers.ts): only pictures and exports need it.
 */
export interface FieldPixels {
  width: number;
  strength: Float32Array; confidence: Float32Array; cos2: Float32Array; sin2: Float32Array;
}

/** A texture field with its kernel layers and mask allocated (not cleared), ready for its pixels and finishTextureField. */
export function emptyTextureField(width: number, height: number): OrientationField & FieldPixels {
  const n = width * height;
  // The kernel writes every pixel of these layers, and finishTextureField every mask byte, before they are read.
  return withLazyAngle({
    width, height, mask: takeUint8(n, false),
    strength: takeFloat32(n, false), confidence: takeFloat32(n, false), cos2: takeFloat32(n, false), sin2: takeFloat32(n, false),
    method: 'texture' as const, ambiguity: 'none' as const, options: {}, warnings: [] as string[],
  });
}

/**
 * Copies the field pixels of the part `r` of a tile into `f`. `px` is on its own grid (`px.width` floats
 * per row) whose top-left pixel is `origin` in f's coordinates.
 */
export function copyFieldPixels(f: FieldPixels, px: FieldPixels, r: TileRect, origin: { x: number; y: number }): void {
  const len = r.x1 - r.x0;
  for (let y = r.y0; y < r.y1; y++) {
    const src = (y - origin.y) * px.width + (r.x0 - origin.x), dst = y * f.width + r.x0;
    for (const k of PIXEL_ARRAYS) f[k].set(px[k].subarray(src, src + len), dst);
  }
}

/**
 * Hands a texture field's kernel layers and mask back for the next field of the same size
 * (src/common/arrayPool.ts): only once nothing reads the field any more.
 */
export function recycleTextureField(f: OrientationField): void {
  giveBack(f.strength, f.confidence, f.cos2, f.sin2, f.mask);
  // The angle layer too, once it was made (reading it here would make it).
  if (anglesMade(f)) giveBack(f.angleRad);
}

/** The layers FieldPixels holds. */
export const PIXEL_ARRAYS = ['strength', 'confidence', 'cos2', 'sin2'] as const;

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
  const floor = strengthFloorOf(o.strengthFloor, quantile(strength, 0.99), intensityScale);
  const coherencyMin = o.coherencyMin;
  const kept = maskPixels(strength, confidence, floor, coherencyMin, mask);
  f.options = { ...extraOptions, strengthFloor: o.strengthFloor, coherencyMin: o.coherencyMin };
  f.warnings = maskWarnings(n - kept, n);
  return f;
}

/**
 * The strength below which a pixel is masked: `strengthFloor` times the 99th-percentile strength `q99`
 * (quantile), and at least (1e-5 x the image's largest |I|)^2, so float rounding on a flat image is not
 * taken for texture.
 */
export function strengthFloorOf(strengthFloor: number, q99: number, intensityScale: number): number {
  return Math.max(strengthFloor * q99, (1e-5 * intensityScale) ** 2);
}

/** The field's warnings about how many of its `n` pixels the mask took out. */
export function maskWarnings(masked: number, n: number): string[] {
  if (masked === n) return ['every pixel was masked: the image has no texture above the strength floor'];
  if (masked > 0.9 * n) return [`${((100 * masked) / n).toFixed(0)} % of pixels were masked as background or weak texture`];
  return [];
}

/** Pixels handed to the kernel at a time when masking. */
const MASK_BAND = 1 << 16;

/**
 * mask[i] = 1 where strength[i] > floor and confidence[i] >= least, else 0; returns how many are 1. By the
 * kernel's maskPixels (sixteen pixels at a time) in bands, the thresholds rounded to float32 so that the
 * comparisons are exactly these, or in JavaScript where the kernel is not loaded.
 */
function maskPixels(strength: Float32Array, confidence: Float32Array, floor: number, least: number, mask: Uint8Array): number {
  const n = mask.length;
  let kept = 0;
  const k = loadedTensorKernel();
  if (!k) {
    // Without branches: about a third quicker where kept and masked pixels are mixed.
    for (let i = 0; i < n; i++) {
      const ok = (strength[i] > floor ? 1 : 0) & (confidence[i] >= least ? 1 : 0);
      mask[i] = ok;
      kept += ok;
    }
    return kept;
  }
  const mem = new KernelArena(k);
  const ps = mem.reserve(MASK_BAND), pc = mem.reserve(MASK_BAND), pm = mem.reserve(MASK_BAND / 4);
  mem.commit();
  const vs = mem.view(ps, MASK_BAND), vc = mem.view(pc, MASK_BAND), vm = new Uint8Array(k.memory.buffer, pm, MASK_BAND);
  const f = float32Below(floor), l = float32Above(least);
  for (let i = 0; i < n; i += MASK_BAND) {
    const len = Math.min(MASK_BAND, n - i);
    vs.set(strength.subarray(i, i + len));
    vc.set(confidence.subarray(i, i + len));
    kept += k.maskPixels(ps, pc, len, f, l, pm);
    mask.set(vm.subarray(0, len), i);
  }
  return kept;
}

const bits = new Float32Array(1), word = new Uint32Array(bits.buffer);

/** The largest float32 not above x: a float32 s is > x exactly when s > float32Below(x). */
export function float32Below(x: number): number {
  const f = Math.fround(x);
  if (f <= x || Number.isNaN(x)) return f;
  bits[0] = f;
  if (f === 0) return -1.401298464324817e-45;
  word[0] += f > 0 ? -1 : 1;
  return bits[0];
}

/** The smallest float32 not below x: a float32 s is >= x exactly when s >= float32Above(x). */
export function float32Above(x: number): number {
  return -float32Below(-x);
}

/**
 * Quantile from a strided sample (at most ~20 000 values), enough for a threshold: the sample's value of rank
 * floor(q (k - 1)) (k finite values), found by selection (Hoare's FIND) rather than a sort.
 */
export function quantile(v: Float32Array, q: number): number {
  const step = quantileStep(v.length);
  const s = new Float32Array(Math.ceil(v.length / step));
  let k = 0;
  for (let i = 0; i < v.length; i += step) if (Number.isFinite(v[i])) s[k++] = v[i];
  return sampleQuantile(s.subarray(0, k), q);
}

/** The stride of quantile's sample of `n` values: it reads v[0], v[step], v[2 step], ... */
export const quantileStep = (n: number): number => Math.max(1, Math.floor(n / 20_000));

/** quantile's value from its sample (the finite values it read, in order; reordered here): 0 when there are none. */
export function sampleQuantile(s: Float32Array, q: number): number {
  const k = s.length;
  if (k === 0) return 0;
  return valueOfRank(s, Math.min(k - 1, Math.floor(q * (k - 1))));
}
