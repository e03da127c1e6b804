import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { loadCv } from '../../src/cv/opencv.ts';
import { structureTensor, type StructureTensorOptions } from '../../src/orientation/index.ts';
import { KernelArena, loadTensorKernel } from '../../src/wasm/tensorKernel.ts';

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

describe('the kernel\'s field pixels against Math.atan2 and Math.hypot', () => {
  it('gives angle, coherency, texture strength and the doubled-angle components of any tensor', async () => {
    const k = await loadTensorKernel();
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
    const n = Math.ceil(cases.length / 16) * 16;
    const mem = new KernelArena(k);
    const p = Array.from({ length: 8 }, () => mem.reserve(n));
    mem.commit();
    const jxx = mem.view(p[0], n), jxy = mem.view(p[1], n), jyy = mem.view(p[2], n);
    cases.forEach(([a, b, c], i) => { jxx[i] = a; jxy[i] = b; jyy[i] = c; });
    k.fieldPixels(p[0], p[1], p[2], p[3], p[4], p[5], p[6], p[7], n);
    const [angle, conf, strength, cos2, sin2] = [3, 4, 5, 6, 7].map((q) => mem.view(p[q], n));
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
      expect(strength[i]).toBeCloseTo(e, 0);
      expect(Math.abs(strength[i] - e)).toBeLessThanOrEqual(1e-6 * Math.abs(e));
      expect(Math.abs(conf[i] - (e > 0 ? Math.min(1, root / e) : 0)), `coherency of ${a0}, ${b0}, ${c0}`).toBeLessThan(1e-6);
      if (root > 0) {
        expect(Math.abs(cos2[i] - (c - a) / root)).toBeLessThan(1e-6);
        expect(Math.abs(sin2[i] - b2 / root)).toBeLessThan(1e-6);
      } else {
        // No gradient: the convention of the field (cos 1, sin 0) rather than 0/0.
        expect([cos2[i], sin2[i]]).toEqual([1, 0]);
      }
    });
  });
});

describe('the committed kernel binary', () => {
  it('is what the AssemblyScript source compiles to (run npm run wasm after editing it)', async () => {
    const build = await import('../../bin/build-wasm.ts');
    const text = build.moduleText(await build.compileKernel());
    expect(text === readFileSync(new URL('../../src/wasm/tensorKernel.wasm.ts', import.meta.url), 'utf8')).toBe(true);
  }, 60_000);
});
