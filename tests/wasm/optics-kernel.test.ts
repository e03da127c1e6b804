import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { opticsKernel, OpticsLayout } from '../../src/wasm/index.ts';

const DEG = Math.PI / 180;
const ANGLES_DEG = [0, 22.5, 45, 67.5];

/**
 * The fit's pseudo-inverse for the angles 0, 22.5, 45 and 67.5 deg, written out: the design columns 1, cos 4a = (1, 0, -1, 0)
 * and sin 4a = (0, 1, 0, -1) are orthogonal, so a0 = mean, a4c = (I0 - I2) / 2, a4s = (I1 - I3) / 2 (least squares
 * by hand), and the fourth direction (1, -1, 1, -1) / 2 is the residual's.
 */
const P = [[0.25, 0.25, 0.25, 0.25], [0.5, 0, -0.5, 0], [0, 0.5, 0, -0.5]];
const COS4 = ANGLES_DEG.map((a) => Math.cos(4 * a * DEG)), SIN4 = ANGLES_DEG.map((a) => Math.sin(4 * a * DEG));

/** Runs fitFour on per-pixel intensities (four per pixel), optional clip flags and flat/dark values. */
function fit(pixels: number[][], o: { clip?: number[]; flat?: number[]; dark?: number[]; flatMean?: number } = {}) {
  const k = opticsKernel(), mem = new OpticsLayout(k), n = pixels.length, B = Math.ceil(n / 4) * 4 + 4;
  const I = [0, 1, 2, 3].map(() => mem.reserve(4 * B)), clipAt = mem.reserve(B), darkAt = o.dark ? mem.reserve(4 * B) : 0, flatAt = o.flat ? mem.reserve(4 * B) : 0;
  const outs = [0, 1, 2, 3, 4, 5, 6].map(() => mem.reserve(4 * B)), maskAt = mem.reserve(B), c = mem.reserve(80), sums = mem.reserve(16), counts = mem.reserve(16);
  mem.commit();
  // Values past the end that would be read if the tail were not excluded: a clipped flag and NaNs.
  I.forEach((at, j) => { const v = mem.f32(at, B); v.fill(NaN); pixels.forEach((p, t) => { v[t] = p[j]; }); });
  const clip = mem.u8(clipAt, B); clip.fill(1); clip.fill(0, 0, n); (o.clip ?? []).forEach((v, t) => { clip[t] = v; });
  if (o.dark) mem.f32(darkAt, B).set(o.dark);
  if (o.flat) mem.f32(flatAt, B).set(o.flat);
  mem.f32(c, 20).set([...P[0], ...P[1], ...P[2], ...COS4, ...SIN4]);
  mem.f64(sums, 2).fill(0); mem.i32(counts, 4).fill(0);
  k.fitFour(I[0], I[1], I[2], I[3], darkAt, flatAt, o.flatMean ?? 1, clipAt, n, c, outs[0], outs[1], outs[2], 0, outs[4], outs[5], outs[6], maskAt, sums, counts);
  const [angle, amplitude, residual, , confidence, cos2, sin2] = outs.map((at) => Array.from(mem.f32(at, n)));
  return { angle, amplitude, residual, confidence, cos2, sin2, mask: Array.from(mem.u8(maskAt, n)), sums: Array.from(mem.f64(sums, 2)), counts: Array.from(mem.i32(counts, 4)) };
}

/** I(alpha) = b + A sin^2 2(theta - alpha) (crossed polars, docs/methods.md §6.1), plus e (1, -1, 1, -1). */
const series = (thetaDeg: number, A: number, b: number, e = 0) => ANGLES_DEG.map((a, k) => b + A * Math.sin(2 * (thetaDeg - a) * DEG) ** 2 + (k % 2 ? -e : e));

const axialDiffDeg = (a: number, b: number) => { const d = Math.abs(a - b) % 180; return Math.min(d, 180 - d); };

