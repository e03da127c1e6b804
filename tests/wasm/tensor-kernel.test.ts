import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { loadCv } from '../../src/cv/opencv.ts';
import { structureTensor, type StructureTensorOptions } from '../../src/orientation/index.ts';
import { KernelArena, loadTensorKernel } from '../../src/wasm/tensorKernel.ts';
import { float32Above, float32Below } from '../../src/orientation/fieldFromTensor.ts';

// The structure tensor runs in our own WebAssembly kernel (src/wasm/tensorKernel.as.ts). Outside
// references: OpenCV's own separable filters (opencv.js sepFilter2D, Sobel and multiply with
// BORDER_REFLECT, the pipeline the kernel replaces), fed filter taps from scipy.ndimage
// (tests/fixtures/reference/make_filter_kernels_fixture.py; opencv.js has no getGaussianKernel), never our own
// kernel code; and Math.atan2 / Math.hypot for the field pixels.
// scikit-image and scipy references are in tests/orientation/structure-tensor.reference.test.ts.
const taps: { gaussian: Record<string, number[]>; derivative: Record<string, number[]> } =
  JSON.parse(readFileSync(new URL('../fixtures/reference/filter-kernels-scipy.json', import.meta.url), 'utf8'));
/** scipy's taps for this sigma (the fixture's keys are written like Python floats: "1.0", "0.7"). */
const scipyTaps = (table: Record<string, number[]>, sigma: number): number[] => {
  const t = table[Number.isInteger(sigma) ? sigma.toFixed(1) : String(sigma)];
  if (!t) throw new Error(`no scipy taps for sigma ${sigma}: add it to make_filter_kernels_fixture.py and run it`);
  return t;
};

/** The tensor by OpenCV's functions, as the OpenCV tutorial on gradient structure tensors builds it. */
async function tensorByOpenCv(data: Float32Array, width: number, height: number, o: Required<Pick<StructureTensorOptions, 'sigmaPx' | 'sigmaDerivPx' | 'derivative'>>) {
  const cv = await loadCv();
  const mats: { delete(): void }[] = [];
  const keep = <T extends { delete(): void }>(m: T): T => (mats.push(m), m);
  try {
    const src = keep(cv.matFromArray(height, width, cv.CV_32F, Array.from(data)));
    const ix = keep(new cv.Mat()), iy = keep(new cv.Mat());
    const B = cv.BORDER_REFLECT, anchor = new cv.Point(-1, -1);
    const mat = (k: number[]) => keep(cv.matFromArray(k.length, 1, cv.CV_32F, k));
    if (o.derivative === 'sobel') {
      cv.Sobel(src, ix, cv.CV_32F, 1, 0, 3, 1, 0, B);
      cv.Sobel(src, iy, cv.CV_32F, 0, 1, 3, 1, 0, B);
    } else {
      const g = mat(scipyTaps(taps.gaussian, o.sigmaDerivPx)), dg = mat(scipyTaps(taps.derivative, o.sigmaDerivPx));
      cv.sepFilter2D(src, ix, cv.CV_32F, dg, g, anchor, 0, B);
      cv.sepFilter2D(src, iy, cv.CV_32F, g, dg, anchor, 0, B);
    }
    const xx = keep(new cv.Mat()), xy = keep(new cv.Mat()), yy = keep(new cv.Mat());
    cv.multiply(ix, ix, xx); cv.multiply(ix, iy, xy); cv.multiply(iy, iy, yy);
    const k = mat(scipyTaps(taps.gaussian, o.sigmaPx));
    for (const m of [xx, xy, yy]) cv.sepFilter2D(m, m, cv.CV_32F, k, k, anchor, 0, B);
    return { jxx: Float32Array.from(xx.data32F), jxy: Float32Array.from(xy.data32F), jyy: Float32Array.from(yy.data32F) };
  } finally {
    for (const m of mats) m.delete();
  }
}

function noise(n: number, seed: number): Float32Array {
  let s = seed;
  return Float32Array.from({ length: n }, () => ((s = (s * 1103515245 + 12345) >>> 0) / 2 ** 32) * 255);
}

