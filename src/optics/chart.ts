import { checkNumber } from '../common/index.ts';
import { checkLimit, type Limit } from '../common/index.ts';
import { DEG } from '../common/index.ts';
import { colourModel, interferenceColour } from './colourModel.ts';
import { illuminantLabel, wavelengthGrid, type WavelengthGrid } from './spectrum.ts';
import type { Vec3 } from './colorimetry.ts';
import { resolveTrain, fullWavePlate, type OpticalTrain } from './train.ts';
import { drawText, textHeightPx, textWidthPx } from './pixelFont.ts';

/** Coarse order band of a retardance (classical Michel-Levy scale, names as in mineralogy texts). */
export interface OrderBand {
  /** 1-4 for first to fourth order, 5 for higher orders. */
  order: number;
  /** Roman numeral label: I, II, III, IV, or "high". */
  label: string;
  /** Colour family inside the band. */
  name: string;
}

/**
 * Coarse bands for labels: first order 0-550 nm (black/grey 0-200, white 200-280, yellow 280-450,
 * orange/red 450-550); sensitive tint 550-575; second order 575-1100 (blue 575-700, green 700-820,
 * yellow 820-920, orange/red 920-1100); third 1100-1650; fourth 1650-2200; high-order white above.
 */
export function orderBand(retardanceNm: number): OrderBand {
  const g = retardanceNm;
  if (g < 550) {
    const name = g < 200 ? 'black/grey' : g < 280 ? 'white' : g < 450 ? 'yellow' : 'orange/red';
    return { order: 1, label: 'I', name };
  }
  if (g < 575) return { order: 1, label: 'I/II', name: 'sensitive tint' };
  if (g < 1100) {
    const name = g < 700 ? 'blue' : g < 820 ? 'green' : g < 920 ? 'yellow' : 'orange/red';
    return { order: 2, label: 'II', name };
  }
  if (g < 1650) return { order: 3, label: 'III', name: 'third order' };
  if (g < 2200) return { order: 4, label: 'IV', name: 'fourth order' };
  return { order: 5, label: 'high', name: g > 2500 ? 'high-order white' : 'pale high order' };
}

export interface ChartRow {
  retardanceNm: number;
  band: OrderBand;
  /** Sample at 45 deg between the train's polars, no compensator. */
  plain: { xyz: Vec3; lab: Vec3; srgb8: Vec3 };
  /** Same with the compensator (the train's, or a 550-nm full-wave plate at +45 if it has none), sample parallel to it. */
  withCompensator: { xyz: Vec3; lab: Vec3; srgb8: Vec3 };
}

export interface ChartOptions {
  maxNm?: number;
  stepNm?: number;
  /** Spectral integration grid (default 380-780 nm, 5 nm). */
  grid?: WavelengthGrid;
}

/** Defaults and ranges of the chart's options, for the chart itself and `retarda chart`'s help. */
export const CHART_LIMITS = {
  maxNm: { what: 'chart maximum retardance', min: 10, max: 20000, default: 2000, unit: 'nm' },
  stepNm: { what: 'chart step', min: 0.1, max: 500, default: 5, unit: 'nm' },
  widthPx: { what: 'chart width', min: 50, max: 20000, default: 1000, unit: 'px' },
} as const satisfies Record<string, Limit>;

/** Interference colour chart data, retardance 0..maxNm (default 0-2000 nm, 5-nm steps), at the train's lamp. */
export function interferenceChart(train: Partial<OpticalTrain> = {}, options: ChartOptions = {}): ChartRow[] {
  const maxNm = checkLimit(CHART_LIMITS.maxNm, options.maxNm);
  const stepNm = checkLimit(CHART_LIMITS.stepNm, options.stepNm);
  const t = resolveTrain(train);
  const comp = t.compensator ?? fullWavePlate();
  const grid = options.grid ?? wavelengthGrid();
  const plainModel = colourModel({ ...t, compensator: null }, grid);
  const plateModel = colourModel({ ...t, compensator: comp }, grid);
  const sampleAxis = (t.polariserDeg + 45) * DEG;
  const rows: ChartRow[] = [];
  for (let g = 0; g <= maxNm + 1e-9; g += stepNm) {
    const a = interferenceColour(plainModel, { angleRad: sampleAxis, retardanceNm: g });
    const b = interferenceColour(plateModel, { angleRad: comp.axisDeg * DEG, retardanceNm: g });
    rows.push({
      retardanceNm: g, band: orderBand(g),
      plain: { xyz: a.xyz, lab: a.lab, srgb8: a.srgb8 },
      withCompensator: { xyz: b.xyz, lab: b.lab, srgb8: b.srgb8 },
    });
  }
  return rows;
}

/** An RGB pixel buffer (row-major, 3 bytes per pixel), ready for a PNG encoder. */
export interface RgbBuffer {
  width: number;
  height: number;
  channels: 3;
  data: Uint8Array;
}

