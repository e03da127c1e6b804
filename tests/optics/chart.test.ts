import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import {
  interferenceChart, renderChart, chartTitle, orderBand, colourModel, interferenceColour, wavelengthGrid, chromaticity, deltaE2000, fullWavePlate,
  type Vec3,
} from '../../src/optics/index.ts';
import { DEG } from '../../src/common/angles.ts';
import { InputError } from '../../src/common/errors.ts';

// Reference values: tests/fixtures/reference/make_optics_reference.py (numpy, with the CIE 1931 and D65 5-nm tables
// from Debian's colord-data; regenerate with /usr/bin/python3 tests/fixtures/reference/make_optics_reference.py),
// an implementation of the first-principles chart that shares no code with src/: D65 x CIE 1931 5-nm table
// (360-830 nm), sample at 45 deg between crossed polars, open beam Y = 1, Lab white = open beam, sRGB 4-digit
// matrix after Bradford adaptation to D65, clipped (Sorensen 2013, Eur. J. Mineral. 25:5-10, for the method).
// The same definitions computed twice agree to rounding: Y to 1e-5, Lab to 1e-3, sRGB8 exactly.
const REF = JSON.parse(readFileSync(new URL('../fixtures/reference/optics-reference.json', import.meta.url), 'utf8'));
type RefRow = { retardanceNm: number; Y: number; xy: [number, number]; lab: Vec3; srgb8: Vec3 };
const ref = (g: number): RefRow => {
  const r = (REF.chart.rows as RefRow[]).find((x) => x.retardanceNm === g);
  if (!r) throw new Error(`no reference row at ${g} nm: add it to make_optics_reference.py`);
  return r;
};
const GRID = wavelengthGrid(360, 830, 5);
const D65 = { illuminant: { kind: 'D65' as const } };
const plain = colourModel({ ...D65, compensator: null }, GRID);
const at45 = (g: number) => interferenceColour(plain, { angleRad: 45 * DEG, retardanceNm: g });
const near = (a: Vec3, b: Vec3, tol: number) => a.forEach((v, i) => expect(Math.abs(v - b[i])).toBeLessThanOrEqual(tol));
const sameAsReference = (c: { xyz: Vec3; lab: Vec3; srgb8: Vec3 }, r: RefRow) => {
  expect(Math.abs(c.xyz[1] - r.Y)).toBeLessThan(1e-5);
  near(c.lab, r.lab, 1e-3);
  expect(c.srgb8).toEqual(r.srgb8);
};
/** CIELAB hue angle h_ab in degrees, 0-360 (CIE 015:2004, 8.2.1). */
const hueDeg = (lab: Vec3) => ((Math.atan2(lab[2], lab[1]) / DEG) + 360) % 360;

