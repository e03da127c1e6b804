import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import {
  cmf1931, d65Spd, illuminantASpd, blackbodySpd, wavelengthGrid, chromaticity, srgbEncode, srgbDecode, srgbToLab,
  xyzToLinearSrgb, linearSrgbToXyz, xyzToLab, labToXyz, D65_WHITE, deltaE2000, deltaE76, bradfordMatrix, mulMat3,
  parseIlluminant, whiteReference, CIE1931_X_BAR, type Vec3,
} from '../../src/optics/index.ts';
import { InputError } from '../../src/common/errors.ts';

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
    // domain.md §3 [S3]: CIE 1931 2-degree table values.
    const table: [number, Vec3][] = [
      [450, [0.3362, 0.038, 1.77211]], [500, [0.0049, 0.323, 0.272]], [555, [0.51205, 1.0, 0.00575]],
      [600, [1.0622, 0.631, 0.0008]], [650, [0.2835, 0.107, 0.0]],
    ];
    for (const [l, v] of table) cmf1931(l).forEach((c, i) => expect(c).toBeCloseTo(v[i], 6));
  });

  it('x-bar(485) is 0.057950, not the misprinted 0.058950', () => {
    // domain.md §3 [S3, two copies agree]: the correct value is 0.057950.
    expect(cmf1931(485)[0]).toBeCloseTo(0.05795, 6);
    expect(Math.abs(cmf1931(485)[0] - 0.05895)).toBeGreaterThan(5e-4);
  });

  it('the table covers 360-830 nm in 95 rows and is zero outside', () => {
    // CIE 15:2004: 5-nm table from 360 to 830 nm (95 rows); x-bar(360) = 0.0001299 [S3].
    expect(CIE1931_X_BAR.length).toBe(95);
    expect(cmf1931(360)[0]).toBeCloseTo(0.0001299, 9);
    expect(cmf1931(900)).toEqual([0, 0, 0]);
  });
});