describe('the tensor kernel against OpenCV', () => {
  // Odd widths (not a multiple of the kernel's 16-pixel rows), images narrower than a kernel (the
  // reflection folds more than once) and single rows and columns.
  const sizes: [number, number][] = [[37, 23], [64, 64], [5, 41], [1, 9], [9, 1], [3, 3], [200, 7]];
  const settings = [
    { sigmaPx: 2, sigmaDerivPx: 1, derivative: 'gaussian' as const },
    { sigmaPx: 0.7, sigmaDerivPx: 1, derivative: 'sobel' as const },
    { sigmaPx: 5, sigmaDerivPx: 2.5, derivative: 'gaussian' as const },
  ];
  for (const [w, h] of sizes) for (const o of settings) {
    it(`gives OpenCV's Jxx, Jxy, Jyy on ${w} x ${h} px (${o.derivative}, sigma ${o.sigmaPx})`, async () => {
      const data = noise(w * h, w * 31 + h);
      const ours = await structureTensor({ width: w, height: h, data }, o);
      const ref = await tensorByOpenCv(data, w, h, o);
      const scale = Math.max(1e-12, ...ref.jxx.map(Math.abs), ...ref.jyy.map(Math.abs));
      let worst = 0;
      for (const k of ['jxx', 'jxy', 'jyy'] as const) for (let i = 0; i < w * h; i++) worst = Math.max(worst, Math.abs(ours[k][i] - ref[k][i]));
      // Both in float32 with sums in another order: relative 1e-5 of the largest component (common practice, no source).
      expect(worst / scale).toBeLessThan(1e-5);
    });
  }
});

/**
 * The kernel's outputRow with a one-tap Gaussian [1] passes a tensor through unchanged, so its field pixels can be
 * checked on any tensor: one "ring" row per component, and a table of one row address each.
 */
async function fieldPixelsOf(cases: [number, number, number][]) {
  const k = await loadTensorKernel();
  const n = Math.ceil(cases.length / 16) * 16;
  const mem = new KernelArena(k);
  const kg = mem.reserve(1), t = [mem.reserve(1), mem.reserve(1), mem.reserve(1)];
  const rows = [mem.reserve(n), mem.reserve(n), mem.reserve(n), mem.reserve(n)], angle = mem.reserve(n);
  mem.commit();
  mem.view(kg, 1)[0] = 1;
  t.forEach((p, c) => { mem.addresses(p, 1)[0] = rows[c]; });
  const [jxx, jxy, jyy] = rows.map((p) => mem.view(p, n));
  cases.forEach(([a, b, c], i) => { jxx[i] = a; jxy[i] = b; jyy[i] = c; });
  k.outputRow(t[0], t[1], t[2], kg, 1, n, 1, rows[0], rows[1], rows[2], rows[3]);
  k.angles(rows[2], rows[3], angle, n);
  const [strength, conf, cos2, sin2] = rows.map((p) => Float32Array.from(mem.view(p, n)));
  return { strength, conf, cos2, sin2, angle: Float32Array.from(mem.view(angle, n)) };
}

describe('the kernel\'s field pixels against Math.atan2 and Math.hypot', () => {
  it('gives angle, coherency, texture strength and the doubled-angle components of any tensor', async () => {
    const values = [0, -0, 1, -1, 1e-20, -3.5, 250, 1e6];
    const cases: [number, number, number][] = [];
    for (const a of values) for (const b of values) for (const c of values) cases.push([Math.abs(a), b, Math.abs(c)]);
    let s = 7;
    // Every quadrant on circles of several radii: (Jxx, Jxy, Jyy) = (0, y/2, x) gives atan2(y, x).
    for (let k = 0; k < 20000; k++) {
      const t = (2 * Math.PI * k) / 20000 - Math.PI, r = 0.01 + (k % 97);
      const x = r * Math.cos(t), y = r * Math.sin(t);
      cases.push(x >= 0 ? [0, y / 2, x] : [-x, y / 2, 0]);
    }
    for (let i = 0; i < 4000; i++) {
      const r = () => ((s = (s * 1103515245 + 12345) >>> 0) / 2 ** 32);
      cases.push([r() * 100, (r() - 0.5) * 100, r() * 100]);
    }
    const { strength, conf, cos2, sin2, angle } = await fieldPixelsOf(cases);
    cases.forEach(([a0, b0, c0], i) => {
      const a = Math.fround(a0), b2 = 2 * Math.fround(b0), c = Math.fround(c0);
      const root = Math.hypot(c - a, b2), e = a + c;
      // Math.atan2 folded into (-pi/2, pi/2]: the same angle up to the A&S 4.4.47 polynomial's 1e-5 rad (from memory).
      let want = 0.5 * Math.atan2(b2, c - a);
      if (want <= -Math.PI / 2) want += Math.PI;
      const got = angle[i];
      expect(got).toBeGreaterThan(-Math.PI / 2);
      expect(got).toBeLessThanOrEqual(Math.PI / 2);
      const d = Math.abs(got - want);
      expect(Math.min(d, Math.PI - d), `angle of ${a0}, ${b0}, ${c0}`).toBeLessThan(2e-5);
      expect(Math.abs(strength[i] - e)).toBeLessThanOrEqual(1e-6 * Math.abs(e));
      expect(Math.abs(conf[i] - (e > 0 ? Math.min(1, root / e) : 0)), `coherency of ${a0}, ${b0}, ${c0}`).toBeLessThan(1e-6);
      if (root > 0) {
        expect(Math.abs(cos2[i] - (c - a) / root)).toBeLessThan(1e-6);
        expect(Math.abs(sin2[i] - b2 / root)).toBeLessThan(1e-6);
      } else {
        // No gradient: the convention of the field (cos 1, sin 0) rather than 0/0, and angle 0.
        expect([cos2[i], sin2[i], angle[i]]).toEqual([1, 0, 0]);
      }
    });
  });
});