describe('the optics kernel: the angle series fit (fitFour)', () => {
  it('gives the constructed angle, amplitude and residual, and cos 2 theta, sin 2 theta, over every angle', () => {
    // Angles over [0, 90) deg in 0.37-deg steps (every octant of atan2, and 0 itself), amplitude 0.4, background 0.1,
    // and a residual component e: the least-squares residual is |e| (1, -1, 1, -1) with 4 - 3 = 1 degree of freedom,
    // sqrt(4 e^2 / 1) = 2 |e| (closed form).
    const thetas = Array.from({ length: 244 }, (_, i) => i * 0.37), e = 0.01;
    const r = fit(thetas.map((t) => series(t, 0.4, 0.1, e)));
    thetas.forEach((t, i) => {
      // float32 arithmetic: angles within 1e-4 deg (a float32 unit near 1.5 rad is 7e-6 deg).
      expect(axialDiffDeg(r.angle[i] / DEG, t) % 90, `theta ${t}`).toBeLessThan(1e-4);
      expect(r.angle[i]).toBeGreaterThanOrEqual(0);
      expect(r.angle[i]).toBeLessThan(Math.PI / 2);
      expect(r.amplitude[i]).toBeCloseTo(0.4, 6);
      expect(r.residual[i]).toBeCloseTo(2 * e, 6);
      // Confidence A / (A + 3 residual + 1e-12).
      expect(r.confidence[i]).toBeCloseTo(0.4 / (0.4 + 6 * e), 6);
      // cos 2 theta and sin 2 theta of the angle the kernel gives (theta and theta + 90 deg differ in their sign).
      expect(r.cos2[i]).toBeCloseTo(Math.cos(2 * r.angle[i]), 6);
      expect(r.sin2[i]).toBeCloseTo(Math.sin(2 * r.angle[i]), 6);
      expect(r.mask[i]).toBe(1);
    });
    // Confidence-weighted sums of cos 4 theta and sin 4 theta, against the constructed angles.
    const w = 0.4 / (0.4 + 6 * e);
    expect(r.sums[0]).toBeCloseTo(thetas.reduce((s, t) => s + w * Math.cos(4 * t * DEG), 0), 4);
    expect(r.sums[1]).toBeCloseTo(thetas.reduce((s, t) => s + w * Math.sin(4 * t * DEG), 0), 4);
    expect(r.counts).toEqual([0, 0, 0, 0]);
  });

  it('does not read clipped pixels, dark flat fields or values that are not finite, and counts each; the lanes past n are not counted', () => {
    const good = series(30, 0.3, 0.05);
    const pixels = [good, good, [NaN, 0.1, 0.1, 0.1], good, good, [0.2, 0.2, 0.2, 0.2]];
    const r = fit(pixels, { clip: [0, 1, 0, 0, 0, 0], flat: [1, 1, 1, 1e-7, 1, 1], dark: [0, 0, 0, 0, 0, 0], flatMean: 1 });
    expect(r.mask).toEqual([1, 0, 0, 0, 1, 1]);
    // Clipped 1 (pixel 1), dark flat 1 (pixel 3), not finite 1 (pixel 2), zero amplitude 1 (pixel 5: equal intensities).
    expect(r.counts).toEqual([1, 1, 1, 1]);
    // Pixels not read: 0 everywhere but cos 2 theta (1); zero amplitude: cos2 NaN for the caller to make.
    for (const i of [1, 2, 3]) expect([r.angle[i], r.amplitude[i], r.confidence[i], r.cos2[i], r.sin2[i]]).toEqual([0, 0, 0, 1, 0]);
    expect(r.cos2[5]).toBeNaN();
    expect(r.amplitude[5]).toBe(0);
    expect(axialDiffDeg(r.angle[0] / DEG, 30)).toBeLessThan(1e-4);
  });

  it('divides by the flat field and scales by its mean after subtracting the dark value', () => {
    // x = (I - dark) flatMean / (flat - dark): the amplitude scales by flatMean / (flat - dark) = 0.8 / 0.4 = 2.
    const dark = 0.02, flat = 0.42, I = series(50, 0.2, 0.1).map((v) => v * 0.5 + dark);
    const r = fit([I], { dark: [dark], flat: [flat], flatMean: 0.8 });
    expect(r.amplitude[0]).toBeCloseTo(0.2, 6);
    expect(axialDiffDeg(r.angle[0] / DEG, 50)).toBeLessThan(1e-4);
  });
});

