import { orientResult, type OrientResult, type ProfileResult } from '../../analyses/index.ts';
import { orientationField } from '../../orientation/index.ts';
import type { OrientationField } from '../../orientation/types.ts';
import { orderParameters, checkWeighting } from '../../order/index.ts';
import { toGrey, type Image } from '../../image/types.ts';
import { InputError } from '../../common/errors.ts';
import {
  readPlate, parseIlluminant, parseRect, fullWavePlate, mirrorChoiceStats, compensatorAxisAdvice, resolveMirrorWithTexture,
  whiteReference, type OpticalTrain, type PlateCalibration, type MatchSpace, type CameraCalibration,
} from '../../optics/index.ts';
import { flagOpt, numberList, numberOpt, stringOpt, type OptionSpec, type ParsedArgs } from '../args.ts';
import type { Command, CommandOutput } from '../command.ts';
import { formatPairs } from '../format.ts';
import { loadImageFiles } from '../io.ts';
import { fieldOutPath, writeFieldTiff } from '../fieldExport.ts';
import { CHANNEL_OPTIONS, channelProfileOutput, profileCsvRow, profileTable } from '../channelOptions.ts';

/** The optical train, shared by plate, plate2, quad (its --plate image) and chart. */
export const TRAIN_OPTIONS: OptionSpec[] = [
  { name: 'compensator-nm', kind: 'number', help: 'full-wave compensator retardance, nm (fitted from --background unless given)', defaultText: '550' },
  { name: 'compensator-deg', kind: 'number', help: 'compensator slow-axis angle, degrees CCW from +x', defaultText: '45' },
  { name: 'polariser-deg', kind: 'number', help: 'polariser angle, degrees CCW from +x (analyser crossed)', defaultText: '0' },
  { name: 'illuminant', kind: 'string', help: 'lamp: a colour temperature such as 3200K, or D65, or A', defaultText: '3200K' },
];

/** Options of the compensator-image readers. */
export const PLATE_OPTIONS: OptionSpec[] = [
  ...TRAIN_OPTIONS,
  { name: 'retardance-max-nm', kind: 'number', help: 'largest sample retardance searched, nm', defaultText: '800' },
  { name: 'background', kind: 'string', help: 'sample-free rectangle "x,y,w,h": fits compensator retardance, white balance and exposure' },
  { name: 'white-rgb', kind: 'string', help: 'white reference "R,G,B" (8-bit codes as stored) of a sample-free area with parallel polars: sets the white balance' },
  { name: 'sign', kind: 'string', help: 'birefringence of the structure: positive (length-slow) or negative (length-fast)', defaultText: 'positive' },
  { name: 'field-out', kind: 'string', help: 'write the field as a float TIFF (angleDeg, confidence, retardanceNm, mask)' },
];

export function trainFrom(a: ParsedArgs): Partial<OpticalTrain> {
  const pol = numberOpt(a, 'polariser-deg') ?? 0;
  const ill = stringOpt(a, 'illuminant');
  return {
    polariserDeg: pol, analyserDeg: pol + 90,
    compensator: fullWavePlate(numberOpt(a, 'compensator-nm') ?? 550, numberOpt(a, 'compensator-deg') ?? pol + 45),
    illuminant: ill ? parseIlluminant(ill) : undefined,
  };
}

export function signFrom(a: ParsedArgs): 1 | -1 {
  const s = stringOpt(a, 'sign') ?? 'positive';
  if (s !== 'positive' && s !== 'negative') throw new InputError(`--sign must be positive or negative, got "${s}"`);
  return s === 'positive' ? 1 : -1;
}

/** Camera white balance from --white-rgb, or undefined. */
export function whiteFrom(a: ParsedArgs): CameraCalibration | undefined {
  const t = stringOpt(a, 'white-rgb');
  if (!t) return undefined;
  const v = numberList(t, '--white-rgb');
  if (v.length !== 3 || v.some((x) => x < 0 || x > 255)) throw new InputError(`--white-rgb needs three 8-bit codes "R,G,B", got "${t}"`);
  return whiteReference([v[0] / 255, v[1] / 255, v[2] / 255], 'srgb');
}

/** Calibration fits the compensator only when --compensator-nm was not given. */
export function calibrationFrom(a: ParsedArgs) {
  return { fitCompensator: numberOpt(a, 'compensator-nm') === undefined };
}

/** Distribution of a field's confidence over its usable pixels. */
export function confidenceStats(f: OrientationField) {
  const v: number[] = [];
  for (let i = 0; i < f.confidence.length; i++) if (f.mask[i]) v.push(f.confidence[i]);
  v.sort((x, y) => x - y);
  const q = (p: number) => (v.length ? v[Math.min(v.length - 1, Math.floor(p * (v.length - 1)))] : null);
  return {
    mean: v.length ? v.reduce((s, x) => s + x, 0) / v.length : null, median: q(0.5), p10: q(0.1), p90: q(0.9),
    fractionAbove05: v.length ? v.filter((x) => x >= 0.5).length / v.length : null, n: v.length,
  };
}

/** Median retardance over usable pixels with confidence >= 0.5 (all usable pixels when none is). */
export function retardanceMedian(f: OrientationField): number | null {
  if (!f.retardanceNm) return null;
  const good: number[] = [], all: number[] = [];
  for (let i = 0; i < f.mask.length; i++) if (f.mask[i]) { all.push(f.retardanceNm[i]); if (f.confidence[i] >= 0.5) good.push(f.retardanceNm[i]); }
  const v = (good.length ? good : all).sort((x, y) => x - y);
  return v.length ? v[v.length >> 1] : null;
}