/** A seeded uniform generator in [0, 1) (Numerical Recipes LCG). */
function lcg(seed: number) {
  let s = seed;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
}

describe('the kernel\'s mask against plain comparisons', () => {
  it('marks strength > floor and coherency >= least exactly as JavaScript compares the float32 values with the numbers', async () => {
    const k = await loadTensorKernel();
    const rnd = lcg(3), n = 1000 + 7;
    const mem = new KernelArena(k);
    const ps = mem.reserve(n), pc = mem.reserve(n), pm = mem.reserve(n);
    mem.commit();
    const strength = mem.view(ps, n), coherency = mem.view(pc, n), mask = new Uint8Array(k.memory.buffer, pm, n);
    for (const [floor, least] of [[0.1, 0], [1 / 3, 0.7], [0.3000000001, 1 / 7], [0, 1], [-1e-50, 0.5]]) {
      // Values on both sides of the thresholds, their float32 neighbours included, and NaN.
      for (let i = 0; i < n; i++) {
        strength[i] = [floor, Math.fround(floor), rnd(), NaN, floor * (1 + 1e-8), 0][i % 6];
        coherency[i] = [least, Math.fround(least), rnd(), NaN, least * (1 - 1e-8), 1][(i * 7) % 6];
      }
      const kept = k.maskPixels(ps, pc, n, float32Below(floor), float32Above(least), pm);
      let want = 0;
      for (let i = 0; i < n; i++) {
        const ok = strength[i] > floor && coherency[i] >= least ? 1 : 0;
        want += ok;
        expect(mask[i], `pixel ${i}: ${strength[i]} vs ${floor}, ${coherency[i]} vs ${least}`).toBe(ok);
      }
      expect(kept).toBe(want);
    }
  });

  it('rounds thresholds to the float32 on the right side', () => {
    for (const x of [0.1, 1 / 3, -0.1, 1e-50, -1e-50, 0, 3.4e38, 1e39, 16777217]) {
      const lo = float32Below(x), hi = float32Above(x);
      expect(lo).toBe(Math.fround(lo));
      expect(hi).toBe(Math.fround(hi));
      expect(lo).toBeLessThanOrEqual(x);
      expect(hi).toBeGreaterThanOrEqual(x);
      // Nothing float32 lies strictly between the rounded value and x.
      expect(Math.fround(lo + (x - lo) / 2) === lo || Math.fround(lo + (x - lo) / 2) === hi || lo === x).toBe(true);
    }
  });
});

