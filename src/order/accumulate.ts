import { InputError } from '../common/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import type { BlockSums } from './blocks.ts';
import { doubledAngles } from './doubledAngles.ts';

/**
 * Pixel weights of the averages. 'none': every usable pixel counts once. Texture fields: 'coherency' (the
 * structure tensor's coherency), 'strength' (texture strength, the tensor trace Jxx + Jyy) or
 * 'strength-coherency' (their product). Optical readings: 'confidence' (how well each pixel's colours or
 * intensities fitted the reading).
 */
export type Weighting = 'none' | 'coherency' | 'strength' | 'strength-coherency' | 'confidence';
export const WEIGHTINGS: Weighting[] = ['none', 'coherency', 'strength', 'strength-coherency', 'confidence'];
/** The weightings a texture field takes. */
export const TEXTURE_WEIGHTINGS: Weighting[] = ['none', 'coherency', 'strength', 'strength-coherency'];
/** The weightings an optical reading takes (it has no texture strength, and its per-pixel layer is a confidence). */
export const OPTICAL_WEIGHTINGS: Weighting[] = ['none', 'confidence'];

/**
 * Refuses a weighting the field cannot give: coherency and texture strength belong to texture fields, the
 * reading's confidence to optical readings.
 * @throws InputError naming the weightings that do apply
 */
export function weightingFits(weighting: Weighting, texture: boolean): void {
  const allowed = texture ? TEXTURE_WEIGHTINGS : OPTICAL_WEIGHTINGS;
  if (!allowed.includes(weighting)) {
    throw new InputError(`weighting "${weighting}" does not apply to ${texture ? 'a texture field' : 'an optical reading'}`,
      `Use one of ${allowed.join(', ')}${texture ? '' : ' (an optical reading has no coherency or texture strength; its pixels carry a confidence)'}`);
  }
}

/**
 * Weighting names of schema 1, read for one more release: 'energy' is now 'strength', 'energy-confidence'
 * 'strength-coherency', and 'confidence' on a texture field is 'coherency'. Null when `name` is not a former name
 * (for that kind of field).
 */
export function formerWeighting(name: string, texture: boolean): Weighting | null {
  if (name === 'energy') return 'strength';
  if (name === 'energy-confidence') return 'strength-coherency';
  if (name === 'confidence' && texture) return 'coherency';
  return null;
}

export interface AccumulateOptions {
  /**
   * Per-pixel group (e.g. channel bin) or -1 to leave the pixel out. Length width*height. `{ region }` is the
   * one-group case without the table: group 0 is every pixel, or those where the region mask is 1.
   */
  groups: Int32Array | { region: Uint8Array | null };
  groupCount: number;
  /** Reference axis in radians (CCW on screen): c, s are taken relative to it. */
  refRad: number;
  /** Side of the square blocks in px. */
  blockPx: number;
  weighting: Weighting;
  /**
   * One-group case only: filled with the number of usable pixels (mask and region) and the sum of their
   * unweighted confidence, counted in the same pass (a 12 MP field is then read once, not twice).
   */
  tally?: { usable: number; confidenceSum: number };
}

/**
 * Sums w, w cos 2(theta - ref), w sin 2(theta - ref) over square blocks of blockPx, separately for
 * each group. Weights (Weighting): 'none' 1, 'coherency' or 'confidence' the field's per-pixel
 * confidence layer, 'strength' the texture strength, 'strength-coherency' their product; masked pixels never count. Works a band of block rows at a time
 * with a dense scratch table, so memory stays at (blocks per row x groups) whatever the image size.
 * Runs of pixels in one group and block are summed in locals, and the rotation to the reference axis
 * is applied per block (it is linear), so the per-pixel work is a few additions.
 */