export interface OpticsResult extends Omit<OrientResult, 'analysis'> {
  analysis: string;
  retardanceNmMedian: number | null;
  confidence: ReturnType<typeof confidenceStats>;
  ambiguity: OrientationField['ambiguity'];
  extra: Record<string, unknown>;
  profile: ProfileResult | null;
}

/** The JSON of an optical reading: like orient (order parameters of the field), plus retardance and confidence. */
export async function opticsResult(analysis: string, img: Image, field: OrientationField, a: ParsedArgs, extra: Record<string, unknown>): Promise<OpticsResult> {
  const weighting = stringOpt(a, 'weighting');
  const s = orderParameters(field, { weighting: weighting ? checkWeighting(weighting) : undefined, axisDeg: numberOpt(a, 'axis-deg'), blockPx: numberOpt(a, 'block-px') });
  const base = orientResult(img, field, s, {});
  const profile = await channelProfileOutput(img, field, a, field.options);
  return {
    ...base, analysis, retardanceNmMedian: retardanceMedian(field), confidence: confidenceStats(field), ambiguity: field.ambiguity, extra, profile,
    warnings: [...base.warnings, ...(profile?.warnings ?? [])],
  };
}

export function opticsTable(r: OpticsResult): string {
  const c = r.confidence;
  const head = formatPairs([
    ['image', r.source],
    ['method', String(r.options.method)],
    ['director deg', r.directorDeg],
    ['S_2D (95% CI)', `${r.order2D.toFixed(3)} (${r.order2DCi[0].toFixed(3)}..${r.order2DCi[1].toFixed(3)})`],
    ...(r.axisOrder !== null ? [['S_axis', `${r.axisOrder.toFixed(3)} against ${r.axisDeg} deg`] as [string, string]] : []),
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
    image: r.source, method: String(r.options.method), directorDeg: r.directorDeg, order2D: r.order2D, order2DCiLow: r.order2DCi[0], order2DCiHigh: r.order2DCi[1],
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
    warnings: results.flatMap((r) => r.warnings.map((w) => `${r.source}: ${w}`)),
  };
}

export function calibrationJson(c: PlateCalibration | null) {
  return c && {
    compensatorNm: c.compensatorNm, gains: c.camera.gains, exposure: c.camera.exposure, whiteBalanceTilt: c.whiteBalanceTilt,
    residualDeltaE00: c.residualDeltaE00, fitted: c.fitted,
  };
}

/** One plate image read with the options given on the command line (shared with `profile --source plate`). */
export function readPlateFrom(img: Image, a: ParsedArgs) {
  const match = stringOpt(a, 'match') ?? 'lab';
  if (match !== 'lab' && match !== 'chroma') throw new InputError(`--match must be lab or chroma, got "${match}"`);
  const bg = stringOpt(a, 'background');
  return readPlate(img, {
    train: trainFrom(a), retardanceMaxNm: numberOpt(a, 'retardance-max-nm'), match: match as MatchSpace, birefringenceSign: signFrom(a),
    background: bg ? parseRect(bg) : undefined, calibration: calibrationFrom(a), referenceAxisDeg: numberOpt(a, 'axis-deg'), camera: whiteFrom(a),
  });
}

export const MATCH_OPTION: OptionSpec = { name: 'match', kind: 'string', help: 'lab, or chroma (brightness-independent, for uneven illumination)', defaultText: 'lab' };

export const plateCommand: Command = {
  name: 'plate',
  summary: 'orientation and retardance from one compensator (full-wave plate) colour image',
  usage: 'IMAGE... [--compensator-nm 550] [--compensator-deg 45] [--polariser-deg 0] [--illuminant 3200K|D65] [--retardance-max-nm 800] [--background "x,y,w,h"] [--field-out FILE.tif] [--json]',
  options: [
    ...PLATE_OPTIONS,
    MATCH_OPTION,
    { name: 'resolve-mirror', kind: 'flag', help: 'resolve theta vs its mirror image about the compensator axis with the texture direction' },
    ...CHANNEL_OPTIONS,
  ],
  async run(a) {
    if (a.positionals.length === 0) throw new InputError('no image given', 'Name one or more compensator images');
    const axisDeg = numberOpt(a, 'axis-deg');
    const train = trainFrom(a);
    const images = await loadImageFiles(a.positionals);
    const fieldOut = stringOpt(a, 'field-out');
    const results: OpticsResult[] = [];
    for (const img of images) {
      const reading = readPlateFrom(img, a);
      let field = reading.field;
      let resolvedFraction: number | null = null;
      if (flagOpt(a, 'resolve-mirror')) {
        const texture = await orientationField(toGrey(img));
        const r = resolveMirrorWithTexture(field, texture);
        field = r.field;
        resolvedFraction = r.resolvedFraction;
      }
      const compDeg = train.compensator!.axisDeg;
      const advice = compensatorAxisAdvice(axisDeg ?? compDeg, compDeg);
      const mirror = axisDeg !== undefined ? mirrorChoiceStats(field, axisDeg) : null;
      if (axisDeg !== undefined && !advice.exact && field.ambiguity !== 'none') field.warnings.push(advice.text);
      if (fieldOut) await writeFieldTiff(fieldOutPath(fieldOut, img.source.name, images.length), field, `retarda plate ${img.source.name}`);
      results.push(await opticsResult('plate', img, field, a, {
        calibration: calibrationJson(reading.calibration), mirrorAssumption: field.options.mirrorAssumption,
        mirrorChoiceMatteredFraction: mirror?.mattersFraction ?? null, mirrorResolvedFraction: resolvedFraction, advice: advice.text,
        colourCellsSearched: reading.cellsMatched,
      }));
    }
    return opticsOutput('plate', results);
  },
};
