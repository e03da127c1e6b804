import { readFileSync } from 'node:fs';
import { dirname, isAbsolute, resolve } from 'node:path';
import {
  analyseDiameter, analyseOrientation, analyseProfile, NOT_DETERMINED, TREND_MAX_PIXELS, trendCsvRows, TREND_READINGS, TREND_READING_WORDS, TREND_SOURCE, trendResult, trendVariable,
  type DiameterDocument, type OrientResult, type ProfileResult, type TrendReading, type TrendResult,
} from '../../analyses/index.ts';
import { parseWalls } from '../../channel/index.ts';
import { giveBack, InputError, isInputError, parseRect } from '../../common/index.ts';
import { checkAnalysisPixels } from '../../image/index.ts';
import { recycleTextureField } from '../../orientation/index.ts';
import { TREND_OPTIONS, type TrendSettings } from '../../options/index.ts';
import { parseTrendTable, type TrendTableRow } from '../../trend/index.ts';
import { flagOpt, numberList, numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import { profileRequestFrom, weightingFrom } from '../channelOptions.ts';
import type { Command } from '../command.ts';
import { formatTable } from '../format.ts';
import { loadImageFiles } from '../io.ts';
import { diameterOptionsFrom } from './diameter.ts';
import { textureOptionsFrom } from './orient.ts';

const PROFILE_ONLY = ['walls', 'auto-walls', 'bins', 'stations', 'core-max', 'skin-min'];
const DIAMETER_ONLY = ['um-per-px', 'um-per-px-uncertainty', 'step-px', 'average-px', 'polarity', 'shading-degree'];

/** `retarda trend`'s options (TREND_OPTIONS) as the analyses take them; an option of another reading's analysis is refused. */
export function trendFrom(a: ParsedArgs): TrendSettings {
  const reading = (stringOpt(a, 'reading') ?? 'whole') as TrendReading;
  if (!(TREND_READINGS as readonly string[]).includes(reading)) throw new InputError(`--reading must be one of ${TREND_READINGS.join(', ')}, got "${reading}"`);
  const source = TREND_SOURCE[reading];
  const given = (names: string[]) => names.filter((n) => a.options.has(n));
  const stray = [...(source !== 'profile' ? given(PROFILE_ONLY) : []), ...(source !== 'diameter' ? given(DIAMETER_ONLY) : []), ...(source !== 'orient' ? given(['region']) : [])];
  if (stray.length) throw new InputError(`--${stray[0]} does not apply to --reading ${reading}`, 'Leave it out, or choose the reading it belongs to');
  const regionText = stringOpt(a, 'region');
  const texture = textureOptionsFrom(a);
  return {
    reading, variable: trendVariable(stringOpt(a, 'variable'), stringOpt(a, 'unit')),
    orient: source === 'orient'
      ? { ...texture, axisDeg: numberOpt(a, 'axis-deg'), weighting: weightingFrom(a, true), blockPx: numberOpt(a, 'block-px'), region: regionText ? parseRect(regionText, '--region') : undefined }
      : texture,
    ...(source === 'profile' ? { profile: profileRequestFrom(a, true) ?? {} } : {}),
    ...(source === 'diameter' ? { diameter: diameterOptionsFrom(a) } : {}),
  };
}

/** The images and their values: the positionals with --values, or the rows of --table (paths relative to it). */
function itemsFrom(a: ParsedArgs): TrendTableRow[] {
  const table = stringOpt(a, 'table'), valuesText = stringOpt(a, 'values');
  if (table !== undefined && (valuesText !== undefined || a.positionals.length)) throw new InputError('give the images either with --table or as names with --values, not both');
  if (table !== undefined) {
    let text: string;
    try { text = readFileSync(table, 'utf8'); } catch { throw new InputError(`cannot read the table ${table}`, 'Check the path; the table is a CSV file with a row per image: image,value'); }
    const base = dirname(table);
    return parseTrendTable(text, table).map((r) => ({ ...r, image: isAbsolute(r.image) ? r.image : resolve(base, r.image) }));
  }
  if (a.positionals.length === 0) throw new InputError('no images given', 'Name the images and give --values v1,v2,... (one per image), or give --table FILE.csv');
  if (valuesText === undefined) throw new InputError('the variable\'s values are not given', 'Give --values v1,v2,... (one per image, in order), or --table FILE.csv');
  const values = numberList(valuesText, '--values');
  if (values.length !== a.positionals.length) throw new InputError(`${values.length} values for ${a.positionals.length} images`, 'Give one value per image in --values');
  return a.positionals.map((image, k) => ({ image, value: values[k] }));
}

/** One image's result document for the reading: orient, profile (walls from its row, else the options) or diameter. */
async function documentOf(row: TrendTableRow, s: TrendSettings): Promise<OrientResult | ProfileResult | DiameterDocument> {
  const source = TREND_SOURCE[s.reading];
  const [img] = await loadImageFiles([row.image], { grey: source !== 'profile' });
  try {
    checkAnalysisPixels(img, TREND_MAX_PIXELS[source]);
    if (source === 'diameter') return analyseDiameter(img, s.diameter ?? {});
    const { result, field } = await analyseOrientation(img, source === 'orient' ? s.orient : { ...s.orient, weighting: s.profile?.weighting });
    if (source === 'orient') { recycleTextureField(field); return result; }
    const request = row.walls ? { ...s.profile, channel: parseWalls(row.walls), autoWalls: undefined } : s.profile ?? {};
    if (!request.channel && !request.autoWalls) throw new InputError(`${img.source.name}: a channel profile needs walls`, 'Give --walls or --auto-walls, or a walls column in the table');
    const p = await analyseProfile(img, field, request);
    recycleTextureField(field);
    return p;
  } finally { giveBack(...img.planes); }
}

const cell = (v: number) => (Number.isFinite(v) ? v : NOT_DETERMINED);

/** The fit as a table: slope and intercept with their intervals, or "not determined" with why. */
function fitTable(r: TrendResult): string {
  const f = r.fit, nd = r.notDetermined ?? {};
  const per = `${r.readingUnit ? `${r.readingUnit} ` : ''}per ${r.variable.unit || 'unit'}`;
  if (nd.slope) return `line: ${NOT_DETERMINED}: ${nd.slope}`;
  return [
    formatTable(['', 'estimate', 'ci low', 'ci high', 'se'], [
      [`slope (${per})`, f.slope, f.slopeCiLow, f.slopeCiHigh, f.slopeSe],
      [`intercept (at ${r.variable.name} 0)`, f.intercept, f.interceptCiLow, f.interceptCiHigh, f.interceptSe],
    ]),
    `${TREND_READING_WORDS[r.reading]} ${f.direction === 'no clear trend' ? 'shows no clear trend' : f.direction} with ${r.variable.name} (95 %); ${f.n} points at ${f.distinctX} values, chi2 ${f.chiSquare.toPrecision(3)} on ${f.dof} dof${f.birgeRatio > 1 ? `, intervals widened by the Birge ratio ${f.birgeRatio.toFixed(2)}` : ''}`,
  ].join('\n');
}

export const trendCommand: Command = {
  name: 'trend',
  summary: 'a reading (whole-image S, core S, skin S, core/skin, fibre diameter) against a process variable: points and a weighted straight line with 95 % intervals',
  usage: '(IMAGE... --values v1,v2,... | --table FILE.csv) [--reading whole|core|skin|core-skin|diameter] [--variable NAME] [--unit U] [the reading\'s options] [--json]',
  options: TREND_OPTIONS,
  async run(a) {
    const settings = trendFrom(a);
    const rows = itemsFrom(a);
    if (flagOpt(a, 'auto-walls') && stringOpt(a, 'walls')) throw new InputError('give either --walls or --auto-walls, not both');
    const items: { source: string; value: number; doc: OrientResult | ProfileResult | DiameterDocument | null; why?: string }[] = [];
    const refused: string[] = [];
    // One image at a time; an image the analysis refuses (no walls found, no fibre) is a point without a reading.
    for (const row of rows) {
      try {
        items.push({ source: row.image, value: row.value, doc: await documentOf(row, settings) });
      } catch (e) {
        if (!isInputError(e)) throw e;
        refused.push((e as Error).message);
        items.push({ source: row.image, value: row.value, doc: null, why: `refused: ${(e as Error).message}` });
      }
    }
    // Every image refused: that is bad input or options, not a trend.
    if (refused.length === rows.length) throw new InputError(refused[0].replace(/\.\s*$/, ''));
    const r = trendResult(items, settings.reading, settings.variable, {
      ...settings.orient, ...(settings.profile ?? {}), ...(settings.diameter ?? {}),
    });
    const unit = r.readingUnit ? `, ${r.readingUnit}` : '';
    const table = [
      `${TREND_READING_WORDS[r.reading]}${unit} against ${r.variable.name}${r.variable.unit ? ` (${r.variable.unit})` : ''}`,
      formatTable(['image', r.variable.name, 'reading', 'ci low', 'ci high', 'se', 'in fit'],
        r.points.map((p) => [p.source, p.value, cell(p.reading), cell(p.ciLow), cell(p.ciHigh), cell(p.se), p.used ? 'yes' : `no: ${p.why}`])),
      fitTable(r),
    ].join('\n');
    return {
      json: r, table,
      csvRows: trendCsvRows(r),
      warnings: [...Object.entries(r.notDetermined ?? {}).map(([key, why]) => `${key} ${NOT_DETERMINED}: ${why}`), ...r.warnings],
    };
  },
};