describe('the optics kernel: linear intensity', () => {
  /** IEC 61966-2-1 sRGB decoding (closed form). */
  const srgbDecode = (v: number) => (v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4);

  it('is the Rec. 709 luminance of the decoded sRGB values, marks planes at full scale, and keeps NaN', () => {
    const k = opticsKernel(), mem = new OpticsLayout(k), n = 7;
    const r = mem.reserve(64), g = mem.reserve(64), b = mem.reserve(64), out = mem.reserve(64), clip = mem.reserve(16), table = mem.reserve(4 * 65536);
    mem.commit();
    mem.f32(table, 65536).set(Float32Array.from({ length: 65536 }, (_, i) => srgbDecode(i / 65535)));
    const R = [0, 0.2, 0.5, 1, 0.999, NaN, 0.7], G = [0, 0.4, 0.5, 0.3, 0.1, 0.2, 0.7], B = [0, 0.6, 0.5, 0.3, 0.1, 0.2, -0.1];
    mem.f32(r, n).set(R); mem.f32(g, n).set(G); mem.f32(b, n).set(B); mem.u8(clip, 16).fill(0);
    expect(k.intensityRgb(r, g, b, n, 0.999, table, out, clip)).toBeGreaterThan(0);
    const lum = mem.f32(out, n);
    for (let t = 0; t < n; t++) {
      // ITU-R BT.709 weights; values clamped to [0, 1] before decoding (the table's ends).
      const want = 0.2126 * srgbDecode(Math.min(1, Math.max(0, R[t]))) + 0.7152 * srgbDecode(Math.min(1, Math.max(0, G[t]))) + 0.0722 * srgbDecode(Math.min(1, Math.max(0, B[t])));
      if (Number.isNaN(R[t])) expect(lum[t]).toBeNaN();
      else expect(Math.abs(lum[t] - want), `pixel ${t}`).toBeLessThan(2e-5); // the table's step near 1: 2.4 / 65535 / 2
    }
    expect(Array.from(mem.u8(clip, 8))).toEqual([0, 0, 0, 1, 1, 0, 0, 0]);
  });

  it('reads the table entry round(65535 clamp(v, 0, 1)) of each value, also at the halfway points and ends, and keeps NaN', () => {
    const k = opticsKernel(), mem = new OpticsLayout(k), n = 4096;
    const p = mem.reserve(4 * n), clip = mem.reserve(n), table = mem.reserve(4 * 65536);
    mem.commit();
    // A table whose entry is its own index shows which entry each value read.
    mem.f32(table, 65536).set(Float32Array.from({ length: 65536 }, (_, i) => i));
    const v = new Float32Array(n);
    const specials = [0, -0, -1e-30, -5, 1, 1.5, Infinity, -Infinity, NaN, 1e-45];
    specials.forEach((x, t) => { v[t] = x; });
    // Float32 values next to halfway points (j + 1/2) / 65535 between entries, and random values in [0, 1].
    const up = (x: number, by: number) => { const f = new Float32Array([x]), u = new Int32Array(f.buffer); u[0] += by; return f[0]; };
    for (let t = specials.length; t < 3000; t++) { const j = (t * 7919) % 65535; v[t] = up(Math.fround((j + 0.5) / 65535), (t % 5) - 2); }
    for (let t = 3000; t < n; t++) v[t] = Math.random();
    mem.f32(p, n).set(v); mem.u8(clip, n).fill(0);
    k.intensityGrey(p, n, 2, table, p, clip);
    const got = mem.f32(p, n);
    for (let t = 0; t < n; t++) {
      if (Number.isNaN(v[t])) { expect(got[t]).toBeNaN(); continue; }
      // The entry by its definition: clamp to [0, 1], then 65535 c + 1/2 in float32 arithmetic, rounded down (derived).
      const c = Math.min(1, Math.max(0, v[t]));
      expect(got[t], `value ${v[t]}`).toBe(Math.floor(Math.fround(Math.fround(c * 65535) + 0.5)));
    }
  });
});