describe('illuminants', () => {
  it('d65Spd gives the CIE table spot values', () => {
    // domain.md §3 [S3]: D65 400 -> 82.7549, 500 -> 109.354, 560 -> 100.000, 600 -> 90.0062, 700 -> 71.6091.
    expect(d65Spd(400)).toBeCloseTo(82.7549, 4);
    expect(d65Spd(500)).toBeCloseTo(109.354, 3);
    expect(d65Spd(560)).toBeCloseTo(100, 4);
    expect(d65Spd(600)).toBeCloseTo(90.0062, 4);
    expect(d65Spd(700)).toBeCloseTo(71.6091, 4);
  });

  it('illuminantASpd follows the CIE formula', () => {
    // domain.md §3 [C] (formula [M], CIE 15): S_A(560, 400, 700, 780) = 100, 14.708, 198.261, 241.675 (+-0.001).
    expect(illuminantASpd(560)).toBeCloseTo(100, 3);
    expect(illuminantASpd(400)).toBeCloseTo(14.708, 3);
    expect(illuminantASpd(700)).toBeCloseTo(198.261, 3);
    expect(illuminantASpd(780)).toBeCloseTo(241.675, 3);
  });

  it('white points of A and D65 from the 5-nm tables', () => {
    // domain.md §3 [S17]/[C]: A white X 109.850, Z 35.585; D65 5-nm 360-830 sum 95.047 / 108.897 (+-0.02).
    const a = whiteOf(illuminantASpd), d = whiteOf(d65Spd);
    expect(Math.abs(a[0] - 109.85)).toBeLessThan(0.01);
    expect(Math.abs(a[2] - 35.585)).toBeLessThan(0.01);
    expect(Math.abs(d[0] - 95.047)).toBeLessThan(0.02);
    expect(Math.abs(d[2] - 108.897)).toBeLessThan(0.02);
  });

  it('chromaticities of A, a 3200 K and a 2856 K blackbody', () => {
    // domain.md §3 [S17]/[C]: A (0.44757, 0.40745); 3200 K (0.4234, 0.3990); 2856 K (0.44753, 0.40743); +-1e-4.
    const near = (xy: [number, number], e: [number, number]) => { expect(Math.abs(xy[0] - e[0])).toBeLessThan(1e-4); expect(Math.abs(xy[1] - e[1])).toBeLessThan(1e-4); };
    near(chromaticity(whiteOf(illuminantASpd)), [0.44757, 0.40745]);
    near(chromaticity(whiteOf((l) => blackbodySpd(l, 3200))), [0.4234, 0.399]);
    near(chromaticity(whiteOf((l) => blackbodySpd(l, 2856))), [0.44753, 0.40743]);
  });

  it('a halogen lamp is red-heavy: B(450)/B(650) and the Wien peak', () => {
    // domain.md §3 [C]: B(450)/B(650) = 0.290 at 3200 K and 1.348 at 6500 K; Wien peak at 3200 K = 905.6 nm.
    expect(blackbodySpd(450, 3200) / blackbodySpd(650, 3200)).toBeCloseTo(0.29, 3);
    expect(blackbodySpd(450, 6500) / blackbodySpd(650, 6500)).toBeCloseTo(1.348, 3);
    let peak = 850;
    for (let l = 850; l <= 960; l += 0.1) if (blackbodySpd(l, 3200) > blackbodySpd(peak, 3200)) peak = l;
    expect(Math.abs(peak - 905.6)).toBeLessThan(0.2);
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
    // domain.md §3 [S5]: encode(0.18) = 0.461356; encode(0.5) = 0.735357; decode(0.5) = 0.214041; decode(128/255) = 0.215861.
    expect(srgbEncode(0.18)).toBeCloseTo(0.461356, 6);
    expect(srgbEncode(0.5)).toBeCloseTo(0.735357, 6);
    expect(srgbDecode(0.5)).toBeCloseTo(0.214041, 6);
    expect(srgbDecode(128 / 255)).toBeCloseTo(0.215861, 6);
    // Linear segment below the knee (IEC 61966-2-1): 12.92 L.
    expect(srgbEncode(0.001)).toBeCloseTo(0.01292, 9);
    for (const v of [0, 0.02, 0.3, 0.9, 1]) expect(srgbDecode(srgbEncode(v))).toBeCloseTo(v, 12);
  });

  it('the D65 white maps to linear (1.0000, 1.0001, 0.9998) with the 4-digit matrix', () => {
    // domain.md §3 [C].
    const rgb = xyzToLinearSrgb(D65_WHITE);
    [1.0, 1.0001, 0.9998].forEach((v, i) => expect(rgb[i]).toBeCloseTo(v, 4));
    linearSrgbToXyz(rgb).forEach((v, i) => expect(v).toBeCloseTo(D65_WHITE[i], 3));
  });

  it('srgbToLab of the primaries and secondaries', () => {
    // domain.md §3 [C]: #FF0000 -> (53.23, 80.11, 67.22) with the 4-digit matrix; L* of G 87.74, B 32.30, Y 97.14, C 91.12, M 60.32; #808080 53.59.
    const red = srgbToLab([1, 0, 0]);
    expect(red[0]).toBeCloseTo(53.23, 2);
    expect(red[1]).toBeCloseTo(80.11, 2);
    expect(red[2]).toBeCloseTo(67.22, 2);
    const cases: [Vec3, number][] = [[[0, 1, 0], 87.74], [[0, 0, 1], 32.3], [[1, 1, 0], 97.14], [[0, 1, 1], 91.12], [[1, 0, 1], 60.32], [[128 / 255, 128 / 255, 128 / 255], 53.59]];
    for (const [c, L] of cases) expect(srgbToLab(c)[0]).toBeCloseTo(L, 1);
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
  // Sharma, Wu & Dalal 2005, Table 1 (as quoted in domain.md §3 [S4]); tolerance 1e-4, both argument orders.
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
    // domain.md §3 [C]: CIE76 for (50, 2.5, 0) / (73, 25, -18) = 36.868.
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
