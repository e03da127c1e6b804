import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import {
  cmf1931, d65Spd, illuminantASpd, blackbodySpd, wavelengthGrid, chromaticity, srgbEncode, srgbDecode, srgbToLab,
  xyzToLinearSrgb, linearSrgbToXyz, xyzToLab, labToXyz, D65_WHITE, deltaE2000, deltaE76, bradfordMatrix, mulMat3,
  parseIlluminant, whiteReference, CIE1931_X_BAR, type Vec3,
} from '../../src/optics/index.ts';
import { InputError } from '../../src/common/errors.ts';

// Values "from the reference script" are computed by tests/fixtures/reference/make_optics_reference.py (numpy and
// scipy; CIE tables from Debian's colord-data; regenerate with /usr/bin/python3 and that path) into optics-reference.json.
const REF = JSON.parse(readFileSync(new URL('../fixtures/reference/optics-reference.json', import.meta.url), 'utf8')).colorimetry;

/** XYZ of an illuminant over the CIE 5-nm table range, normalised to Y = 100. */
function whiteOf(spd: (l: number) => number): Vec3 {
  let X = 0, Y = 0, Z = 0;
  for (const l of wavelengthGrid(360, 830, 5).wavelengthsNm) {
    const [x, y, z] = cmf1931(l);
    const s = spd(l);
    X += s * x; Y += s * y; Z += s * z;
  }
  return [(100 * X) / Y, 100, (100 * Z) / Y];
}

describe('CIE 1931 colour-matching functions', () => {
  it('cmf1931 reproduces the published 5-nm table at the spot wavelengths', () => {
    // Published: CIE 015:2004, Table T.4 (CIE 1931 2-degree observer, 5-nm steps); the same values as Debian
    // colord-data's copy (the reference script reads it: REF.cmf).
    const table: [number, Vec3][] = [
      [450, [0.3362, 0.038, 1.77211]], [500, [0.0049, 0.323, 0.272]], [555, [0.51205, 1.0, 0.00575]],
      [600, [1.0622, 0.631, 0.0008]], [650, [0.2835, 0.107, 0.0]],
    ];
    for (const [l, v] of table) cmf1931(l).forEach((c, i) => { expect(c).toBeCloseTo(v[i], 6); expect(c).toBeCloseTo(REF.cmf[String(l)][i], 6); });
  });

  it('x-bar(485) is 0.057950, not the misprinted 0.058950', () => {
    // Published: CIE 015:2004 Table T.4 gives 0.057950 (colord-data's copy: 0.05795001); 0.058950 is a misprint seen in
    // some copies of the table (from memory).
    expect(cmf1931(485)[0]).toBeCloseTo(0.05795, 6);
    expect(Math.abs(cmf1931(485)[0] - 0.05895)).toBeGreaterThan(5e-4);
  });

  it('the table covers 360-830 nm in 95 rows and is zero outside', () => {
    // Published: CIE 015:2004 Table T.4 runs from 360 to 830 nm in 5-nm steps (95 rows); x-bar(360) = 0.0001299.
    expect(CIE1931_X_BAR.length).toBe(95);
    expect(cmf1931(360)[0]).toBeCloseTo(0.0001299, 9);
    expect(cmf1931(900)).toEqual([0, 0, 0]);
  });
});