describe('the optics kernel: the plate reading\'s colour cells', () => {
  it('gives each pixel its cell round((2^bits - 1) v) per sRGB-encoded channel, lists new cells once, and writes their readings', () => {
    const k = opticsKernel(), mem = new OpticsLayout(k), n = 6, bits = 3, nSub = 1 << (3 * bits);
    const r = mem.reserve(32), g = mem.reserve(32), b = mem.reserve(32), subs = mem.reserve(32), clip = mem.reserve(16), index = mem.reserve(4 * nSub);
    const fresh = mem.reserve(32), counts = mem.reserve(8), readings = mem.reserve(64), out = [0, 1, 2, 3, 4].map(() => mem.reserve(32)), mask = mem.reserve(16), sum = mem.reserve(8);
    mem.commit();
    // Pixels: two of one colour, one other, one at full scale, one NaN, one negative.
    mem.f32(r, n).set([0.5, 0.5, 0.1, 0.9995, NaN, -0.1]); mem.f32(g, n).set([0.2, 0.2, 1 / 7, 0.2, 0.2, 0.2]); mem.f32(b, n).set([0.9, 0.9, 0, 0.2, 0.2, 0.2]);
    mem.u8(clip, 16).fill(0); mem.i32(index, nSub).fill(-1); mem.i32(counts, 2).fill(0);
    const nFresh = k.plateCells(r, g, b, n, bits, 0.999, 0, subs, clip, index, fresh, counts);
    // 7 levels per channel: round(7 x 0.5) = 4 (3.5 rounds up), round(7 x 0.2) = 1, round(7 x 0.9) = 6; 0.1 -> 1, 1/7 -> 1, 0 -> 0.
    const cellA = (4 << 6) | (1 << 3) | 6, cellB = (1 << 6) | (1 << 3) | 0;
    expect(Array.from(mem.i32(subs, n))).toEqual([cellA, cellA, cellB, -1, -1, -1]);
    expect(nFresh).toBe(2);
    expect(Array.from(mem.i32(fresh, 2))).toEqual([cellA, cellB]);
    expect(Array.from(mem.i32(counts, 2))).toEqual([1, 2]); // one at full scale, two not usable otherwise
    expect(Array.from(mem.u8(clip, n))).toEqual([0, 0, 0, 1, 0, 0]);
    // Readings: entry 0 for cell A (angle 0.5, 300 nm, confidence 0.8, kept, cos and sin of 1), entry 1 for cell B (masked).
    const ix = mem.i32(index, nSub); ix[cellA] = 0; ix[cellB] = 1;
    mem.f32(readings, 14).set([0.5, 300, 0.8, 0, 0.54, 0.84, 0, -0.25, 10, 0.1, 1, 0.88, -0.48, 0]);
    mem.f64(sum, 1)[0] = 2;
    expect(k.plateWrite(subs, n, index, readings, out[0], out[1], out[2], out[3], out[4], mask, sum)).toBe(1);
    // The pixels left usable counted in their entry (two of cell A, none of the masked cell B) and their confidence
    // summed in float64 onto what the sum held: 2 + 0.8 + 0.8 with 0.8 as float32.
    expect([mem.i32(readings, 14)[6], mem.i32(readings, 14)[13]]).toEqual([2, 0]);
    expect(mem.f64(sum, 1)[0]).toBe(2 + Math.fround(0.8) + Math.fround(0.8));
    // Without a sum (0) nothing is counted: the same outputs, the counts as they were.
    expect(k.plateWrite(subs, n, index, readings, out[0], out[1], out[2], out[3], out[4], mask, 0)).toBe(1);
    expect([mem.i32(readings, 14)[6], mem.i32(readings, 14)[13]]).toEqual([2, 0]);
    expect(Array.from(mem.u8(mask, n))).toEqual([1, 1, 0, 0, 0, 0]);
    expect(Array.from(mem.f32(out[0], n))).toEqual([0.5, 0.5, -0.25, 0, 0, 0]);
    expect(Array.from(mem.f32(out[1], n))).toEqual([300, 300, 10, 0, 0, 0]);
    expect(Array.from(mem.u8(mask, n))).toEqual([1, 1, 0, 0, 0, 0]);
    // cos 2 theta and sin 2 theta from the entries; the doubled angle of angle 0 (1, 0) where not usable.
    expect(Array.from(mem.f32(out[3], n))).toEqual([0.54, 0.54, 0.88, 1, 1, 1].map(Math.fround));
    expect(Array.from(mem.f32(out[4], n))).toEqual([0.84, 0.84, -0.48, 0, 0, 0].map(Math.fround));
  });
});

