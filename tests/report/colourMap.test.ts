import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import {
  angleIndex, cyclicLab, cyclicSrgb8, labToLinearSrgb, orientationColourTable, orientationRgba, weightedStep, type Lab,
} from '../../src/report/colourMap.ts';

// Reference values: tests/fixtures/reference/make_optics_reference.py (numpy; regenerate with /usr/bin/python3 and that
// path) into optics-reference.json.
const REF = JSON.parse(readFileSync(new URL('../fixtures/reference/optics-reference.json', import.meta.url), 'utf8'));

// sRGB 8-bit -> CIELAB (D65), the forward path of IEC 61966-2-1 and CIE 015:2004, to measure the HSV wheel.
function srgbToLab(rgb: [number, number, number]): Lab {
  const lin = rgb.map((v) => (v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4));
  const X = 0.4124 * lin[0] + 0.3576 * lin[1] + 0.1805 * lin[2];
  const Y = 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2];
  const Z = 0.0193 * lin[0] + 0.1192 * lin[1] + 0.9505 * lin[2];
  const f = (t: number) => (t > (6 / 29) ** 3 ? Math.cbrt(t) : t / (3 * (6 / 29) ** 2) + 4 / 29);
  const fx = f(X / 0.95047), fy = f(Y), fz = f(Z / 1.08883);
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

function hsvWheel(steps: number): Lab[] {
  return Array.from({ length: steps }, (_, i) => {
    const h = (i / steps) * 6, k = Math.floor(h), f = h - k;
    const rgb: [number, number, number][] = [[1, f, 0], [1 - f, 1, 0], [0, 1, f], [0, 1 - f, 1], [f, 0, 1], [1, 0, 1 - f]];
    return srgbToLab(rgb[k]);
  });
}

const de76 = (p: Lab, q: Lab) => Math.hypot(q[0] - p[0], q[1] - p[1], q[2] - p[2]);
/** Per-step sizes around a closed loop, including the step from the last entry back to the first. */
const loopSteps = (m: Lab[], step: (p: Lab, q: Lab) => number) => m.map((p, i) => step(p, m[(i + 1) % m.length]));
const spread = (v: number[]) => Math.max(...v) / Math.min(...v);

describe('colour conversions used to judge the map', () => {
  it('srgbToLab(#FF0000) is (53.233, 80.109, 67.220)', () => {
    // Reference script, same formulas (IEC 4-digit matrix, CIE D65 white): (53.2329, 80.1093, 67.2201), to 1e-4.
    srgbToLab([1, 0, 0]).forEach((v, i) => expect(Math.abs(v - REF.colorimetry.labOfSrgb.FF0000[i])).toBeLessThan(1e-4));
  });

  it('labToLinearSrgb inverts the forward conversion (D65 white -> 1, 1, 1)', () => {
    // The D65 white maps to linear (1.000002, 1.000076, 0.999834) with the IEC 4-digit matrix (reference script); 1e-3
    const w = labToLinearSrgb([100, 0, 0]);
    w.forEach((v) => expect(v).toBeCloseTo(1, 3));
    const back = labToLinearSrgb(srgbToLab([0.2, 0.5, 0.8]));
    const lin = [0.2, 0.5, 0.8].map((v) => ((v + 0.055) / 1.055) ** 2.4);
    back.forEach((v, i) => expect(v).toBeCloseTo(lin[i], 3));
  });

  it('HSV wheel, 360 steps: per-step CIE76 from 0.121 to 3.443 (x28)', () => {
    // Reference script: the same wheel in numpy, per-step CIE76 min 0.1215, max 3.4428 (4 decimals).
    const steps = loopSteps(hsvWheel(360), de76);
    expect(Math.abs(Math.min(...steps) - REF.hsvWheel360.minDeltaE76)).toBeLessThan(1e-4);
    expect(Math.abs(Math.max(...steps) - REF.hsvWheel360.maxDeltaE76)).toBeLessThan(1e-4);
  });
});