describe('illuminants', () => {
  it('d65Spd gives the CIE table spot values', () => {
    // Published: CIE 015:2004 Table T.1 (D65 relative spectral power, 100 at 560 nm).
    expect(d65Spd(400)).toBeCloseTo(82.7549, 4);
    expect(d65Spd(500)).toBeCloseTo(109.354, 3);
    expect(d65Spd(560)).toBeCloseTo(100, 4);
    expect(d65Spd(600)).toBeCloseTo(90.0062, 4);
    expect(d65Spd(700)).toBeCloseTo(71.6091, 4);
    for (const l of [400, 500, 560, 600, 700]) expect(d65Spd(l)).toBeCloseTo(REF.d65[String(l)], 4);
  });

  it('illuminantASpd follows the CIE formula', () => {
    // Closed form, CIE 015:2004 eq. 3.1: S_A = 100 (560/l)^5 (exp(1.435e7 / (2848 x 560)) - 1) / (exp(1.435e7 / (2848 l)) - 1);
    // values from the reference script: 100, 14.708, 198.261, 241.675 at 560, 400, 700, 780 nm.
    for (const l of [560, 400, 700, 780]) expect(Math.abs(illuminantASpd(l) - REF.illuminantA[String(l)])).toBeLessThan(1e-9 * REF.illuminantA[String(l)]);
  });

  it('white points of A and D65 from the 5-nm tables', () => {
    // Published: Westland & Ripamonti, Computational Colour Science Using MATLAB (2004), Table 4.2: the white of A is
    // X 109.850, Z 35.585, of D65 X 95.047, Z 108.883 (Y = 100). The 5-nm sums over 360-830 nm give A (109.850, 35.585)
    // and D65 (95.047, 108.897) (reference script, to 1e-3): Z of D65 within 0.02 of the standard's.
    const a = whiteOf(illuminantASpd), d = whiteOf(d65Spd);
    expect(Math.abs(a[0] - 109.85)).toBeLessThan(0.01);
    expect(Math.abs(a[2] - 35.585)).toBeLessThan(0.01);
    expect(Math.abs(d[0] - 95.047)).toBeLessThan(0.01);
    expect(Math.abs(d[2] - 108.883)).toBeLessThan(0.02);
    for (const [ours, want] of [[a, REF.whiteA], [d, REF.whiteD65]]) for (const i of [0, 2]) expect(Math.abs(ours[i] - want[i])).toBeLessThan(1e-3);
  });

  it('chromaticities of A, a 3200 K and a 2856 K blackbody', () => {
    // Published: Westland & Ripamonti (2004), Table 4.2, illuminant A at (0.44757, 0.40745); the reference script's
    // 5-nm sum gives (0.44757, 0.40744). Blackbodies at 3200 and 2856 K: the
    // reference script (Planck's law with scipy.constants' CODATA values), (0.42336, 0.39895) and (0.44753, 0.40743).
    const near = (xy: [number, number], e: [number, number]) => { expect(Math.abs(xy[0] - e[0])).toBeLessThan(1e-4); expect(Math.abs(xy[1] - e[1])).toBeLessThan(1e-4); };
    near(chromaticity(whiteOf(illuminantASpd)), [0.44757, 0.40745]);
    near(chromaticity(whiteOf((l) => blackbodySpd(l, 3200))), REF.xyPlanck3200);
    near(chromaticity(whiteOf((l) => blackbodySpd(l, 2856))), REF.xyPlanck2856);
  });

  it('a halogen lamp is red-heavy: B(450)/B(650) and the Wien peak', () => {
    // Reference script (Planck's law, scipy.constants): B(450)/B(650) = 0.2904 at 3200 K and 1.3481 at 6500 K. Closed form:
    // Wien's displacement law, peak = b / T with b = scipy.constants.Wien = 2.897771955e-3 m K: 905.55 nm at 3200 K.
    expect(Math.abs(blackbodySpd(450, 3200) / blackbodySpd(650, 3200) - REF.planck450over650['3200'])).toBeLessThan(1e-6);
    expect(Math.abs(blackbodySpd(450, 6500) / blackbodySpd(650, 6500) - REF.planck450over650['6500'])).toBeLessThan(1e-6);
    expect(Math.abs(REF.wienPeak3200Nm - 905.55)).toBeLessThan(0.01);
    let peak = 850;
    for (let l = 850; l <= 960; l += 0.1) if (blackbodySpd(l, 3200) > blackbodySpd(peak, 3200)) peak = l;
    expect(Math.abs(peak - REF.wienPeak3200Nm)).toBeLessThan(0.1); // the search's 0.1-nm step
  });

  it('parseIlluminant reads 3200K, D65 and A and rejects nonsense', () => {
    expect(parseIlluminant('3200K')).toEqual({ kind: 'blackbody', temperatureK: 3200 });
    expect(parseIlluminant('d65')).toEqual({ kind: 'D65' });
    expect(parseIlluminant('A')).toEqual({ kind: 'A' });
    expect(() => parseIlluminant('sunlight')).toThrow(InputError);
    expect(() => parseIlluminant('50K')).toThrow(InputError);
  });
});