describe('the optics kernel: the plate pair', () => {
  it('gives pixels with the same pair of colour cells the same table entry, lists each new pair once, and keeps entries through a rehash', () => {
    const k = opticsKernel(), mem = new OpticsLayout(k), n = 5, bits = 2;
    const planes = [0, 1, 2, 3, 4, 5].map(() => mem.reserve(32)), clip = mem.reserve(16), hits = mem.reserve(32), cellsB = mem.reserve(32), fresh = mem.reserve(32), counts = mem.reserve(4);
    const out = [0, 1, 2, 3, 4].map(() => mem.reserve(32)), mask = mem.reserve(16), small = mem.reserve(32 * 16), big = mem.reserve(32 * 32), cache = mem.reserve(12 * 4096);
    const sum = mem.reserve(8);
    mem.commit();
    // Image A: pixels 0, 1, 3 one colour, pixel 2 another, pixel 4 at full scale; image B: one colour, pixel 3 another.
    const A = [[0, 0, 1, 0, 1], [0, 0, 0, 0, 0.2], [0, 0, 0, 0, 0.2]], Bi = [[0.9, 0.9, 0.9, 0, 0.5], [0.34, 0.34, 0.34, 0.34, 0.34], [0, 0, 0, 0, 0]];
    [...A, ...Bi].forEach((p, j) => mem.f32(planes[j], n).set(p));
    // Values just below full scale are usable: 0.998 in image A's first plane of pixel 2.
    mem.f32(planes[0], n)[2] = 0.998;
    mem.u8(clip, 16).fill(0); mem.i32(counts, 1).fill(0); mem.i32(small, 8 * 16).fill(-1); mem.i32(cache, 3 * 4096).fill(-1);
    const shift = 32 - 4; // 16 entries
    const nFresh = k.pairCells(planes[0], planes[1], planes[2], planes[3], planes[4], planes[5], n, bits, 0.999, 0, 0, clip, small, shift, cache, hits, cellsB, fresh, counts);
    const h = Array.from(mem.i32(hits, n));
    expect(h[0]).toBe(h[1]);
    expect(new Set([h[0], h[2], h[3]]).size).toBe(3);
    expect(h[4]).toBe(-1);
    expect(nFresh).toBe(3);
    expect(Array.from(mem.i32(counts, 1))).toEqual([1]);
    expect(Array.from(mem.u8(clip, n))).toEqual([0, 0, 0, 0, 1]);
    // Cells: 3 levels a channel, round(3 v): A pixel 0 = (0, 0, 0) = 0, pixel 2 = (3, 0, 0) = 48; B pixel 0 = (3, 1, 0) = 52, pixel 3 = (0, 1, 0) = 4.
    const ints = mem.i32(small, 8 * 16);
    expect([ints[h[0] / 4], ints[h[0] / 4 + 1], ints[h[2] / 4], ints[h[2] / 4 + 1], ints[h[3] / 4], ints[h[3] / 4 + 1]]).toEqual([0, 52, 48, 52, 0, 4]);
    // Readings written by the caller, then moved into a table twice the size: the same pairs find the same readings.
    const floats = mem.f32(small, 8 * 16);
    [h[0], h[2], h[3]].forEach((o, j) => { floats.set([0.1 * (j + 1), 100 * (j + 1), 0.5, 1, 0], o / 4 + 2); ints[o / 4 + 7] = j === 1 ? 1 : 0; });
    mem.i32(big, 8 * 32).fill(-1);
    k.pairRehash(small, shift, big, shift - 1);
    mem.i32(cache, 3 * 4096).fill(-1);
    expect(k.pairCells(planes[0], planes[1], planes[2], planes[3], planes[4], planes[5], n, bits, 0.999, 0, 0, clip, big, shift - 1, cache, hits, cellsB, fresh, counts)).toBe(0);
    mem.f64(sum, 1)[0] = 0;
    expect(k.pairWrite(hits, n, big, out[0], out[1], out[2], out[3], out[4], mask, sum)).toBe(1);
    expect(Array.from(mem.f32(out[1], n))).toEqual([100, 100, 200, 300, 0]);
    expect(Array.from(mem.u8(mask, n))).toEqual([1, 1, 0, 1, 0]);
    // Each entry's last int32: masked + 2 x its pixels left usable (pixels 0 and 1 share one entry, pixel 3 has its own,
    // pixel 2's entry is masked); the usable pixels' confidence (0.5 each) summed: 1.5.
    const moved = mem.i32(big, 8 * 32), flagsOf = (cellA: number, cellB: number) => {
      for (let o = 0; o < moved.length; o += 8) if (moved[o] === cellA && moved[o + 1] === cellB) return moved[o + 7];
      return NaN;
    };
    expect([flagsOf(0, 52), flagsOf(48, 52), flagsOf(0, 4)]).toEqual([4, 1, 2]);
    expect(mem.f64(sum, 1)[0]).toBe(1.5);
  });

  it('finds on every row the retardance a scan of every 4th entry and then +-4 entries around the best finds (cellRows)', () => {
    // A made-up lookup: 6 rows of 40 retardances, Lab along a helix; coarse entries and boxes as CellRows lays them out
    // (per row L, a, b of every 4th entry, nCp each; boxes of 8 coarse entries: minima then maxima, nBp each).
    const nR = 40, nRows = 3, stride = 2, boxEntries = 8, nBoxes = Math.ceil(Math.ceil(nR / 4) / boxEntries), nBp = nBoxes + (nBoxes % 2), nCp = nBoxes * boxEntries;
    const C = Float32Array.from({ length: 6 * nR * 3 }, (_, i) => { const e = Math.floor(i / 3), d = i % 3; return d === 0 ? 50 + 0.5 * (e % nR) : 30 * Math.cos(0.3 * e + d); });
    const coarse = new Float64Array(nRows * 3 * nCp), boxes = new Float64Array(nRows * 6 * nBp);
    for (let r = 0; r < nRows; r++) for (let d = 0; d < 3; d++) {
      boxes.fill(Infinity, 6 * nBp * r + d * nBp, 6 * nBp * r + (d + 1) * nBp); boxes.fill(-Infinity, 6 * nBp * r + (3 + d) * nBp, 6 * nBp * r + (4 + d) * nBp);
      for (let g = 0; g < nBoxes; g++) for (let kk = 4 * boxEntries * g; kk < Math.min(nR, 4 * boxEntries * (g + 1)); kk += 4) {
        const v = C[3 * (r * stride * nR + kk) + d], lo = 6 * nBp * r + d * nBp + g, hi = lo + 3 * nBp;
        coarse[3 * nCp * r + d * nCp + kk / 4] = v;
        boxes[lo] = Math.min(boxes[lo], v); boxes[hi] = Math.max(boxes[hi], v);
      }
    }
    const k = opticsKernel(), mem = new OpticsLayout(k);
    const cAt = mem.reserve(4 * C.length), coAt = mem.reserve(8 * coarse.length), bAt = mem.reserve(8 * boxes.length), rowsAt = mem.reserve(2 * nRows);
    const colours = [[55, 10, -20], [62, -25, 5], [50, 0, 0], [70, 29, 29]];
    const boundsAt = mem.reserve(8 * nBp), distsAt = mem.reserve(8 * boxEntries), labsAt = mem.reserve(24 * colours.length), guessesAt = mem.reserve(4 * colours.length), allAt = mem.reserve(2 * nRows * colours.length);
    mem.commit();
    mem.f32(cAt, C.length).set(C); mem.f64(coAt, coarse.length).set(coarse); mem.f64(bAt, boxes.length).set(boxes);
    // All the colours in one call (row by row for all), and each on its own: the same rows.
    mem.f64(labsAt, 3 * colours.length).set(colours.flat());
    k.cellRows(cAt, 3, nR, nRows, stride, coAt, nCp, bAt, nBoxes, nBp, boxEntries, labsAt, colours.length, guessesAt, boundsAt, distsAt, allAt);
    const together = Array.from(mem.u16(allAt, nRows * colours.length));
    const d2 = (r: number, kk: number, q: number[]) => [0, 1, 2].reduce((s, d) => s + (C[3 * (r * stride * nR + kk) + d] - q[d]) ** 2, 0);
    for (const [ci, q] of colours.entries()) {
      mem.f64(labsAt, 3).set(q);
      k.cellRows(cAt, 3, nR, nRows, stride, coAt, nCp, bAt, nBoxes, nBp, boxEntries, labsAt, 1, guessesAt, boundsAt, distsAt, rowsAt);
      // The scan without boxes: the first nearest of every 4th entry, then each of +-4 entries nearer than the best so far.
      const want = [0, 1, 2].map((r) => {
        let bk = 0, bd = Infinity;
        for (let kk = 0; kk < nR; kk += 4) if (d2(r, kk, q) < bd) { bd = d2(r, kk, q); bk = kk; }
        for (let kk = Math.max(0, bk - 4); kk <= Math.min(nR - 1, bk + 4); kk++) if (d2(r, kk, q) < bd) { bd = d2(r, kk, q); bk = kk; }
        return bk;
      });
      expect(Array.from(mem.u16(rowsAt, nRows)), `colour ${q}`).toEqual(want);
      expect(together.slice(ci * nRows, (ci + 1) * nRows), `colour ${q} with the others`).toEqual(want);
    }
  });
});