describe('interference colours between crossed polars (D65)', () => {
  it('first-order white at 259 nm, sensitive tint at 551 nm, orange-yellow 450, blue 650, yellow-green 800, high-order white 5000', () => {
    for (const g of [259, 551, 450, 650, 800, 5000]) sameAsReference(at45(g), ref(g));
    // High-order white: Y -> 1/2 (the mean of sin^2 over many orders) and nearly no chroma (reference: C* 2.3).
    expect(Math.abs(at45(5000).xyz[1] - 0.5)).toBeLessThan(0.01);
  });

  it('the Y minimum ("sensitive tint") is at 551 nm under D65 and 564 nm under a 3200 K lamp', () => {
    const yMinAt = (m: ReturnType<typeof colourModel>) => {
      let best = 0, y = Infinity;
      for (let g = 450; g <= 650; g++) {
        const v = interferenceColour(m, { angleRad: 45 * DEG, retardanceNm: g }).xyz[1];
        if (v < y) { y = v; best = g; }
      }
      return best;
    };
    expect(yMinAt(plain)).toBe(REF.chart.yMinimumNm.D65);
    expect(yMinAt(colourModel({ compensator: null }, GRID))).toBe(REF.chart.yMinimumNm['3200K']);
    // Published: makers' first-order red plates are 530-560 nm (Olympus/Evident Microscopy Resource Center, "The First
    // Order (Full Wave) Retardation Plate"), i.e. the tint sits there.
    expect(REF.chart.yMinimumNm.D65).toBeGreaterThanOrEqual(530);
    expect(REF.chart.yMinimumNm.D65).toBeLessThanOrEqual(560);
  });

  it('the angle scales brightness only: chromaticity at 10 deg equals that at 45 deg', () => {
    // Closed form: I/I0 = sin^2 2theta sin^2(pi Gamma / lambda), so theta only scales every wavelength alike
    // (Y ratio sin^2 20 / sin^2 90 = 0.11698); values at 400 nm from the reference script.
    const a = interferenceColour(plain, { angleRad: 45 * DEG, retardanceNm: 400 }), b = interferenceColour(plain, { angleRad: 10 * DEG, retardanceNm: 400 });
    const xa = chromaticity(a.xyz), xb = chromaticity(b.xyz), r45 = REF.chart.at400nm['45'], r10 = REF.chart.at400nm['10'];
    for (const [ours, want] of [[xa, r45.xy], [xb, r10.xy]]) { expect(Math.abs(ours[0] - want[0])).toBeLessThan(1e-5); expect(Math.abs(ours[1] - want[1])).toBeLessThan(1e-5); }
    expect(Math.abs(xa[0] - xb[0])).toBeLessThan(1e-12);
    expect(Math.abs(a.xyz[1] - r45.Y)).toBeLessThan(1e-5);
    expect(Math.abs(b.xyz[1] - r10.Y)).toBeLessThan(1e-5);
    expect(b.xyz[1] / a.xyz[1]).toBeCloseTo(Math.sin(20 * DEG) ** 2, 9);
  });

  it('10-nm sampling differs from 5-nm by as much as the reference finds (0-3000 nm, CIEDE2000)', () => {
    // Reference: the same sweep in numpy with scikit-image's deltaE_ciede2000: max 0.116.
    const coarse = colourModel({ ...D65, compensator: null }, wavelengthGrid(360, 830, 10));
    let max = 0;
    for (let g = 0; g <= 3000; g += 5) {
      max = Math.max(max, deltaE2000(at45(g).lab, interferenceColour(coarse, { angleRad: 45 * DEG, retardanceNm: g }).lab));
    }
    expect(Math.abs(max - REF.chart.maxDeltaE00TenVsFiveNm)).toBeLessThan(1e-3);
  });

  it('second-order "green" comes out turquoise, as the first-principles chart found', () => {
    // Sorensen 2013 (Eur. J. Mineral. 25:5-10, abstract): on the computed chart the classical saturated second-order
    // green is greenish-white / turquoise. In CIELAB terms (our reading of those words): at 747 nm the hue is nearer
    // that of sRGB cyan than of sRGB green, and the chroma is below half that of the sRGB green primary.
    const c = at45(747).lab, cyan = REF.colorimetry.labOfSrgb['00FFFF'], green = REF.colorimetry.labOfSrgb['00FF00'];
    const dh = (h1: number, h2: number) => Math.min(Math.abs(h1 - h2), 360 - Math.abs(h1 - h2));
    expect(dh(hueDeg(c), hueDeg(cyan))).toBeLessThan(dh(hueDeg(c), hueDeg(green)));
    expect(Math.hypot(c[1], c[2])).toBeLessThan(0.5 * Math.hypot(green[1], green[2]));
  });
});

