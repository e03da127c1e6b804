import type { OrientationField } from '../orientation/index.ts';
import { doubledAngles } from './doubledAngles.ts';
import { KernelArena, loadedTensorKernel, type KernelExports } from '../wasm/index.ts';

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
    const k = loadedTensorKernel();
    if (k) {
      lagProductsByKernel(k, f, cv, sv, mc, ms, dx === 1, L, num, cnt);
      lengths.push(lagAtOneOverE(num, cnt, L));
      continue;
    }
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
    lengths.push(lagAtOneOverE(num, cnt, L));
  }
  return Math.max(0.5, (lengths[0] + lengths[1]) / 2);
}

/** The lag at which the autocorrelation num[k] / cnt[k] (over that at lag 0) first falls below 1/e, interpolated; L if never. */
function lagAtOneOverE(num: Float64Array, cnt: Float64Array, L: number): number {
  const r0 = num[0] / Math.max(1, cnt[0]);
  for (let k = 1; k <= L; k++) {
    const r = num[k] / Math.max(1, cnt[k]) / (r0 || 1);
    if (r < Math.exp(-1)) {
      const rPrev = k === 1 ? 1 : num[k - 1] / Math.max(1, cnt[k - 1]) / (r0 || 1);
      return k - 1 + (rPrev - Math.exp(-1)) / Math.max(1e-9, rPrev - r); // linear interpolation
    }
  }
  return L;
}

/**
 * The sampled lines' lagged products (the loop above) by the tensor kernel's lagProducts, which adds each lag's
 * terms in the same order: each line's centred components are written into the kernel's memory, then summed
 * there two lags at a time. The same num and cnt to the bit.
 */
function lagProductsByKernel(
  k: KernelExports, f: OrientationField, cv: Float32Array, sv: Float32Array, mc: number, ms: number,
  alongRows: boolean, L: number, num: Float64Array, cnt: Float64Array,
): void {
  const { width, height, mask } = f;
  const lines = alongRows ? height : width, len = alongRows ? width : height, stride = alongRows ? 1 : width;
  const lineStep = Math.max(1, Math.floor(lines / 32)), step = Math.max(1, Math.floor(len / 128));
  const mem = new KernelArena(k);
  const pc = mem.reserve(2 * len), ps = mem.reserve(2 * len), po = mem.reserve(len / 4 + 1), pn = mem.reserve(2 * (L + 2)), pk = mem.reserve(2 * (L + 2));
  mem.commit();
  const buf = k.memory.buffer;
  const lc = new Float64Array(buf, pc, len), ls = new Float64Array(buf, ps, len), on = new Uint8Array(buf, po, len);
  const kn = new Float64Array(buf, pn, L + 1), kc = new Float64Array(buf, pk, L + 1);
  kn.fill(0); kc.fill(0);
  for (let a = 0; a < lines; a += lineStep) {
    for (let b = 0, i = alongRows ? a * width : a; b < len; b++, i += stride) {
      on[b] = mask[i];
      lc[b] = cv[i] - mc;
      ls[b] = sv[i] - ms;
    }
    k.lagProducts(pc, ps, po, len, L, step, pn, pk);
  }
  num.set(kn);
  cnt.set(kc);
}
