/**
 * The optical readings' commands (README, "Glossary"): `retarda plate` (plate reading), `plate-pair`, `angle-series`,
 * the compensator part of `profile --source plate`, and the train of `chart`, with their words.
 */
import { rectText } from '../common/index.ts';
import {
  COMPENSATOR_OFFSET_DEG, DEFAULT_ANGLES_DEG, DEFAULT_ILLUMINANT, OPTICS_LIMITS,
  type AngleSeriesAnalysisOptions, type OpticsSummaryOptions, type PlateOptions, type PlatePairAnalysisOptions,
  type PlateReadingOptions, type TrainOptions,
} from '../analyses/index.ts';
import { CHANNEL_OPTIONS, OPTICAL_DEFAULT_WEIGHTING, channelArgs } from './channel.ts';
import { flagArg, limitArg, numberListText, valueArg, type OptionSpec } from './spec.ts';

/** The optical train, shared by plate, plate-pair, angle-series (its --plate image) and chart. */
export const TRAIN_OPTIONS: OptionSpec[] = [
  { name: 'compensator-nm', kind: 'number', help: 'full-wave compensator retardance, nm (fitted from --sample-free unless given)', limit: OPTICS_LIMITS.compensatorNm },
  { name: 'compensator-deg', kind: 'number', help: 'compensator slow-axis angle, degrees CCW from +x', limit: OPTICS_LIMITS.compensatorDeg, defaultText: `the polariser's + ${COMPENSATOR_OFFSET_DEG}` },
  { name: 'polariser-deg', kind: 'number', help: 'polariser angle, degrees CCW from +x (analyser crossed)', limit: OPTICS_LIMITS.polariserDeg },
  { name: 'illuminant', kind: 'string', help: 'lamp: a colour temperature such as 3200K (a blackbody), or D65, or A', defaultText: DEFAULT_ILLUMINANT },
];

/** One image of a sample of known retardance (plate, profile --source plate): the reading keeps to that band. */
export const KNOWN_RETARDANCE_OPTIONS: OptionSpec[] = [
  { name: 'sample-retardance-nm', kind: 'number', help: 'one image: known sample retardance (e.g. thickness x birefringence), nm; each colour then fixes the angle', limit: OPTICS_LIMITS.sampleRetardanceNm },
  { name: 'sample-retardance-tolerance-nm', kind: 'number', help: 'one image: half-width of the known-retardance band, nm', limit: OPTICS_LIMITS.sampleRetardanceToleranceNm, defaultText: '10 % of the retardance' },
];

/** Options of the compensator-image readers (the known-retardance ones are for one image: plate-pair leaves them out). */
export const PLATE_READING_OPTIONS: OptionSpec[] = [
  ...TRAIN_OPTIONS,
  { name: 'retardance-max-nm', kind: 'number', help: 'largest sample retardance searched, nm', limit: OPTICS_LIMITS.retardanceMaxNm },
  { name: 'retardance-min-nm', kind: 'number', help: 'mask pixels read below this retardance as sample-free, nm', limit: OPTICS_LIMITS.retardanceMinNm },
  { name: 'sample-free', formerName: 'background', kind: 'string', help: 'sample-free area "x,y,w,h": fits compensator retardance, white balance and exposure' },
  { name: 'white-rgb', kind: 'string', help: 'white reference "R,G,B" (8-bit codes as stored) of a sample-free area with parallel polarisers: sets the white balance' },
  { name: 'sign', kind: 'string', help: 'birefringence of the structure: positive (length-slow) or negative (length-fast)', defaultText: 'positive' },
  { name: 'field-out', kind: 'string', help: 'write the field as a float TIFF (angleDeg, confidence, retardanceNm, mask)' },
];

export const MATCH_OPTION: OptionSpec = { name: 'match', kind: 'string', help: 'lab, or chroma (brightness-independent, for uneven illumination)', defaultText: 'lab' };

/** Options of `retarda plate`. */
export const PLATE_OPTIONS: OptionSpec[] = [
  ...PLATE_READING_OPTIONS,
  ...KNOWN_RETARDANCE_OPTIONS,
  MATCH_OPTION,
  { name: 'resolve-mirror', kind: 'flag', help: 'resolve theta vs its mirror image about the compensator axis with the texture direction' },
  ...CHANNEL_OPTIONS,
];

/** Options of `retarda plate-pair`. */
export const PLATE_PAIR_OPTIONS: OptionSpec[] = [
  ...PLATE_READING_OPTIONS,
  { name: 'turn-deg', kind: 'number', help: 'turn of the polariser-compensator-analyser assembly for image B (sample turned the other way)', limit: OPTICS_LIMITS.turnDeg },
  { name: 'max-shift-px', kind: 'number', help: 'warn when the images are shifted against each other by more than this', limit: OPTICS_LIMITS.maxShiftPx },
  ...CHANNEL_OPTIONS,
];