describe('compensator (full-wave plate at +45 deg, D65)', () => {
  const plate = (nm: number) => colourModel({ ...D65, compensator: fullWavePlate(nm) }, GRID);
  it('the background is the sensitive tint, magenta-violet', () => {
    const c = interferenceColour(plate(550), { angleRad: 0, retardanceNm: 0 });
    near(c.lab, REF.chart.plateBackground550.lab, 1e-3);
    expect(c.srgb8).toEqual(REF.chart.plateBackground550.srgb8);
    // Published: the plate's background is magenta ("first-order red", Olympus/Evident, as above): a* > 0, b* < 0.
    expect(c.lab[1]).toBeGreaterThan(0);
    expect(c.lab[2]).toBeLessThan(0);
  });

  it('addition is blue (b* < 0) and subtraction yellow (b* > 0)', () => {
    // Published: Murphy & Davidson, Fundamentals of Light Microscopy and Electronic Imaging, ch. 9, Fig. 9-5 caption:
    // slow axis parallel to the plate's gives a blue addition colour, crossed a yellow subtraction colour.
    const add = interferenceColour(plate(550), { angleRad: 45 * DEG, retardanceNm: 100 }).lab;
    const sub = interferenceColour(plate(550), { angleRad: -45 * DEG, retardanceNm: 100 }).lab;
    expect(add[2]).toBeLessThan(0);
    expect(sub[2]).toBeGreaterThan(0);
    // Reference script: 100 nm on a 550 or 530 nm plate, at +45 and -45 deg.
    near(add, REF.chart.plate100nm['550:45'], 1e-3);
    near(sub, REF.chart.plate100nm['550:-45'], 1e-3);
    near(interferenceColour(plate(530), { angleRad: 45 * DEG, retardanceNm: 100 }).lab, REF.chart.plate100nm['530:45'], 1e-3);
    near(interferenceColour(plate(530), { angleRad: -45 * DEG, retardanceNm: 100 }).lab, REF.chart.plate100nm['530:-45'], 1e-3);
  });
});

describe('interferenceChart', () => {
  // The named Michel-Levy bands (names and retardances as in mineralogy texts' Michel-Levy / Quincke tables, from
  // memory); the colours from the reference script.
  const table: [number, string][] = [[40, 'iron-grey'], [97, 'lavender-grey'], [158, 'grey-blue'],
    [218, 'clearer grey'], [259, 'white'], [281, 'straw-yellow'], [332, 'bright yellow'], [430, 'brownish yellow'],
    [505, 'reddish orange'], [536, 'red'], [575, 'indigo'], [664, 'sky blue'], [747, 'green'],
    [843, 'yellowish green'], [910, 'pure yellow'], [948, 'orange'], [998, 'bright orange-red'],
    [1101, 'dark violet-red'], [1151, 'indigo'], [1258, 'greenish blue'], [1334, 'sea green'],
    [1426, 'greenish yellow'], [1495, 'flesh colour'], [1534, 'carmine red'], [1652, 'violet-grey'],
    [1744, 'bluish green'], [1811, 'light green'], [2007, 'whitish grey']
  ];
  const rows = interferenceChart(D65, { maxNm: 2010, stepNm: 1, grid: GRID });

  it.each(table)('row at %i nm (%s) has the reference colour', (g) => {
    const r = rows[g];
    expect(r.retardanceNm).toBe(g);
    near(r.plain.lab, ref(g).lab, 1e-3);
    expect(r.plain.srgb8).toEqual(ref(g).srgb8);
  });

  it('rows with the compensator start at the tint and carry order-band labels', () => {
    near(rows[0].withCompensator.lab, REF.chart.plateBackground550.lab, 1e-3);
    expect(rows[0].band.label).toBe('I');
    expect(rows[600].band).toEqual({ order: 2, label: 'II', name: 'blue' });
  });

  it('orderBand follows the coarse bands', () => {
    // Coarse bands of the Michel-Levy chart, from memory (consistent with the reference colours above): first order
    // 0-550 nm (grey to 200, white to 280, yellow to 450, orange/red to 550), tint 550-575, second order 575-1100
    // (blue, green, yellow, orange/red), third 1100-1650, fourth 1650-2200, high-order white above about 2500.
    expect(orderBand(100).name).toBe('black/grey');
    expect(orderBand(250).name).toBe('white');
    expect(orderBand(400).name).toBe('yellow');
    expect(orderBand(500).name).toBe('orange/red');
    expect(orderBand(560).name).toBe('sensitive tint');
    expect(orderBand(750)).toEqual({ order: 2, label: 'II', name: 'green' });
    expect(orderBand(870).name).toBe('yellow');
    expect(orderBand(1000).name).toBe('orange/red');
    expect(orderBand(1200).label).toBe('III');
    expect(orderBand(1700).label).toBe('IV');
    expect(orderBand(3000).name).toBe('high-order white');
  });

  it('rejects a nonsense range', () => {
    expect(() => interferenceChart({}, { maxNm: -1 })).toThrow(InputError);
    expect(() => interferenceChart({}, { stepNm: 0 })).toThrow(InputError);
  });
});

