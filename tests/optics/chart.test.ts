import { describe, expect, it } from 'vitest';
import {
  interferenceChart, renderChart, chartTitle, orderBand, colourModel, interferenceColour, wavelengthGrid, chromaticity, deltaE2000, fullWavePlate,
  type Vec3,
} from '../../src/optics/index.ts';
import { DEG } from '../../src/common/angles.ts';
import { InputError } from '../../src/common/errors.ts';

// domain.md §13: D65 x CIE 1931 5-nm table (360-830), open beam Y = 1, Lab white = open beam, sRGB 4-digit matrix, clipped.
const GRID = wavelengthGrid(360, 830, 5);
const D65 = { illuminant: { kind: 'D65' as const } };
const plain = colourModel({ ...D65, compensator: null }, GRID);
const at45 = (g: number) => interferenceColour(plain, { angleRad: 45 * DEG, retardanceNm: g });
const near = (a: Vec3, b: Vec3, tol: number) => a.forEach((v, i) => expect(Math.abs(v - b[i])).toBeLessThanOrEqual(tol));

describe('interference colours between crossed polars (D65)', () => {
  it('first-order white at 259 nm', () => {
    // domain.md §1 [C]: Y = 0.979, Lab (99.1, -4.3, 2.2), +-0.3. Y to +-1.5e-3: L* = 99.1 given to 0.05 fixes Y to
    // about +-1.3e-3 (dL*/dY = 38.9 at Y = 0.98), so the two published values agree only that far.
    const c = at45(259);
    expect(Math.abs(c.xyz[1] - 0.979)).toBeLessThan(1.5e-3);
    near(c.lab, [99.1, -4.3, 2.2], 0.3);
  });

  it('the Y minimum ("sensitive tint") at 551 nm', () => {
    // domain.md §1 [C]: Y = 0.0524, Lab (27.4, 72.8, -71.6), sRGB8 (104, 0, 179), +-0.5; Y minimum at 551 nm under D65, 564 nm at 3200 K.
    const c = at45(551);
    expect(Math.abs(c.xyz[1] - 0.0524)).toBeLessThan(5e-4);
    near(c.lab, [27.4, 72.8, -71.6], 0.5);
    near(c.srgb8, [104, 0, 179], 0.5);
    const yMinAt = (m: ReturnType<typeof colourModel>) => {
      let best = 0, y = Infinity;
      for (let g = 450; g <= 650; g++) {
        const v = interferenceColour(m, { angleRad: 45 * DEG, retardanceNm: g }).xyz[1];
        if (v < y) { y = v; best = g; }
      }
      return best;
    };
    expect(yMinAt(plain)).toBe(551);
    expect(yMinAt(colourModel({ compensator: null }, GRID))).toBe(564);
  });

  it('orange-yellow at 450, blue at 650, yellow-green at 800 nm', () => {
    // domain.md §1 [C]: Lab (63.6, 20.7, 79.1) / (61.5, -8.9, -60.2) / (94.8, -34.6, 35.6), +-0.5.
    near(at45(450).lab, [63.6, 20.7, 79.1], 0.5);
    near(at45(650).lab, [61.5, -8.9, -60.2], 0.5);
    near(at45(800).lab, [94.8, -34.6, 35.6], 0.5);
  });

  it('high-order white at 5000 nm', () => {
    // domain.md §1 [C]: Y = 0.503 (+-0.01), C* = 2.3 (+-0.5).
    const c = at45(5000);
    expect(Math.abs(c.xyz[1] - 0.503)).toBeLessThan(0.01);
    expect(Math.abs(Math.hypot(c.lab[1], c.lab[2]) - 2.3)).toBeLessThan(0.5);
  });

  it('the angle scales brightness only: chromaticity at 10 deg equals that at 45 deg', () => {
    // domain.md §1 [C]: Gamma 400 -> xy (0.4366, 0.4409) at 45 and 10 deg, Y 0.583 vs 0.068.
    const a = interferenceColour(plain, { angleRad: 45 * DEG, retardanceNm: 400 }), b = interferenceColour(plain, { angleRad: 10 * DEG, retardanceNm: 400 });
    const xa = chromaticity(a.xyz), xb = chromaticity(b.xyz);
    expect(xa[0]).toBeCloseTo(0.4366, 4); expect(xa[1]).toBeCloseTo(0.4409, 4);
    expect(xb[0]).toBeCloseTo(0.4366, 4); expect(xb[1]).toBeCloseTo(0.4409, 4);
    expect(a.xyz[1]).toBeCloseTo(0.583, 3);
    expect(b.xyz[1]).toBeCloseTo(0.068, 3);
  });

  it('10-nm sampling differs from 5-nm by at most 0.11 Delta E00 (0-3000 nm)', () => {
    // domain.md §1 [C]: 10 nm vs 5 nm steps give max Delta E00 0.11.
    const coarse = colourModel({ ...D65, compensator: null }, wavelengthGrid(360, 830, 10));
    let max = 0;
    for (let g = 0; g <= 3000; g += 5) {
      max = Math.max(max, deltaE2000(at45(g).lab, interferenceColour(coarse, { angleRad: 45 * DEG, retardanceNm: g }).lab));
    }
    expect(Math.abs(max - 0.11)).toBeLessThan(0.02);
  });
});