describe('the optics kernel: the lookup\'s spectral sums', () => {
  /**
   * Runs lookupXyz for polariser 0 deg and analyser 90 deg (crossed), sample axes `thetasDeg`, retardances `retsNm`,
   * wavelengths `lamNm` with weights (wx, wy, wz), and a compensator of `compNm` at 45 deg (or none): X, Y, Z per entry.
   */
  const run = (thetasDeg: number[], retsNm: number[], lamNm: number[], w: number[][], compNm: number | null) => {
    const k = opticsKernel(), mem = new OpticsLayout(k), nR = retsNm.length, nRp = nR + (nR % 2), nL = lamNm.length, nA = thetasDeg.length;
    const at = { ch: mem.reserve(8 * nL * nRp), sh: mem.reserve(8 * nL * nRp), rows: mem.reserve(32 * nA), cp: mem.reserve(8 * nL), sp: mem.reserve(8 * nL),
      wx: mem.reserve(8 * nL), wy: mem.reserve(8 * nL), wz: mem.reserve(8 * nL), out: mem.reserve(24 * nA * nRp) };
    mem.commit();
    const ch = mem.f64(at.ch, nL * nRp), sh = mem.f64(at.sh, nL * nRp);
    retsNm.forEach((g, kk) => lamNm.forEach((l, i) => { ch[i * nRp + kk] = Math.cos((Math.PI * g) / l); sh[i * nRp + kk] = Math.sin((Math.PI * g) / l); }));
    // Polarised light along x: in the sample's axes (cos theta, -sin theta).
    mem.f64(at.rows, 4 * nA).set(thetasDeg.flatMap((t) => [Math.cos(t * DEG), Math.sin(t * DEG), Math.cos(t * DEG), -Math.sin(t * DEG)]));
    mem.f64(at.cp, nL).set(lamNm.map((l) => (compNm === null ? 1 : Math.cos((Math.PI * compNm) / l))));
    mem.f64(at.sp, nL).set(lamNm.map((l) => (compNm === null ? 0 : Math.sin((Math.PI * compNm) / l))));
    [at.wx, at.wy, at.wz].forEach((a, d) => mem.f64(a, nL).set(w[d]));
    k.lookupXyz(at.ch, at.sh, nRp, nL, nA, at.rows, compNm === null ? 0 : 1, Math.SQRT1_2, Math.SQRT1_2, at.cp, at.sp, 0, 1, at.wx, at.wy, at.wz, at.out);
    const out = mem.f64(at.out, 3 * nA * nRp);
    return (j: number, kk: number) => [0, 1, 2].map((d) => out[3 * (j * nRp + kk) + d]);
  };
  const lam = [450, 550, 650], w = [[0.2, 0.3, 0.5], [0.1, 0.8, 0.1], [0.7, 0.2, 0.1]];

  it('gives the crossed-polariser transmission sin^2(2 theta) sin^2(pi Gamma / lambda) summed with the weights (no compensator)', () => {
    // Closed form for a linear retarder between crossed polarisers (Hecht, Optics, chapter 8, polarisation; section from memory).
    const thetas = [0, 10, 30, 45, 80], rets = [0, 100, 275, 540, 801];
    const xyz = run(thetas, rets, lam, w, null);
    thetas.forEach((t, j) => rets.forEach((g, kk) => {
      const want = [0, 1, 2].map((d) => lam.reduce((s, l, i) => s + w[d][i] * Math.sin(2 * t * DEG) ** 2 * Math.sin((Math.PI * g) / l) ** 2, 0));
      xyz(j, kk).forEach((v, d) => expect(v, `theta ${t}, ${g} nm`).toBeCloseTo(want[d], 12));
    }));
  });

  it('gives the compensator\'s own transmission sin^2(pi Gamma_c / lambda) where the sample lies along the polariser', () => {
    // A retarder along the polariser leaves the light unchanged; the compensator at 45 deg between crossed
    // polarisers then passes sin^2(pi Gamma_c / lambda) (the same closed form at 45 deg).
    const xyz = run([0], [0, 120, 333], lam, w, 550);
    [0, 1, 2].forEach((kk) => {
      const want = [0, 1, 2].map((d) => lam.reduce((s, l, i) => s + w[d][i] * Math.sin((Math.PI * 550) / l) ** 2, 0));
      xyz(0, kk).forEach((v, d) => expect(v).toBeCloseTo(want[d], 12));
    });
  });
});