describe('sRGB (IEC 61966-2-1)', () => {
  it('srgbEncode and srgbDecode give the standard values', () => {
    // Closed form, IEC 61966-2-1: encode = 12.92 L (L <= 0.0031308), else 1.055 L^(1/2.4) - 0.055, and its inverse;
    // values from the reference script: encode(0.18) = 0.461356, encode(0.5) = 0.735357, decode(0.5) = 0.214041,
    // decode(128/255) = 0.215861.
    expect(Math.abs(srgbEncode(0.18) - REF.srgbEncode['0.18'])).toBeLessThan(1e-12);
    expect(Math.abs(srgbEncode(0.5) - REF.srgbEncode['0.5'])).toBeLessThan(1e-12);
    expect(Math.abs(srgbDecode(0.5) - REF.srgbDecode['0.5'])).toBeLessThan(1e-12);
    expect(Math.abs(srgbDecode(128 / 255) - REF.srgbDecode['128/255'])).toBeLessThan(1e-12);
    // Linear segment below the knee (IEC 61966-2-1): 12.92 L.
    expect(srgbEncode(0.001)).toBeCloseTo(0.01292, 9);
    for (const v of [0, 0.02, 0.3, 0.9, 1]) expect(srgbDecode(srgbEncode(v))).toBeCloseTo(v, 12);
  });

  it('the D65 white maps to linear (1.0000, 1.0001, 0.9998) with the 4-digit matrix', () => {
    // Reference script: the IEC 4-digit matrix times the CIE D65 white (0.95047, 1, 1.08883) = (1.000002, 1.000076, 0.999834).
    const rgb = xyzToLinearSrgb(D65_WHITE);
    REF.d65WhiteToLinearSrgb.forEach((v: number, i: number) => expect(Math.abs(rgb[i] - v)).toBeLessThan(1e-6));
    linearSrgbToXyz(rgb).forEach((v, i) => expect(v).toBeCloseTo(D65_WHITE[i], 3));
  });

  it('srgbToLab of the primaries and secondaries', () => {
    // Reference script (IEC 61966-2-1 decoding and 4-digit matrix, CIE 015:2004 CIELAB with the D65 white):
    // #FF0000 -> (53.233, 80.109, 67.220); L* of #00FF00 87.74, #0000FF 32.30, #FFFF00 97.14, #00FFFF 91.12,
    // #FF00FF 60.32, #808080 53.59. The same formulas computed twice: 1e-4.
    const cases: [Vec3, string][] = [[[1, 0, 0], 'FF0000'], [[0, 1, 0], '00FF00'], [[0, 0, 1], '0000FF'], [[1, 1, 0], 'FFFF00'], [[0, 1, 1], '00FFFF'],
      [[1, 0, 1], 'FF00FF'], [[128 / 255, 128 / 255, 128 / 255], '808080']];
    for (const [c, hex] of cases) srgbToLab(c).forEach((v, i) => expect(Math.abs(v - REF.labOfSrgb[hex][i]), `#${hex}`).toBeLessThan(1e-4));
  });

  it('xyzToLab and labToXyz are inverse, including the linear part near black', () => {
    for (const xyz of [[0.2, 0.3, 0.4], [0.001, 0.002, 0.0005], [0.95047, 1, 1.08883]] as Vec3[]) {
      labToXyz(xyzToLab(xyz)).forEach((v, i) => expect(v).toBeCloseTo(xyz[i], 12));
    }
    // White is L* = 100, a* = b* = 0 by definition (CIE 15).
    xyzToLab(D65_WHITE).forEach((v, i) => expect(v).toBeCloseTo([100, 0, 0][i], 12));
  });
});