describe('compensator (full-wave plate at +45 deg, D65)', () => {
  const plate = (nm: number) => colourModel({ ...D65, compensator: fullWavePlate(nm) }, GRID);
  it('the background is the sensitive tint', () => {
    // domain.md §2 [C]: Gamma_p 550, no sample -> Lab (27.4, 73.0, -70.8), sRGB8 (106, 0, 177), +-0.5.
    const c = interferenceColour(plate(550), { angleRad: 0, retardanceNm: 0 });
    near(c.lab, [27.4, 73.0, -70.8], 0.5);
    near(c.srgb8, [106, 0, 177], 0.5);
  });

  it('addition is blue (b* < 0) and subtraction yellow (b* > 0)', () => {
    // domain.md §2 [C] and Murphy & Davidson Fig. 9-5 [S9]: Gamma_s 100 at +45 -> (61.5, -8.9, -60.2), at -45 -> (63.6, 20.7, 79.1); Gamma_p 530: (53.6, 3.9, -69.1) / (71.1, 13.4, 77.2).
    const add = interferenceColour(plate(550), { angleRad: 45 * DEG, retardanceNm: 100 }).lab;
    const sub = interferenceColour(plate(550), { angleRad: -45 * DEG, retardanceNm: 100 }).lab;
    expect(add[2]).toBeLessThan(0);
    expect(sub[2]).toBeGreaterThan(0);
    near(add, [61.5, -8.9, -60.2], 0.5);
    near(sub, [63.6, 20.7, 79.1], 0.5);
    near(interferenceColour(plate(530), { angleRad: 45 * DEG, retardanceNm: 100 }).lab, [53.6, 3.9, -69.1], 0.5);
    near(interferenceColour(plate(530), { angleRad: -45 * DEG, retardanceNm: 100 }).lab, [71.1, 13.4, 77.2], 0.5);
  });
});

describe('interferenceChart', () => {
  // Named bands, domain.md §1: names and Gamma [M], Lab / sRGB8 [C]; regression within the table's rounding (0.1 Lab, 1 sRGB8 step).
  const table: [number, Vec3, Vec3][] = [
    [40, [27.0, -0.4, -10.1], [54, 65, 79]], [97, [59.4, -1.1, -15.7], [125, 145, 170]], [158, [82.3, -2.4, -15.1], [184, 207, 233]],
    [218, [95.4, -3.8, -7.3], [227, 245, 255]], [259, [99.1, -4.3, 2.2], [245, 255, 248]], [281, [99.4, -4.3, 8.8], [252, 255, 236]],
    [332, [95.6, -2.7, 27.6], [255, 242, 189]], [430, [71.1, 13.4, 77.2], [228, 162, 0]], [505, [40.1, 52.4, -7.2], [165, 49, 108]],
    [536, [29.2, 71.8, -56.1], [127, 0, 158]], [575, [31.4, 56.4, -81.6], [54, 41, 207]], [664, [66.6, -16.1, -53.3], [0, 175, 255]],
    [747, [88.6, -36.8, -2.9], [125, 242, 227]], [843, [95.4, -24.8, 67.9], [236, 252, 103]], [910, [88.9, 4.4, 91.4], [255, 217, 0]],
    [948, [81.7, 26.9, 60.8], [255, 182, 87]], [998, [69.4, 59.3, 3.4], [255, 121, 166]], [1101, [49.1, 78.4, -76.1], [172, 47, 249]],
    [1151, [53.5, 23.2, -70.0], [52, 122, 250]], [1258, [77.2, -85.1, 7.0], [0, 226, 175]], [1334, [87.6, -69.6, 62.9], [97, 249, 89]],
    [1426, [88.5, -5.7, 45.4], [241, 223, 134]], [1495, [81.7, 43.8, 1.3], [255, 171, 202]], [1534, [76.0, 64.8, -20.0], [255, 136, 226]],
    [1652, [62.4, 51.9, -39.6], [207, 115, 222]], [1744, [67.4, -49.5, 1.6], [0, 187, 160]], [1811, [75.5, -88.0, 29.4], [0, 221, 128]],
    [2007, [82.4, 17.6, -6.2], [233, 194, 217]],
  ];
  const rows = interferenceChart(D65, { maxNm: 2010, stepNm: 1, grid: GRID });

  it.each(table)('row at %i nm matches the named-band table', (g, lab, rgb) => {
    const r = rows[g];
    expect(r.retardanceNm).toBe(g);
    near(r.plain.lab, lab, 0.1);
    near(r.plain.srgb8, rgb, 1);
  });

  it('rows with the compensator start at the tint and carry order-band labels', () => {
    near(rows[0].withCompensator.lab, [27.4, 73.0, -70.8], 0.5);
    expect(rows[0].band.label).toBe('I');
    expect(rows[600].band).toEqual({ order: 2, label: 'II', name: 'blue' });
  });

  it('orderBand follows the coarse bands', () => {
    // domain.md §1 coarse bands [M]: first order 0-550 (grey to 200, white to 280, yellow to 450, orange/red to 550), tint 550-575, second 575-1100 (blue, green, yellow, orange/red), third 1100-1650, fourth 1650-2200.
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