/**
 * A radix-2 decimation-in-time FFT written out (Cooley & Tukey 1965) as registration.ts ran it in TypeScript before the
 * kernel took it over: twiddles per stage by the recurrence w_{k+1} = w_k w_1, bit-reversal permutation, butterflies; the
 * 2-D transform as each row, then the rows permuted and the stages run down the columns. The kernel's fft2 must give
 * these bits (the same float64 operations in the same order).
 */
function referenceFft2(re: Float64Array, im: Float64Array, n: number, inverse: boolean) {
  const twr = new Float64Array(n), twi = new Float64Array(n), rev = new Int32Array(n);
  for (let len = 2; len <= n; len <<= 1) {
    const ang = ((inverse ? 2 : -2) * Math.PI) / len, wr = Math.cos(ang), wi = Math.sin(ang);
    let cr = 1, ci = 0;
    for (let k = 0; k < len / 2; k++) {
      twr[len / 2 - 1 + k] = cr; twi[len / 2 - 1 + k] = ci;
      const ncr = cr * wr - ci * wi; ci = cr * wi + ci * wr; cr = ncr;
    }
  }
  for (let i = 1, j = 0; i < n; i++) {
    let bit = n >> 1;
    for (; j & bit; bit >>= 1) j ^= bit;
    j ^= bit;
    rev[i] = j;
  }
  const fly = (r: Float64Array, m: Float64Array, a: number, b: number, cr: number, ci: number) => {
    const tr = r[b] * cr - m[b] * ci, ti = r[b] * ci + m[b] * cr;
    r[b] = r[a] - tr; m[b] = m[a] - ti; r[a] += tr; m[a] += ti;
  };
  for (let y = 0; y < n; y++) {
    const r = re.subarray(y * n, y * n + n), m = im.subarray(y * n, y * n + n);
    for (let i = 1; i < n; i++) if (i < rev[i]) { const j = rev[i]; [r[i], r[j]] = [r[j], r[i]]; [m[i], m[j]] = [m[j], m[i]]; }
    for (let len = 2; len <= n; len <<= 1) for (let i = 0; i < n; i += len) for (let k = 0; k < len / 2; k++) fly(r, m, i + k, i + k + len / 2, twr[len / 2 - 1 + k], twi[len / 2 - 1 + k]);
  }
  for (let i = 1; i < n; i++) if (i < rev[i]) for (let x = 0; x < n; x++) {
    const p = i * n + x, q = rev[i] * n + x;
    [re[p], re[q]] = [re[q], re[p]]; [im[p], im[q]] = [im[q], im[p]];
  }
  for (let len = 2; len <= n; len <<= 1) for (let i = 0; i < n; i += len) for (let k = 0; k < len / 2; k++) {
    for (let x = 0; x < n; x++) fly(re, im, (i + k) * n + x, (i + k + len / 2) * n + x, twr[len / 2 - 1 + k], twi[len / 2 - 1 + k]);
  }
  return { twr, twi, rev };
}