describe('colour differences', () => {
  // Published: Sharma, Wu & Dalal 2005, Color Res. Appl. 30:21-30, Table 1 (a selection; all 34 pairs below);
  // tolerance 1e-4 (the table's 4 decimals), both argument orders.
  const pairs: [Vec3, Vec3, number][] = [
    [[50, 2.6772, -79.7751], [50, 0, -82.7485], 2.0425],
    [[50, 0, 0], [50, -1, 2], 2.3669],
    [[50, -0.001, 2.49], [50, 0.0009, -2.49], 4.8045],
    [[50, -0.001, 2.49], [50, 0.0011, -2.49], 4.7461],
    [[50, 2.5, 0], [73, 25, -18], 27.1492],
    [[60.2574, -34.0099, 36.2677], [60.4626, -34.1751, 39.4387], 1.2644],
    [[2.0776, 0.0795, -1.135], [0.9033, -0.0636, -0.5514], 0.9082],
  ];
  it.each(pairs)('deltaE2000(%j, %j) = %f in both orders', (a, b, e) => {
    expect(Math.abs(deltaE2000(a, b) - e)).toBeLessThan(1e-4);
    expect(Math.abs(deltaE2000(b, a) - e)).toBeLessThan(1e-4);
  });

  it('reproduces all 34 published test pairs of Sharma, Wu & Dalal (2005) to 1e-4, both orders', () => {
    // tests/fixtures/reference/ciede2000-sharma.tsv: the paper's supplementary test data (source in the file).
    const rows = readFileSync(new URL('../fixtures/reference/ciede2000-sharma.tsv', import.meta.url), 'utf8')
      .split('\n').filter((l) => l.trim() && !l.startsWith('#')).map((l) => l.trim().split(/\s+/).map(Number));
    expect(rows).toHaveLength(34);
    for (const [L1, a1, b1, L2, a2, b2, e] of rows) {
      expect(Math.abs(deltaE2000([L1, a1, b1], [L2, a2, b2]) - e)).toBeLessThan(1e-4);
      expect(Math.abs(deltaE2000([L2, a2, b2], [L1, a1, b1]) - e)).toBeLessThan(1e-4);
    }
  });

  it('deltaE76 is the Lab distance', () => {
    // Closed form: CIE76 = sqrt(23^2 + 22.5^2 + 18^2) = sqrt(1359.25) = 36.868.
    expect(deltaE76([50, 2.5, 0], [73, 25, -18])).toBeCloseTo(36.868, 3);
    expect(deltaE2000([40, 10, -5], [40, 10, -5])).toBe(0);
  });
});

describe('chromatic adaptation and white reference', () => {
  it('bradfordMatrix maps the source white exactly onto the target white', () => {
    // Property of von Kries adaptation in the Bradford space: M w_src = w_dst.
    const a: Vec3 = [1.0985, 1, 0.35585];
    mulMat3(bradfordMatrix(a, D65_WHITE), a).forEach((v, i) => expect(v).toBeCloseTo(D65_WHITE[i], 10));
  });

  it('whiteReference turns a measured white into gains and exposure, and rejects a dark channel', () => {
    const cal = whiteReference([0.8, 0.6, 0.4], 'linear');
    expect(cal.gains[0]).toBeCloseTo(0.8 / 0.6, 12);
    expect(cal.gains[1]).toBe(1);
    expect(cal.exposure).toBeCloseTo(0.6, 12);
    expect(() => whiteReference([0.5, 0, 0.5], 'linear')).toThrow(InputError);
  });
});
