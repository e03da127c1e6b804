import { interferenceChart, renderChart, chartTitle, parseIlluminant, fullWavePlate, illuminantLabel } from '../../optics/index.ts';
import { encodePng } from '../../report/png.ts';
import { numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import { CHART_OPTIONS, type ChartRequest } from '../../options/index.ts';
import { checkLimit } from '../../common/index.ts';
import type { Command } from '../command.ts';
import { formatTable } from '../format.ts';
import { writeBytes } from '../io.ts';
import { DEFAULT_ILLUMINANT, OPTICS_LIMITS, SCHEMA_VERSION } from '../../analyses/index.ts';

/** `retarda chart`'s options (CHART_OPTIONS). */
export function chartFrom(a: ParsedArgs): ChartRequest {
  return {
    compensatorNm: numberOpt(a, 'compensator-nm'), illuminant: stringOpt(a, 'illuminant'), maxNm: numberOpt(a, 'max-nm'),
    stepNm: numberOpt(a, 'step-nm'), widthPx: numberOpt(a, 'width-px'), out: stringOpt(a, 'out'),
  };
}

export const chartCommand: Command = {
  name: 'chart',
  summary: 'interference colour chart (0-2000 nm, with and without the compensator) as a table, CSV and PNG',
  usage: '[--compensator-nm N] [--illuminant 3200K|D65] [--out chart.png] [--csv chart.csv]',
  options: CHART_OPTIONS,
  async run(a) {
    const o = chartFrom(a);
    const illuminant = parseIlluminant(o.illuminant ?? DEFAULT_ILLUMINANT);
    const compensatorNm = checkLimit(OPTICS_LIMITS.compensatorNm, o.compensatorNm);
    const train = { illuminant, compensator: fullWavePlate(compensatorNm) };
    const rows = interferenceChart(train, { maxNm: o.maxNm, stepNm: o.stepNm });
    const out = o.out;
    if (out) {
      const img = renderChart(rows, o.widthPx, 60, chartTitle(train));
      await writeBytes(out, encodePng(img));
    }
    const hex = (c: number[]) => '#' + c.map((v) => v.toString(16).padStart(2, '0')).join('');
    const every = Math.max(1, Math.round(50 / (rows[1]?.retardanceNm ?? 50)));
    return {
      json: {
        schemaVersion: SCHEMA_VERSION, analysis: 'chart', illuminant: illuminantLabel(illuminant), compensatorNm, picture: out ?? null,
        rows: rows.map((r) => ({ retardanceNm: r.retardanceNm, interferenceOrder: r.band.label, band: r.band.name, lab: r.plain.lab, srgb8: r.plain.srgb8, labWithCompensator: r.withCompensator.lab, srgb8WithCompensator: r.withCompensator.srgb8 })),
        warnings: [],
      },
      table: formatTable(['retardance nm', 'interference order', 'band', 'colour', 'with compensator'],
        rows.filter((_, i) => i % every === 0).map((r) => [r.retardanceNm, r.band.label, r.band.name, hex(r.plain.srgb8), hex(r.withCompensator.srgb8)])),
      csvRows: rows.map((r) => ({
        retardanceNm: r.retardanceNm, interferenceOrder: r.band.label, band: r.band.name,
        labL: r.plain.lab[0], labA: r.plain.lab[1], labB: r.plain.lab[2], srgbR8: r.plain.srgb8[0], srgbG8: r.plain.srgb8[1], srgbB8: r.plain.srgb8[2],
        compensatorLabL: r.withCompensator.lab[0], compensatorLabA: r.withCompensator.lab[1], compensatorLabB: r.withCompensator.lab[2],
        compensatorSrgbR8: r.withCompensator.srgb8[0], compensatorSrgbG8: r.withCompensator.srgb8[1], compensatorSrgbB8: r.withCompensator.srgb8[2],
      })),
      warnings: [],
    };
  },
};