/** The kernel's fft2 of (re, im), n x n, with the twiddles and permutation of referenceFft2. */
function kernelFft2(re: Float64Array, im: Float64Array, n: number, inverse: boolean) {
  const { twr, twi, rev } = referenceFft2(new Float64Array(n * n), new Float64Array(n * n), n, inverse);
  const k = opticsKernel(), mem = new OpticsLayout(k);
  const at = { re: mem.reserve(8 * n * n), im: mem.reserve(8 * n * n), twr: mem.reserve(8 * n), twi: mem.reserve(8 * n), rev: mem.reserve(4 * n) };
  mem.commit();
  mem.f64(at.re, n * n).set(re); mem.f64(at.im, n * n).set(im); mem.f64(at.twr, n).set(twr); mem.f64(at.twi, n).set(twi); mem.i32(at.rev, n).set(rev);
  k.fft2(at.re, at.im, n, at.twr, at.twi, at.rev);
  return { re: mem.f64(at.re, n * n).slice(), im: mem.f64(at.im, n * n).slice() };
}

describe('the optics kernel: the 2-D FFT of the registration check (fft2)', () => {
  const data = (n: number, seed: number) => Float64Array.from({ length: n * n }, (_, i) => Math.sin(seed + 0.37 * i) * Math.cos(0.011 * i * i + seed));
  it('is the 2-D discrete Fourier transform sum x[y, x] e^(-+2 pi i (u x + v y) / n) (unscaled), forward and inverse', () => {
    const n = 16, re = data(n, 1), im = data(n, 2);
    for (const inverse of [false, true]) {
      const got = kernelFft2(re, im, n, inverse), s = inverse ? 1 : -1;
      let worst = 0;
      for (let v = 0; v < n; v++) for (let u = 0; u < n; u++) {
        let xr = 0, xi = 0;
        for (let y = 0; y < n; y++) for (let x = 0; x < n; x++) {
          const a = (s * 2 * Math.PI * (u * x + v * y)) / n, c = Math.cos(a), si = Math.sin(a);
          xr += re[y * n + x] * c - im[y * n + x] * si; xi += re[y * n + x] * si + im[y * n + x] * c;
        }
        worst = Math.max(worst, Math.abs(got.re[v * n + u] - xr), Math.abs(got.im[v * n + u] - xi));
      }
      // The values are of order 1 and sums of 256 terms: double rounding leaves errors near 1e-14.
      expect(worst).toBeLessThan(1e-12);
    }
  });
  it('gives the bits of the radix-2 transform written out in TypeScript (referenceFft2), for 16 to 512 points a side', () => {
    for (const n of [16, 64, 512]) for (const inverse of [false, true]) {
      const re = data(n, n), im = inverse ? data(n, 3) : new Float64Array(n * n);
      const got = kernelFft2(re, im, n, inverse), want = { re: re.slice(), im: im.slice() };
      referenceFft2(want.re, want.im, n, inverse);
      expect(Buffer.from(got.re.buffer).equals(Buffer.from(want.re.buffer))).toBe(true);
      expect(Buffer.from(got.im.buffer).equals(Buffer.from(want.im.buffer))).toBe(true);
    }
  });
});

describe('the optics kernel: the angle series\' low-amplitude pixels (lowAmplitude)', () => {
  it('lists, in order, the pixels kept by the mask whose amplitude is at or below the limit, and no lane past n', () => {
    const k = opticsKernel(), mem = new OpticsLayout(k), n = 11;
    const mask = mem.reserve(16), amplitude = mem.reserve(64), out = mem.reserve(64);
    mem.commit();
    // The limit 0.1 is not a float32: fround(0.1) lies just above it, so that amplitude is not at or below it; the
    // float32 just below 0.1 is. NaN never is. Pixel 3 is below the limit but masked out; past n (11) all are low.
    const below = Math.fround(0.1) - 2 ** -27, limit = 0.1;
    expect(below <= limit && Math.fround(below) === below && Math.fround(0.1) > limit).toBe(true);
    mem.f32(amplitude, 16).set([0.05, 0.2, Math.fround(0.1), 0.01, below, NaN, 0, 0.3, -1, 0.5, 0.1, 0, 0, 0, 0, 0]);
    mem.u8(mask, 16).set([1, 1, 1, 0, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1]);
    const m = k.lowAmplitude(mask, amplitude, n, limit, out);
    expect(Array.from(mem.i32(out, m))).toEqual([0, 4, 6, 8]);
  });
});

describe('the committed optics kernel binary', () => {
  it('is what the AssemblyScript source compiles to (run npm run wasm after editing it)', async () => {
    const build = await import('../../bin/build-wasm.ts');
    const text = build.moduleText(await build.compileKernel('optics'), 'optics');
    expect(text === readFileSync(new URL('../../src/wasm/opticsKernel.wasm.ts', import.meta.url), 'utf8')).toBe(true);
  }, 60_000);
});