/**
 * The title line of the chart picture for a train: which strip is which (the compensator as `interferenceChart`
 * uses it: the train's, or a 550-nm full-wave plate) and the lamp, e.g.
 * "TOP: NO COMPENSATOR. BOTTOM: 550 NM COMPENSATOR, SLOW AXES PARALLEL. LAMP 3200K. RETARDANCE IN NM".
 */
export function chartTitle(train: Partial<OpticalTrain> = {}): string {
  const t = resolveTrain(train);
  const comp = t.compensator ?? fullWavePlate();
  return `TOP: NO COMPENSATOR. BOTTOM: ${Math.round(comp.retardanceNm * 10) / 10} NM COMPENSATOR, SLOW AXES PARALLEL. LAMP ${illuminantLabel(t.illuminant).toUpperCase()}. RETARDANCE IN NM`;
}

/**
 * Renders the chart as an RGB picture, retardance increasing to the right: a title line (which strip is with
 * and without the compensator, and the lamp, when `title` is given), the top strip without compensator, a
 * band with tick marks every 100 nm (long ones at the order boundaries 550, 1100, 1650 nm) and the order
 * numerals I-IV, the bottom strip with the compensator, and a retardance axis under it: ticks every 100 nm,
 * longer every 500 nm, labelled in nm every 500 nm (every 1000 nm when the picture is too narrow for that).
 */
export function renderChart(rows: ChartRow[], widthPx: number = CHART_LIMITS.widthPx.default, stripPx = 60, title?: string): RgbBuffer {
  checkLimit(CHART_LIMITS.widthPx, widthPx);
  checkNumber('chart strip height', stripPx, 10, 2000, 'px');
  const width = Math.round(widthPx), strip = Math.round(stripPx), maxNm = rows[rows.length - 1].retardanceNm;
  // Text at scale 2 (6x10-px glyphs) unless the title would not fit, then scale 1.
  const scale = title && textWidthPx(title, 2) > width - 8 ? 1 : 2;
  const titlePx = title ? textHeightPx(scale) + 6 : 0;
  const labelPx = 16, tickPx = 8, axisTickPx = 6, axisPx = axisTickPx + 2 + textHeightPx(2) + 2;
  const topY = titlePx, bandY = topY + strip, bottomY = bandY + tickPx + labelPx, axisY = bottomY + strip;
  const height = axisY + axisPx;
  const data = new Uint8Array(width * height * 3).fill(255);
  const set = (x: number, y: number, c: Vec3) => { const i = 3 * (y * width + x); data[i] = c[0]; data[i + 1] = c[1]; data[i + 2] = c[2]; };
  const xOf = (g: number) => Math.min(width - 1, Math.round((g / maxNm) * (width - 1)));
  for (let x = 0; x < width; x++) {
    const g = (x / (width - 1)) * maxNm;
    const row = rows[Math.min(rows.length - 1, Math.round((g / maxNm) * (rows.length - 1)))];
    for (let y = 0; y < strip; y++) {
      set(x, topY + y, row.plain.srgb8);
      set(x, bottomY + y, row.withCompensator.srgb8);
    }
  }
  const black: Vec3 = [0, 0, 0];
  const tick = (g: number, y0: number, lengthPx: number) => { const x = xOf(g); for (let y = y0; y < y0 + lengthPx; y++) set(x, y, black); };
  for (let g = 0; g <= maxNm + 1e-9; g += 100) {
    tick(g, bandY, tickPx / 2);
    tick(g, axisY, Math.round(g) % 500 === 0 ? axisTickPx : axisTickPx / 2);
  }
  for (const g of [550, 1100, 1650]) if (g <= maxNm) tick(g, bandY, tickPx + labelPx);
  const centred = (g: number, text: string, y: number, sc: number) => {
    const w = textWidthPx(text, sc);
    const x0 = Math.max(0, Math.min(width - w, Math.round(xOf(g) - w / 2)));
    drawText(data, width, height, x0, y, text, sc, black);
  };
  for (const [g, text] of [[275, 'I'], [825, 'II'], [1375, 'III'], [1925, 'IV']] as const) if (g <= maxNm) centred(g, text, bandY + tickPx + 2, 2);
  // Numbers every 500 nm if they keep at least two glyph widths apart, else every 1000 nm.
  const widest = textWidthPx(String(Math.round(maxNm)), 2);
  const labelEveryNm = (500 / maxNm) * (width - 1) >= widest + 16 ? 500 : 1000;
  for (let g = 0; g <= maxNm + 1e-9; g += labelEveryNm) centred(g, g === 0 ? '0 NM' : String(Math.round(g)), axisY + axisTickPx + 2, 2);
  if (title) drawText(data, width, height, 4, 3, title, scale, black);
  return { width, height, channels: 3, data };
}