export function accumulateBlocks(f: OrientationField, o: AccumulateOptions): BlockSums[] {
  const { width, height } = f;
  const B = Math.max(1, Math.round(o.blockPx));
  const cols = Math.ceil(width / B);
  const G = o.groupCount;
  const sw = new Float64Array(cols * G), sc = new Float64Array(cols * G), ss = new Float64Array(cols * G);
  const sn = new Uint32Array(cols * G);
  const lists = Array.from({ length: G }, () => ({ w: [] as number[], wc: [] as number[], ws: [] as number[], n: [] as number[], bx: [] as number[], by: [] as number[] }));
  const cr = Math.cos(2 * o.refRad), sr = Math.sin(2 * o.refRad);
  const mask = f.mask;
  const { cos2: c2, sin2: s2 } = doubledAngles(f);
  const groups = o.groups instanceof Int32Array ? o.groups : null;
  const region = o.groups instanceof Int32Array ? null : o.groups.region;
  if (!groups && G !== 1) throw new Error('a region mask makes one group');
  const confidence = f.confidence;
  let usable = 0, confidenceSum = 0;
  // One weight array (or none) chosen once: a choice per pixel made this loop three times slower.
  const weights = pixelWeights(f, o.weighting);
  const run = new Float64Array(6);
  for (let by = 0; by < height; by += B) {
    const yEnd = Math.min(height, by + B);
    for (let y = by; y < yEnd; y++) {
      const row = y * width;
      if (!groups) {
        // One group: no runs to track, only the mask (and region) to skip.
        for (let bx = 0; bx < cols; bx++) {
          sumRun(row + bx * B, row + Math.min(width, (bx + 1) * B), mask, region, weights, confidence, c2, s2, run);
          usable += run[4]; confidenceSum += run[5];
          if (run[3] > 0) { sw[bx] += run[0]; sc[bx] += run[1]; ss[bx] += run[2]; sn[bx] += run[3]; }
        }
        continue;
      }
      for (let bx = 0; bx < cols; bx++) {
        const xEnd = Math.min(width, (bx + 1) * B);
        let g = -1, w = 0, wc = 0, ws = 0, n = 0;
        for (let x = bx * B; x <= xEnd; x++) {
          const i = row + x;
          const gi = x < xEnd && mask[i] ? groups[i] : -1;
          if (gi !== g) {
            if (g >= 0 && n > 0) {
              const k = g * cols + bx;
              sw[k] += w; sc[k] += wc; ss[k] += ws; sn[k] += n;
            }
            g = gi; w = wc = ws = 0; n = 0;
          }
          if (gi < 0) continue;
          const wi = weights ? weights[i] : 1;
          if (!(wi > 0)) continue;
          w += wi; wc += wi * c2[i]; ws += wi * s2[i]; n++;
        }
      }
    }
    for (let k = 0; k < sn.length; k++) {
      if (sn[k] === 0) continue;
      const L = lists[(k / cols) | 0];
      // Rotate the block's doubled-angle sums to the reference axis.
      L.w.push(sw[k]); L.wc.push(sc[k] * cr + ss[k] * sr); L.ws.push(ss[k] * cr - sc[k] * sr); L.n.push(sn[k]);
      L.bx.push(k % cols); L.by.push(by / B);
      sw[k] = sc[k] = ss[k] = 0;
      sn[k] = 0;
    }
  }
  if (o.tally) { o.tally.usable = usable; o.tally.confidenceSum = confidenceSum; }
  return lists.map((L) => ({
    w: Float64Array.from(L.w), wc: Float64Array.from(L.wc), ws: Float64Array.from(L.ws), n: Uint32Array.from(L.n),
    bx: Int32Array.from(L.bx), by: Int32Array.from(L.by),
  }));
}

/** Per-pixel weights of a weighting, or null for equal weights (the product is formed once when both count). */
function pixelWeights(f: OrientationField, weighting: Weighting): Float32Array | null {
  const conf = weighting === 'coherency' || weighting === 'confidence' || weighting === 'strength-coherency' ? f.confidence : null;
  const strength = weighting === 'strength' || weighting === 'strength-coherency' ? f.strength ?? null : null;
  weightingFits(weighting, f.method === 'texture');
  if ((weighting === 'strength' || weighting === 'strength-coherency') && !strength) throw new Error('a texture field without its strength layer');
  if (conf && strength) {
    const w = new Float32Array(conf.length);
    for (let i = 0; i < w.length; i++) w[i] = conf[i] * strength[i];
    return w;
  }
  return conf ?? strength;
}

/**
 * Sums of pixels i0 <= i < end in `out`: w, w c, w s, counted pixels, usable pixels, their confidence.
 * A function of its own so the engine compiles this loop alone, with every array of one known kind.
 */
function sumRun(
  i0: number, end: number, mask: Uint8Array, region: Uint8Array | null, weights: Float32Array | null,
  confidence: Float32Array, c2: Float32Array, s2: Float32Array, out: Float64Array,
): void {
  let w = 0, wc = 0, ws = 0, n = 0, usable = 0, conf = 0;
  for (let i = i0; i < end; i++) {
    if (!mask[i] || (region && !region[i])) continue;
    usable++; conf += confidence[i];
    const wi = weights ? weights[i] : 1;
    if (!(wi > 0)) continue;
    w += wi; wc += wi * c2[i]; ws += wi * s2[i]; n++;
  }
  out[0] = w; out[1] = wc; out[2] = ws; out[3] = n; out[4] = usable; out[5] = conf;
}