/** Options of `retarda angle-series`. */
export const ANGLE_SERIES_OPTIONS: OptionSpec[] = [
  { name: 'angles', kind: 'string', help: 'angles of the crossed polarisers for the images, degrees, one per image', defaultText: numberListText(DEFAULT_ANGLES_DEG) },
  { name: 'plate', kind: 'string', help: 'compensator image that decides the 90-deg choice (its train: the options below)' },
  { name: 'plate-sample-free', formerName: 'plate-background', kind: 'string', help: 'sample-free area "x,y,w,h" of the compensator image: calibrates it for the 90-deg choice (without it no order number is given)' },
  { name: 'flat', kind: 'string', help: 'open-beam or blank-slide image for flat-field division' },
  { name: 'dark', kind: 'string', help: 'dark image subtracted first' },
  { name: 'amplitude-floor', kind: 'number', help: 'mask pixels below this fraction of the 99th-percentile amplitude', limit: OPTICS_LIMITS.amplitudeFloor },
  { name: 'field-out', kind: 'string', help: 'write the field as a float TIFF (angleDeg, confidence, mask)' },
  ...TRAIN_OPTIONS,
  ...CHANNEL_OPTIONS,
];

/** The train as words; a compensator axis at the polariser's + 45 deg and the default lamp are left out. */
export function trainArgs(o: TrainOptions): string[] {
  const pol = o.polariserDeg ?? OPTICS_LIMITS.polariserDeg.default;
  return [
    ...valueArg('compensator-nm', o.compensatorNm), ...valueArg('compensator-deg', o.compensatorDeg, pol + COMPENSATOR_OFFSET_DEG),
    ...limitArg('polariser-deg', OPTICS_LIMITS.polariserDeg, o.polariserDeg), ...valueArg('illuminant', o.illuminant, DEFAULT_ILLUMINANT),
  ];
}

/**
 * A compensator reading's options as words. The compensator retardance is written whenever it is given, even at
 * 550 nm: without it, it is fitted from the sample-free area.
 */
export function plateReadingArgs(o: PlateReadingOptions): string[] {
  return [
    ...trainArgs(o), ...limitArg('retardance-max-nm', OPTICS_LIMITS.retardanceMaxNm, o.retardanceMaxNm),
    ...limitArg('retardance-min-nm', OPTICS_LIMITS.retardanceMinNm, o.retardanceMinNm),
    ...(o.sampleFree ? ['--sample-free', rectText(o.sampleFree)] : []), ...(o.whiteRgb ? ['--white-rgb', o.whiteRgb.join(',')] : []),
    ...valueArg('sign', o.sign, 'positive'),
  ];
}

/** A one-image reading's known sample retardance as words. */
export function knownRetardanceArgs(o: Pick<PlateOptions, 'sampleRetardanceNm' | 'sampleRetardanceToleranceNm'>): string[] {
  return [...valueArg('sample-retardance-nm', o.sampleRetardanceNm), ...valueArg('sample-retardance-tolerance-nm', o.sampleRetardanceToleranceNm)];
}

/**
 * The whole field's order options (axis, weighting, block side, written once) and its channel profile as words. The
 * profile request takes the same axis, weighting and block side as the field when it is parsed back.
 */
export function summaryArgs(o: OpticsSummaryOptions): string[] {
  return [
    ...valueArg('axis-deg', o.axisDeg), ...valueArg('weighting', o.weighting, OPTICAL_DEFAULT_WEIGHTING), ...valueArg('block-px', o.blockPx),
    ...(o.profile ? channelArgs(o.profile, false, false) : []),
  ];
}

/** `retarda plate`'s options as words, without the image names. */
export function plateArgs(o: PlateOptions): string[] {
  return [
    ...plateReadingArgs(o), ...knownRetardanceArgs(o), ...valueArg('match', o.match, 'lab'), ...flagArg('resolve-mirror', o.resolveMirror),
    ...summaryArgs(o),
  ];
}

/** `retarda plate-pair`'s options as words, without the image names. */
export function platePairArgs(o: PlatePairAnalysisOptions): string[] {
  return [
    ...plateReadingArgs(o), ...limitArg('turn-deg', OPTICS_LIMITS.turnDeg, o.turnDeg), ...limitArg('max-shift-px', OPTICS_LIMITS.maxShiftPx, o.maxShiftPx),
    ...summaryArgs(o),
  ];
}

/** An angle series' settings without its images, which are named by file. */
export type AngleSeriesSettings = Omit<AngleSeriesAnalysisOptions, 'plate' | 'flatField' | 'dark'>;

/** The files an angle series reads besides its images, by name. */
export interface AngleSeriesFiles { plate?: string; flat?: string; dark?: string }

/** `retarda angle-series`'s options as words, without the image names. */
export function angleSeriesArgs(o: AngleSeriesSettings, files: AngleSeriesFiles = {}): string[] {
  const angles = o.anglesDeg && numberListText(o.anglesDeg) !== numberListText(DEFAULT_ANGLES_DEG) ? ['--angles', numberListText(o.anglesDeg)] : [];
  return [
    ...angles, ...valueArg('plate', files.plate), ...(o.plateSampleFree ? ['--plate-sample-free', rectText(o.plateSampleFree)] : []),
    ...valueArg('flat', files.flat), ...valueArg('dark', files.dark), ...limitArg('amplitude-floor', OPTICS_LIMITS.amplitudeFloor, o.amplitudeFloor),
    ...trainArgs(o), ...summaryArgs(o),
  ];
}
