import type { OrientationField } from '../orientation/types.ts';
import type { BlockSums } from './blocks.ts';

export type Weighting = 'none' | 'confidence' | 'energy' | 'energy-confidence';
export const WEIGHTINGS: Weighting[] = ['none', 'confidence', 'energy', 'energy-confidence'];

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
 * each group. Weights: 'none' 1, 'confidence' the field's confidence, 'energy' the tensor energy,
 * 'energy-confidence' their product; masked pixels never count. Works a band of block rows at a time
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
  const lists = Array.from({ length: G }, () => ({ w: [] as number[], wc: [] as number[], ws: [] as number[], n: [] as number[] }));
  const cr = Math.cos(2 * o.refRad), sr = Math.sin(2 * o.refRad);
  const c2 = f.cos2, s2 = f.sin2, mask = f.mask, angle = f.angleRad;
  const groups = o.groups instanceof Int32Array ? o.groups : null;
  const region = o.groups instanceof Int32Array ? null : o.groups.region;
  if (!groups && G !== 1) throw new Error('a region mask makes one group');
  const confidence = f.confidence;
  let usable = 0, confidenceSum = 0;
  const wConf = o.weighting === 'confidence' || o.weighting === 'energy-confidence' ? f.confidence : null;
  const wEnergy = (o.weighting === 'energy' || o.weighting === 'energy-confidence') && f.energy ? f.energy : null;
  for (let by = 0; by < height; by += B) {
    const yEnd = Math.min(height, by + B);
    for (let y = by; y < yEnd; y++) {
      const row = y * width;
      if (!groups) {
        // One group: no runs to track, only the mask (and region) to skip.
        for (let bx = 0; bx < cols; bx++) {
          let w = 0, wc = 0, ws = 0, n = 0;
          for (let i = row + bx * B, end = row + Math.min(width, (bx + 1) * B); i < end; i++) {
            if (!mask[i] || (region && !region[i])) continue;
            usable++; confidenceSum += confidence[i];
            const wi = (wConf ? wConf[i] : 1) * (wEnergy ? wEnergy[i] : 1);
            if (!(wi > 0)) continue;
            let c: number, s: number;
            if (c2) { c = c2[i]; s = s2![i]; } else { const t = 2 * angle[i]; c = Math.cos(t); s = Math.sin(t); }
            w += wi; wc += wi * c; ws += wi * s; n++;
          }
          if (n > 0) { sw[bx] += w; sc[bx] += wc; ss[bx] += ws; sn[bx] += n; }
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
          const wi = (wConf ? wConf[i] : 1) * (wEnergy ? wEnergy[i] : 1);
          if (!(wi > 0)) continue;
          let c: number, s: number;
          if (c2) { c = c2[i]; s = s2![i]; } else { const t = 2 * angle[i]; c = Math.cos(t); s = Math.sin(t); }
          w += wi; wc += wi * c; ws += wi * s; n++;
        }
      }
    }
    for (let k = 0; k < sn.length; k++) {
      if (sn[k] === 0) continue;
      const L = lists[(k / cols) | 0];
      // Rotate the block's doubled-angle sums to the reference axis.
      L.w.push(sw[k]); L.wc.push(sc[k] * cr + ss[k] * sr); L.ws.push(ss[k] * cr - sc[k] * sr); L.n.push(sn[k]);
      sw[k] = sc[k] = ss[k] = 0;
      sn[k] = 0;
    }
  }
  if (o.tally) { o.tally.usable = usable; o.tally.confidenceSum = confidenceSum; }
  return lists.map((L) => ({
    w: Float64Array.from(L.w), wc: Float64Array.from(L.wc), ws: Float64Array.from(L.ws), n: Uint32Array.from(L.n),
  }));
}