describe('the kernel\'s block sums against plain sums', () => {
  it('gives the sums accumulateBlocks adds pixel by pixel, with a mask, a region, weights and ragged blocks', async () => {
    const k = await loadTensorKernel();
    const rnd = lcg(11), width = 37, rows = 5, B = 7, cols = Math.ceil(width / B), n = width * rows;
    const mem = new KernelArena(k);
    const sums = [mem.reserve(2 * cols), mem.reserve(2 * cols), mem.reserve(2 * cols), mem.reserve(cols)], tally = mem.reserve(4);
    const pm = mem.reserve(n), pr = mem.reserve(n), pw = mem.reserve(n), pc = mem.reserve(n), p2 = mem.reserve(n), p3 = mem.reserve(n);
    mem.commit();
    const buf = k.memory.buffer;
    const mask = new Uint8Array(buf, pm, n), region = new Uint8Array(buf, pr, n);
    const [weights, coherency, c2, s2] = [pw, pc, p2, p3].map((p) => mem.view(p, n));
    for (let i = 0; i < n; i++) {
      mask[i] = rnd() < 0.8 ? 1 : 0; region[i] = rnd() < 0.9 ? 1 : 0;
      weights[i] = rnd() < 0.1 ? 0 : rnd() * 3; coherency[i] = rnd();
      const t = rnd() * 6.3;
      c2[i] = Math.cos(t); s2[i] = Math.sin(t);
      if (!mask[i] && rnd() < 0.5) { c2[i] = NaN; s2[i] = NaN; } // left-out pixels need not be finite
    }
    for (const [useRegion, useWeights] of [[false, false], [true, true], [false, true]]) {
      const sw = new Float64Array(buf, sums[0], cols), sc = new Float64Array(buf, sums[1], cols), ss = new Float64Array(buf, sums[2], cols);
      const sn = new Uint32Array(buf, sums[3], cols), t = new Float64Array(buf, tally, 2);
      for (const a of [sw, sc, ss, sn, t]) a.fill(0);
      k.blockRows(pm, useRegion ? pr : 0, useWeights ? pw : 0, pc, p2, p3, width, rows, B, sums[0], sums[1], sums[2], sums[3], tally);
      const want = { w: new Float64Array(cols), c: new Float64Array(cols), s: new Float64Array(cols), n: new Uint32Array(cols) };
      let usable = 0, conf = 0;
      for (let i = 0; i < n; i++) {
        if (!mask[i] || (useRegion && !region[i])) continue;
        usable++; conf += coherency[i];
        const w = useWeights ? weights[i] : 1;
        if (!(w > 0)) continue;
        const bx = Math.floor((i % width) / B);
        want.w[bx] += w; want.c[bx] += w * c2[i]; want.s[bx] += w * s2[i]; want.n[bx]++;
      }
      expect([...sn]).toEqual([...want.n]);
      for (let b = 0; b < cols; b++) {
        // Float64 sums of float32 products in another order: equal to 1e-12 (common practice, no source).
        expect(Math.abs(sw[b] - want.w[b])).toBeLessThan(1e-12 * (1 + Math.abs(want.w[b])));
        expect(Math.abs(sc[b] - want.c[b])).toBeLessThan(1e-12 * (1 + Math.abs(want.w[b])));
        expect(Math.abs(ss[b] - want.s[b])).toBeLessThan(1e-12 * (1 + Math.abs(want.w[b])));
      }
      expect(t[0]).toBe(usable);
      expect(Math.abs(t[1] - conf)).toBeLessThan(1e-12 * (1 + conf));
    }
  });
});

describe('the kernel\'s lagged products against a plain loop', () => {
  it('gives the correlation length\'s sums of a line to the bit, usable flags and ragged lags included', async () => {
    const k = await loadTensorKernel();
    const rnd = lcg(23);
    for (const [len, L, step] of [[200, 64, 3], [97, 10, 1], [130, 65, 7], [66, 64, 1]]) {
      const mem = new KernelArena(k);
      const pc = mem.reserve(2 * len), ps = mem.reserve(2 * len), po = mem.reserve(len), pn = mem.reserve(2 * (L + 2)), pk = mem.reserve(2 * (L + 2));
      mem.commit();
      const buf = k.memory.buffer;
      const lc = new Float64Array(buf, pc, len), ls = new Float64Array(buf, ps, len), on = new Uint8Array(buf, po, len);
      const num = new Float64Array(buf, pn, L + 1), cnt = new Float64Array(buf, pk, L + 1);
      for (let b = 0; b < len; b++) { lc[b] = rnd() - 0.5; ls[b] = rnd() - 0.5; on[b] = rnd() < 0.85 ? 1 : 0; }
      num.fill(0); cnt.fill(0);
      k.lagProducts(pc, ps, po, len, L, step, pn, pk);
      // The loop of src/order/correlation.ts.
      const wantNum = new Float64Array(L + 1), wantCnt = new Float64Array(L + 1);
      for (let b = 0; b + L < len; b += step) {
        if (!on[b]) continue;
        for (let j = 0; j <= L; j++) {
          if (!on[b + j]) continue;
          wantNum[j] += lc[b] * lc[b + j] + ls[b] * ls[b + j]; wantCnt[j]++;
        }
      }
      expect([...num], `len ${len}, L ${L}`).toEqual([...wantNum]);
      expect([...cnt]).toEqual([...wantCnt]);
    }
  });
});

describe('the committed kernel binary', () => {
  it('is what the AssemblyScript source compiles to (run npm run wasm after editing it)', async () => {
    const build = await import('../../bin/build-wasm.ts');
    const text = build.moduleText(await build.compileKernel());
    expect(text === readFileSync(new URL('../../src/wasm/tensorKernel.wasm.ts', import.meta.url), 'utf8')).toBe(true);
  }, 60_000);
});