describe('cyclicLab(256): the orientation colour map', () => {
  const map = cyclicLab(256);

  it('is cyclic: the step from the last entry back to the first is as large as any other step', () => {
    // Kovesi 2015, "Good colour maps: how to design them", arXiv:1509.03700: a cyclic map's ends meet (entry[0] ~ entry[N])
    const steps = loopSteps(map, weightedStep);
    const inner = steps.slice(0, -1);
    const closing = steps[steps.length - 1];
    expect(closing).toBeLessThan(1.1 * Math.max(...inner));
    expect(closing).toBeGreaterThan(Math.min(...inner) / 1.1);
  });

  it('has lightness-weighted steps equal within x1.1 (HSV wheel: x28)', () => {
    // Kovesi 2015 (as above): perceptual contrast uniform along the map, dominated by lightness; as a number, our
    // requirement: the largest lightness-weighted step at most 1.1 x the smallest (10 % unevenness).
    expect(spread(loopSteps(map, weightedStep))).toBeLessThan(1.1);
    // the HSV wheel measured the same way is far from uniform (x28 in plain CIE76, the test above)
    expect(spread(loopSteps(hsvWheel(256), weightedStep))).toBeGreaterThan(10);
  });

  it('has plain CIE76 steps an order of magnitude more even than the HSV wheel\'s, and within the bound its weights set', () => {
    // Closed form: with weights W = (1, 1/4, 1/4) on the squared differences (STEP_WEIGHTS), a plain CIE76 step lies
    // between 1 and 2 times its weighted step (dE76^2 = dL^2 + da^2 + db^2 <= 4 (dL^2 + da^2/4 + db^2/4)), so the plain
    // spread is at most twice the weighted spread. Against the HSV wheel (28x, the test above): our requirement is a
    // spread at least ten times smaller.
    const s = spread(loopSteps(map, de76));
    const sw = spread(loopSteps(map, weightedStep));
    expect(s).toBeLessThanOrEqual(2 * sw);
    expect(spread(loopSteps(hsvWheel(360), de76)) / s).toBeGreaterThan(10);
  });

  it('varies in lightness (readable in grey) and stays inside the sRGB gamut without clipping', () => {
    // Kovesi's cyclic C2 control points (his PerceptualColourMaps code, CYCLIC_CONTROL_POINTS) span L* 30..95, a range of
    // 65; smoothing the corners loses some of it. Our requirement: at least 40 (readable in grey).
    const L = map.map((e) => e[0]);
    expect(Math.max(...L) - Math.min(...L)).toBeGreaterThan(40);
    for (const e of map) for (const v of labToLinearSrgb(e)) {
      expect(v).toBeGreaterThanOrEqual(0);
      expect(v).toBeLessThanOrEqual(1);
    }
  });

  it('has no two neighbouring 8-bit colours identical (every step is visible)', () => {
    const t = cyclicSrgb8(256);
    for (let i = 0; i < 256; i++) {
      const j = (i + 1) % 256;
      const same = t[3 * i] === t[3 * j] && t[3 * i + 1] === t[3 * j + 1] && t[3 * i + 2] === t[3 * j + 2];
      expect(same).toBe(false);
    }
  });
});

describe('angleIndex and orientationRgba: period 180 deg', () => {
  it('gives 0 and 180 deg, and -90 and +90 deg, the same entry', () => {
    // Orientations are axial (a line, not an arrow): 0 and 180 deg are the same direction, so one cycle covers 180 deg;
    // 45 deg is a quarter of the 256 entries (64) and -45 = 135 deg three quarters (192).
    expect(angleIndex(0)).toBe(angleIndex(180));
    expect(angleIndex(-90)).toBe(angleIndex(90));
    expect(angleIndex(45)).toBe(64);
    expect(angleIndex(-45)).toBe(192);
  });

  it('colours a pixel at angle a like one at a + pi, fades with confidence, leaves masked pixels clear', () => {
    const a = Float32Array.from([0.3, 0.3 + Math.PI, 0.3, 1.0]);
    const c = Float32Array.from([1, 1, 0.5, 1]);
    const m = Uint8Array.from([1, 1, 1, 0]);
    const px = orientationRgba(a, c, m);
    expect([...px.slice(0, 4)]).toEqual([...px.slice(4, 8)]);
    expect(px[11]).toBe(128);
    expect([...px.slice(8, 11)]).toEqual([...px.slice(0, 3)]);
    expect(px[15]).toBe(0);
    const wrapped = orientationRgba(Float32Array.from([0.3 - Math.PI]), Float32Array.from([1]), Uint8Array.from([1]));
    expect([...wrapped]).toEqual([...px.slice(0, 4)]);
  });

  it('writes every byte as the table and a rounded, clamped opacity say, for odd confidences too', () => {
    // The picture is written a word at a time; each byte must still be the table's colour and
    // round(alphaMax x clamp(confidence, 0, 1)), NaN clear (the rule of a Uint8ClampedArray store).
    const table = orientationColourTable(), n = table.length / 3;
    const angles = [-1.5707, -0.8, -1e-7, 0, 0.2, 1.0, 1.5707963, 3.5, -4];
    const confs = [0, 0.5 / 255, 1.5 / 255, 0.25, 0.5, 0.999, 1, 1.7, -0.2, NaN];
    const a: number[] = [], c: number[] = [], m: number[] = [];
    for (const x of angles) for (const y of confs) for (const k of [0, 1]) { a.push(x); c.push(y); m.push(k); }
    for (const alphaMax of [255, 170]) {
      const px = orientationRgba(Float32Array.from(a), Float32Array.from(c), Uint8Array.from(m), alphaMax);
      for (let i = 0; i < a.length; i++) {
        const af = Math.fround(a[i]), cf = Math.fround(c[i]);
        let k = Math.floor(af * (n / Math.PI)) % n;
        if (k < 0) k += n;
        const want = m[i] ? [table[3 * k], table[3 * k + 1], table[3 * k + 2], Number.isNaN(cf) ? 0 : Math.round(alphaMax * Math.min(1, Math.max(0, cf)))] : [0, 0, 0, 0];
        expect([...px.slice(4 * i, 4 * i + 4)]).toEqual(want);
      }
    }
  });
});
