import {
  analysePlate, type OpticsResult, type OpticsSummaryOptions, type PlateOptions, type PlateReadingOptions, type TrainOptions,
} from '../../analyses/index.ts';
import { InputError } from '../../common/errors.ts';
import type { MatchSpace } from '../../optics/index.ts';
import { parseRect } from '../../common/index.ts';
import { flagOpt, numberList, numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import { PLATE_OPTIONS } from '../../options/index.ts';
import type { Command, CommandOutput } from '../command.ts';
import { formatPairs } from '../format.ts';
import { NOT_DETERMINED } from '../../analyses/schema.ts';
import { loadImageFiles } from '../io.ts';
import { fieldOutPath, writeFieldTiff } from '../fieldExport.ts';
import { profileCsvRow, profileRequestFrom, profileTable, weightingFrom } from '../channelOptions.ts';

/** The known-retardance options as the analyses take them. */
export function knownRetardanceFrom(a: ParsedArgs): Pick<PlateOptions, 'sampleRetardanceNm' | 'sampleRetardanceToleranceNm'> {
  return { sampleRetardanceNm: numberOpt(a, 'sample-retardance-nm'), sampleRetardanceToleranceNm: numberOpt(a, 'sample-retardance-tolerance-nm') };
}

/** The optical train options as the analyses take them. */
export function trainOptionsFrom(a: ParsedArgs): TrainOptions {
  return {
    compensatorNm: numberOpt(a, 'compensator-nm'), compensatorDeg: numberOpt(a, 'compensator-deg'),
    polariserDeg: numberOpt(a, 'polariser-deg'), illuminant: stringOpt(a, 'illuminant'),
  };
}

/** Camera white balance from --white-rgb "R,G,B", or undefined. */
function whiteFrom(a: ParsedArgs): [number, number, number] | undefined {
  const t = stringOpt(a, 'white-rgb');
  if (!t) return undefined;
  const v = numberList(t, '--white-rgb');
  if (v.length !== 3 || v.some((x) => x < 0 || x > 255)) throw new InputError(`--white-rgb needs three 8-bit codes "R,G,B", got "${t}"`);
  return [v[0], v[1], v[2]];
}

function signFrom(a: ParsedArgs): 'positive' | 'negative' | undefined {
  const s = stringOpt(a, 'sign');
  if (s !== undefined && s !== 'positive' && s !== 'negative') throw new InputError(`--sign must be positive or negative, got "${s}"`);
  return s;
}

/** The options of PLATE_OPTIONS, as the analyses take them. */
export function plateReadingFrom(a: ParsedArgs): PlateReadingOptions {
  const bg = stringOpt(a, 'sample-free');
  return {
    ...trainOptionsFrom(a), retardanceMaxNm: numberOpt(a, 'retardance-max-nm'), retardanceMinNm: numberOpt(a, 'retardance-min-nm'), sampleFree: bg ? parseRect(bg, '--sample-free') : undefined,
    whiteRgb: whiteFrom(a), sign: signFrom(a),
  };
}

/** --match, or undefined (the analyses match in Lab by default). */
export function matchFrom(a: ParsedArgs): MatchSpace | undefined {
  const match = stringOpt(a, 'match');
  if (match !== undefined && match !== 'lab' && match !== 'chroma') throw new InputError(`--match must be lab or chroma, got "${match}"`);
  return match;
}

/** Whole-field order options and the channel profile request (CHANNEL_OPTIONS). */
export function summaryFrom(a: ParsedArgs): OpticsSummaryOptions {
  return {
    axisDeg: numberOpt(a, 'axis-deg'), weighting: weightingFrom(a, false), blockPx: numberOpt(a, 'block-px'),
    profile: profileRequestFrom(a, false),
  };
}

export function opticsTable(r: OpticsResult): string {
  const c = r.confidence;
  const nd = r.notDetermined?.order;
  const head = formatPairs([
    ['image', r.source],
    ['method', String(r.options.method)],
    ...(nd ? [['order numbers', `${NOT_DETERMINED}: ${nd}`] as [string, string]] : [
      ['director deg', r.notDetermined?.directorDeg ? NOT_DETERMINED : r.directorDeg] as [string, string | number],
      ['S_2D (95% CI)', `${r.order2D.toFixed(3)} (${r.order2DCiLow.toFixed(3)}..${r.order2DCiHigh.toFixed(3)})`] as [string, string],
      ...(r.axisOrder !== null ? [['S_axis', `${r.axisOrder.toFixed(3)} against ${r.axisDeg} deg`] as [string, string]] : []),
    ]),
    ['retardance nm (median)', r.retardanceNmMedian],
    ['confidence mean / median', `${c.mean?.toFixed(3) ?? '-'} / ${c.median?.toFixed(3) ?? '-'}`],
    ['pixels with confidence >= 0.5', c.fractionAbove05 === null ? '-' : `${(100 * c.fractionAbove05).toFixed(1)} %`],
    ['ambiguity', r.ambiguity],
    ['n', r.n],
  ]);
  return r.profile ? `${head}\n\n${profileTable(r.profile)}` : head;
}

export function opticsCsvRow(r: OpticsResult): Record<string, string | number | boolean | null> {
  return {
    image: r.source, method: String(r.options.method), directorDeg: r.directorDeg, order2D: r.order2D, order2DCiLow: r.order2DCiLow, order2DCiHigh: r.order2DCiHigh,
    axisDeg: r.axisDeg, axisOrder: r.axisOrder, retardanceNmMedian: r.retardanceNmMedian, confidenceMean: r.confidence.mean,
    confidenceMedian: r.confidence.median, confidenceFractionAbove05: r.confidence.fractionAbove05, ambiguity: r.ambiguity, n: r.n,
    ...(r.profile ? profileCsvRow(r.profile) : {}),
  };
}

export function opticsOutput(analysis: string, results: OpticsResult[]): CommandOutput {
  return {
    json: results.length === 1 ? results[0] : { schemaVersion: results[0].schemaVersion, analysis, results },
    table: results.map(opticsTable).join('\n\n'),
    csvRows: results.map(opticsCsvRow),
    warnings: results.flatMap((r) => [
      ...Object.entries(r.notDetermined ?? {}).map(([k, why]) => `${r.source}: ${k === 'order' ? 'order numbers' : k} ${NOT_DETERMINED}: ${why}`),
      // The profile's own withheld groups (clipped pixels, an unsettled 90-deg choice); its `order` is the result's.
      ...Object.entries(r.profile?.notDetermined ?? {}).filter(([k]) => k !== 'order').map(([k, why]) => `${r.source}: profile ${k} ${NOT_DETERMINED}: ${why}`),
      ...r.warnings.map((w) => `${r.source}: ${w}`),
    ]),
  };
}

/** `retarda plate`'s options (PLATE_OPTIONS) as analysePlate takes them. */
export function plateOptionsFrom(a: ParsedArgs): PlateOptions {
  return { ...plateReadingFrom(a), ...knownRetardanceFrom(a), ...summaryFrom(a), match: matchFrom(a), resolveMirror: flagOpt(a, 'resolve-mirror') || undefined };
}

export const plateCommand: Command = {
  name: 'plate',
  summary: 'plate reading: orientation and retardance from one compensator (full-wave plate) colour image',
  usage: 'IMAGE... [--compensator-nm 550] [--compensator-deg 45] [--polariser-deg 0] [--illuminant 3200K|D65] [--retardance-max-nm 800] [--sample-retardance-nm R [--sample-retardance-tolerance-nm T]] [--sample-free "x,y,w,h"] [--field-out FILE.tif] [--json]',
  options: PLATE_OPTIONS,
  async run(a) {
    if (a.positionals.length === 0) throw new InputError('no image given', 'Name one or more compensator images');
    const options = plateOptionsFrom(a);
    const images = await loadImageFiles(a.positionals);
    const fieldOut = stringOpt(a, 'field-out');
    const results: OpticsResult[] = [];
    for (const img of images) {
      const { result, field } = await analysePlate(img, options);
      if (fieldOut) await writeFieldTiff(fieldOutPath(fieldOut, img.source.name, images.length), field, `retarda plate ${img.source.name}`);
      results.push(result);
    }
    return opticsOutput('plate', results);
  },
};
