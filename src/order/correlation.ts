import type { OrientationField } from '../orientation/index.ts';
import { doubledAngles } from './doubledAngles.ts';

/**
 * Spatial correlation length of the orientation signal, in px: the lag at which the autocorrelation
 * of cos 2(theta - director) and sin 2(theta - director), along rows and along columns, first falls
 * below 1/e (averaged over the two directions). Rows and columns are sampled sparsely, so this costs
 * a small fraction of the field's own computation. Used to size bootstrap blocks so that neighbouring
 * blocks are nearly independent.
 */
export function correlationLengthPx(f: OrientationField, maxLag = 64): number {
  const { width, height, mask } = f;
  // Doubled-angle components (the director cancels in the autocorrelation of the complex signal), as
  // arrays rather than accessor functions: quick enough for every frame of the live readout.
  const { cos2: cv, sin2: sv } = doubledAngles(f);
  let mc = 0, ms = 0, m = 0;
  const step = Math.max(1, Math.floor(Math.sqrt((width * height) / 40_000)));
  for (let y = 0; y < height; y += step) for (let x = 0; x < width; x += step) {
    const i = y * width + x;
    if (!mask[i]) continue;
    mc += cv[i]; ms += sv[i]; m++;
  }
  if (m < 16) return 1;
  mc /= m; ms /= m;
  const L = Math.min(maxLag, Math.floor(Math.min(width, height) / 4));
  const lengths: number[] = [];
  for (const dx of [1, 0]) {
    const num = new Float64Array(L + 1), cnt = new Float64Array(L + 1);
    const lines = dx ? height : width, len = dx ? width : height;
    const lineStep = Math.max(1, Math.floor(lines / 32));
    for (let a = 0; a < lines; a += lineStep) {
      for (let b = 0; b + L < len; b += Math.max(1, Math.floor(len / 128))) {
        const i0 = dx ? a * width + b : b * width + a;
        if (!mask[i0]) continue;
        const c0 = cv[i0] - mc, s0 = sv[i0] - ms, stride = dx ? 1 : width;
        for (let k = 0, i = i0; k <= L; k++, i += stride) {
          if (!mask[i]) continue;
          num[k] += c0 * (cv[i] - mc) + s0 * (sv[i] - ms); cnt[k]++;
        }
      }
    }
    const r0 = num[0] / Math.max(1, cnt[0]);
    let lag = L;
    for (let k = 1; k <= L; k++) {
      const r = num[k] / Math.max(1, cnt[k]) / (r0 || 1);
      if (r < Math.exp(-1)) {
        const rPrev = k === 1 ? 1 : num[k - 1] / Math.max(1, cnt[k - 1]) / (r0 || 1);
        lag = k - 1 + (rPrev - Math.exp(-1)) / Math.max(1e-9, rPrev - r); // linear interpolation
        break;
      }
    }
    lengths.push(lag);
  }
  return Math.max(0.5, (lengths[0] + lengths[1]) / 2);
}
