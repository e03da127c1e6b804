import type { OrientationField } from '../orientation/types.ts';
import type { BlockSums } from './blocks.ts';

export type Weighting = 'none' | 'confidence' | 'energy' | 'energy-confidence';
export const WEIGHTINGS: Weighting[] = ['none', 'confidence', 'energy', 'energy-confidence'];

export interface AccumulateOptions {
  /** Per-pixel group (e.g. channel bin) or -1 to leave the pixel out. Length width*height. */
  groups: Int32Array;
  groupCount: number;
  /** Reference axis in radians (CCW on screen): c, s are taken relative to it. */
  refRad: number;
  /** Side of the square blocks in px. */
  blockPx: number;
  weighting: Weighting;
}

/** Per-pixel weight of an orientation sample under a weighting rule; 0 for masked pixels. */
export function pixelWeight(f: OrientationField, i: number, weighting: Weighting): number {
  if (!f.mask[i]) return 0;
  switch (weighting) {
    case 'none': return 1;
    case 'confidence': return f.confidence[i];
    case 'energy': return f.energy ? f.energy[i] : 1;
    case 'energy-confidence': return (f.energy ? f.energy[i] : 1) * f.confidence[i];
  }
}

/**
 * Sums w, w cos 2(theta - ref), w sin 2(theta - ref) over square blocks of blockPx, separately for
 * each group. Works a band of block rows at a time with a dense scratch table, so memory stays at
 * (blocks per row x groups) whatever the image size.
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
  const c2 = f.cos2, s2 = f.sin2;
  // Same rule as pixelWeight, with the per-pixel switch taken out of the loop.
  const wConf = o.weighting === 'confidence' || o.weighting === 'energy-confidence' ? f.confidence : null;
  const wEnergy = (o.weighting === 'energy' || o.weighting === 'energy-confidence') && f.energy ? f.energy : null;
  for (let by = 0; by < height; by += B) {
    const yEnd = Math.min(height, by + B);
    for (let y = by; y < yEnd; y++) {
      const row = y * width;
      for (let x = 0; x < width; x++) {
        const i = row + x;
        const g = o.groups[i];
        if (g < 0 || !f.mask[i]) continue;
        const w = (wConf ? wConf[i] : 1) * (wEnergy ? wEnergy[i] : 1);
        if (!(w > 0)) continue;
        let c: number, s: number;
        if (c2) { c = c2[i]; s = s2![i]; } else { const t = 2 * f.angleRad[i]; c = Math.cos(t); s = Math.sin(t); }
        const k = g * cols + ((x / B) | 0);
        sw[k] += w;
        sc[k] += w * (c * cr + s * sr);
        ss[k] += w * (s * cr - c * sr);
        sn[k]++;
      }
    }
    for (let k = 0; k < sn.length; k++) {
      if (sn[k] === 0) continue;
      const L = lists[(k / cols) | 0];
      L.w.push(sw[k]); L.wc.push(sc[k]); L.ws.push(ss[k]); L.n.push(sn[k]);
      sw[k] = sc[k] = ss[k] = 0;
      sn[k] = 0;
    }
  }
  return lists.map((L) => ({
    w: Float64Array.from(L.w), wc: Float64Array.from(L.wc), ws: Float64Array.from(L.ws), n: Uint32Array.from(L.n),
  }));
}