describe('renderChart', () => {
  const rows = interferenceChart(D65, { maxNm: 2000, stepNm: 5 });
  const dark = (img: ReturnType<typeof renderChart>, x0: number, x1: number, y0: number, y1: number) => {
    let n = 0;
    for (let y = y0; y < y1; y++) for (let x = x0; x < x1; x++) {
      const i = 3 * (y * img.width + x);
      if (img.data[i] + img.data[i + 1] + img.data[i + 2] === 0) n++;
    }
    return n;
  };

  it('paints both strips with the chart colours and marks the order boundaries', () => {
    const img = renderChart(rows, 401, 20);
    // No title: strip 20 + band (8 ticks + 16 numerals) + strip 20 + axis (6 ticks + 2 + 10 digits + 2).
    expect(img.width).toBe(401);
    expect(img.height).toBe(2 * 20 + 24 + 20);
    expect(img.data.length).toBe(img.width * img.height * 3);
    const px = (x: number, y: number) => Array.from(img.data.subarray(3 * (y * img.width + x), 3 * (y * img.width + x) + 3));
    // x = 130 is 650 nm (2000 nm over 400 px): the top strip shows the plain colour, the bottom strip the compensator colour.
    expect(px(130, 5)).toEqual(rows[130].plain.srgb8);
    expect(px(130, 20 + 24 + 5)).toEqual(rows[130].withCompensator.srgb8);
    // Long tick at 550 nm (x = 110) reaches through the label band; none at 575 nm.
    expect(px(110, 20 + 12)).toEqual([0, 0, 0]);
    expect(px(115, 20 + 1)).toEqual([255, 255, 255]);
    expect(() => renderChart(rows, 10, 20)).toThrow(InputError);
  });

  it('labels the retardance axis in nm and carries a title line saying which strip is which and the lamp', () => {
    const title = chartTitle(D65);
    // The chart's own set-up: no compensator on top, a 550-nm full-wave plate below (interferenceChart's default), D65 lamp.
    expect(title).toContain('TOP: NO COMPENSATOR');
    expect(title).toContain('BOTTOM: 550 NM COMPENSATOR');
    expect(title).toContain('LAMP D65');
    const img = renderChart(rows, 1001, 30, title);
    // Title line 16 px (10-px glyphs + 6), strips 30 + 30, band 24, axis 20.
    expect(img.width).toBe(1001);
    expect(img.height).toBe(16 + 2 * 30 + 24 + 20);
    // Title text (4 * length - 1 columns of 2 px from x = 4) is drawn: dark pixels in the title band, none past its end.
    expect(dark(img, 0, 200, 0, 16)).toBeGreaterThan(100);
    expect(dark(img, 4 + (4 * title.length - 1) * 2 + 1, 1001, 0, 16)).toBe(0);
    // Axis: x = g / 2 for g in nm. Labels 0, 500, 1000, 1500, 2000 centred under their ticks; nothing under 250 or 750 nm.
    const axisY = 16 + 30 + 24 + 30, textY0 = axisY + 8, textY1 = axisY + 18;
    for (const g of [500, 1000, 1500]) expect(dark(img, g / 2 - 12, g / 2 + 12, textY0, textY1), `${g} nm`).toBeGreaterThan(20);
    expect(dark(img, 0, 30, textY0, textY1)).toBeGreaterThan(20);
    expect(dark(img, 970, 1001, textY0, textY1)).toBeGreaterThan(20);
    for (const g of [250, 750, 1250]) expect(dark(img, g / 2 - 10, g / 2 + 10, textY0, textY1), `${g} nm`).toBe(0);
    // Ticks every 100 nm on the axis (x = 50 is 100 nm), longer at 500-nm steps.
    expect(dark(img, 50, 51, axisY, axisY + 3)).toBe(3);
    expect(dark(img, 50, 51, axisY + 3, axisY + 6)).toBe(0);
    expect(dark(img, 250, 251, axisY, axisY + 6)).toBe(6);
  });
});
