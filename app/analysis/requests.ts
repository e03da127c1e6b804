/**
 * Plain data from the app's forms: what each analysis is asked (the options the worker gets) and the `retarda`
 * command line shown with its result, both derived from the same request, so the shown line gives the same numbers
 * (tests/cli/round-trip.test.ts parses every one back). No React and no worker here.
 */
import type {
  AngleSeriesAnalysisOptions, DiameterAnalysisOptions, FibreNumbersRequest, LinearDensityUnit, MicrometerAnalysisOptions,
  OrientOptions, PlateOptions, PlatePairAnalysisOptions, ProfileRequest, ReadingKind, TenacityUnit,
} from '../../src/analyses/index.ts';
import type { Channel } from '../../src/channel/index.ts';
import { parseRect, type Rect } from '../../src/common/index.ts';
import {
  angleSeriesArgs, commandLine, diameterArgs, fibreArgs, micrometerArgs, numberListText, orientArgs, plateArgs, platePairArgs, profileArgs,
  type AngleSeriesSettings, type PlateSourceOptions,
} from '../../src/options/index.ts';
import type { AnalysisSettings, DiameterForm, OpticalForm } from '../storage/records.ts';

/** A number typed in a form: blank = the analysis's default (undefined); otherwise a finite number, or an error naming the field. */
export function formNumber(text: string, what: string): number | undefined {
  if (text.trim() === '') return undefined;
  const v = Number(text);
  if (!Number.isFinite(v)) throw new Error(`${what}: "${text}" is not a number`);
  return v;
}

/** A rectangle typed in a form: blank = none; otherwise parsed as the command line parses it. */
export const formRect = (text: string, what: string): Rect | undefined => (text.trim() === '' ? undefined : parseRect(text.trim(), what));

/** The texture orientation analysis the settings ask for (`retarda orient`). */
export function orientOptionsOf(s: Pick<AnalysisSettings, 'sigmaPx' | 'weighting' | 'axisDeg'>): OrientOptions {
  return { sigmaPx: s.sigmaPx, weighting: s.weighting, ...(s.axisDeg !== null ? { axisDeg: s.axisDeg } : {}) };
}

/** `retarda orient` for one image with these options. */
export const orientCommandLine = (name: string, o: OrientOptions): string => commandLine('orient', [name, ...orientArgs(o)]);

/**
 * The channel profile the settings ask for, on the walls drawn (or, when they were found, found again). An optical
 * reading's profile keeps the reading's own default weighting (none), so the texture's pixel-weights setting is not sent.
 */
export function profileRequestOf(s: AnalysisSettings, walls: Channel, wallsFound: boolean, texture: boolean): ProfileRequest {
  return {
    ...(wallsFound ? { autoWalls: true } : { channel: walls }), bins: s.bins, stations: s.stations, coreMax: s.coreMax, skinMin: s.skinMin,
    ...(texture ? { weighting: s.weighting } : {}),
  };
}

/** `retarda profile` on the texture field with these options. */
export const textureProfileCommandLine = (name: string, texture: OrientOptions, request: ProfileRequest): string =>
  commandLine('profile', [name, ...profileArgs({ kind: 'texture', texture: { sigmaPx: texture.sigmaPx } }, request)]);

/** An optical reading as asked: its kind, the images by key and by name, and the options the worker gets. */
export type OpticalRequest =
  | { kind: 'plate'; keys: [string]; names: [string]; options: PlateOptions }
  | { kind: 'plate-pair'; keys: [string, string]; names: [string, string]; options: PlatePairAnalysisOptions }
  | { kind: 'angle-series'; keys: string[]; names: string[]; plateKey?: string; plateName?: string; options: AngleSeriesSettings & Pick<AngleSeriesAnalysisOptions, 'anglesDeg'> };

/**
 * A compensator image that goes with a set of angle images (a demo's, app/build/demoImages.ts): the files by name,
 * and the compensator image's sample-free area as typed ("x,y,w,h").
 */
export interface PlateSuggestion { angles: string[]; plate: string; sampleFree?: string }

/** The angle-series form's compensator image when "none" was chosen (blank: not chosen yet, a suggestion may apply). */
export const NO_PLATE = 'none';

/**
 * The images of the session, and the one shown (the reading's first image); `plates`, the compensator images that go
 * with sets of angle images.
 */
export interface ImageChoice { images: { id: string; name: string }[]; activeId: string; plates?: PlateSuggestion[] }

/** The one-image reading's sample retardance; a tolerance alone is refused as the command line refuses it. */
function knownOf(f: OpticalForm) {
  const sampleRetardanceNm = formNumber(f.sampleRetardanceNm, 'Sample retardance');
  const sampleRetardanceToleranceNm = formNumber(f.sampleRetardanceToleranceNm, 'Sample retardance tolerance');
  if (sampleRetardanceNm === undefined && sampleRetardanceToleranceNm !== undefined) throw new Error('Sample retardance: give the retardance with its tolerance');
  return { sampleRetardanceNm, sampleRetardanceToleranceNm };
}

const trainOf = (f: OpticalForm) => ({
  compensatorNm: formNumber(f.compensatorNm, 'Compensator retardance'), compensatorDeg: formNumber(f.compensatorDeg, 'Compensator slow axis'),
  polariserDeg: formNumber(f.polariserDeg, 'Polariser'), illuminant: f.illuminant || undefined,
});

const readingOf = (f: OpticalForm) => ({
  ...trainOf(f), retardanceMaxNm: formNumber(f.retardanceMaxNm, 'Largest retardance'), sampleFree: formRect(f.background, 'Sample-free area'), sign: f.sign,
});

/**
 * The images of a reading as the form chooses them: until chosen, the images after the shown one in the session's
 * list (how a set brought in together is ordered); and the angle series' compensator image with its sample-free area:
 * until one (or "none", NO_PLATE) is chosen, the one a suggestion (`c.plates`) names for the angle images chosen, when
 * it is in the session.
 */
export function opticalImages(f: OpticalForm, c: ImageChoice): { imageB: string; angleKeys: string[]; plateKey: string; plateSampleFree: string } {
  const after = c.images.slice(c.images.findIndex((i) => i.id === c.activeId) + 1);
  const angleKeys = f.quadImages.map((id, k) => id || (k === 0 ? c.activeId : after[k - 1]?.id ?? ''));
  const chosen = { plateKey: f.quadPlate === NO_PLATE ? '' : f.quadPlate, plateSampleFree: f.quadPlateBackground };
  const names = angleKeys.map((id) => c.images.find((i) => i.id === id)?.name);
  const suggested = f.quadPlate ? undefined : c.plates?.find((p) => p.angles.length === names.length && p.angles.every((a, k) => a === names[k]));
  const plateId = suggested && c.images.find((i) => i.name === suggested.plate)?.id;
  return {
    imageB: f.imageB || after[0]?.id || '',
    angleKeys,
    ...(plateId ? { plateKey: plateId, plateSampleFree: suggested.sampleFree ?? '' } : chosen),
  };
}

/** The reading the optical form asks for. @throws Error naming the field that is wrong or missing */
export function opticalRequestOf(kind: ReadingKind, f: OpticalForm, c: ImageChoice): OpticalRequest {
  const nameOf = (id: string) => c.images.find((i) => i.id === id)?.name ?? '';
  const active = c.activeId;
  const axisDeg = formNumber(f.axisDeg, 'Reference axis');
  const summary = axisDeg === undefined ? {} : { axisDeg };
  const { imageB, angleKeys, plateKey, plateSampleFree } = opticalImages(f, c);
  if (kind === 'plate') {
    const options: PlateOptions = { ...readingOf(f), ...knownOf(f), ...summary, match: f.match, resolveMirror: f.resolveMirror || undefined };
    return { kind, keys: [active], names: [nameOf(active)], options };
  }
  if (kind === 'plate-pair') {
    if (!imageB) throw new Error('Choose the second image (the one taken with the optics turned by 45°)');
    return { kind, keys: [active, imageB], names: [nameOf(active), nameOf(imageB)], options: { ...readingOf(f), ...summary, turnDeg: formNumber(f.turnDeg, 'Turn') } };
  }
  if (angleKeys.some((k) => !k)) throw new Error('Choose an image for every angle');
  const anglesDeg = f.quadAngles.map((a, k) => formNumber(a, `Angle ${k + 1}`) ?? NaN);
  if (anglesDeg.some((a) => !Number.isFinite(a))) throw new Error('Give an angle for every image');
  return {
    kind, keys: angleKeys, names: angleKeys.map(nameOf), ...(plateKey ? { plateKey, plateName: nameOf(plateKey) } : {}),
    options: { ...trainOf(f), ...summary, anglesDeg, plateSampleFree: formRect(plateSampleFree, 'Sample-free area of the compensator image') },
  };
}

/** The compensator image read for a channel profile (`retarda profile --source plate`): the plate reading's options without the field summary. */
export function plateSourceOf(o: PlateOptions): PlateSourceOptions {
  return {
    compensatorNm: o.compensatorNm, compensatorDeg: o.compensatorDeg, polariserDeg: o.polariserDeg, illuminant: o.illuminant,
    retardanceMaxNm: o.retardanceMaxNm, retardanceMinNm: o.retardanceMinNm, sampleFree: o.sampleFree, whiteRgb: o.whiteRgb, sign: o.sign,
    sampleRetardanceNm: o.sampleRetardanceNm, sampleRetardanceToleranceNm: o.sampleRetardanceToleranceNm, match: o.match,
  };
}

/**
 * The reading's options with a channel profile on its field. The command line reads one --axis-deg for the field and
 * the profile alike, so the field takes the profile's axis (none: the channel's own axis, for both).
 */
export function withProfile<T extends { axisDeg?: number }>(options: T, request: ProfileRequest): T & { profile: ProfileRequest } {
  const { axisDeg: _fieldAxis, ...rest } = options;
  void _fieldAxis;
  return { ...rest, ...(request.axisDeg !== undefined ? { axisDeg: request.axisDeg } : {}), profile: request } as T & { profile: ProfileRequest };
}

/**
 * The command line of a reading, and of a channel profile on its field when `profile` is given: `retarda profile
 * --source plate` for one compensator image, the reading's own command with the channel options for the others.
 */
export function opticalCommandLine(r: OpticalRequest, profile?: ProfileRequest): string {
  if (r.kind === 'plate') {
    if (profile) return commandLine('profile', [...r.names, ...profileArgs({ kind: 'plate', plate: plateSourceOf(r.options) }, profile)]);
    return commandLine('plate', [...r.names, ...plateArgs({ ...r.options, profile: null })]);
  }
  if (r.kind === 'plate-pair') return commandLine('plate-pair', [...r.names, ...platePairArgs(profile ? withProfile(r.options, profile) : r.options)]);
  return commandLine('angle-series', [...r.names, ...angleSeriesArgs(profile ? withProfile(r.options, profile) : r.options, { plate: r.plateName })]);
}

/** The angles of an angle series as the form keeps them. */
export const anglesText = (anglesDeg: readonly number[]): string[] => numberListText(anglesDeg).split(',');

/**
 * The diameters the form asks for: the pixel size typed, else the session's; its relative uncertainty typed in %,
 * else (only with the session's size) the calibration's.
 * @throws Error naming the field that is wrong
 */
export function diameterOptionsOf(f: DiameterForm, uncertaintyPct: string, session: { umPerPx?: number; uncertainty?: number | null }): DiameterAnalysisOptions {
  const typed = formNumber(f.umPerPx, 'Pixel size');
  const typedPct = formNumber(uncertaintyPct, 'Pixel size uncertainty');
  const umPerPx = typed ?? session.umPerPx;
  const relU = typedPct !== undefined ? typedPct / 100 : typed === undefined ? session.uncertainty ?? undefined : undefined;
  if (relU !== undefined && umPerPx === undefined) throw new Error('Pixel size uncertainty: give the pixel size too');
  return {
    pixelSizeUmPerPx: umPerPx, pixelSizeUncertainty: relU, stepPx: formNumber(f.stepPx, 'Station step'), averagePx: formNumber(f.averagePx, 'Averaged length'),
    polarity: f.polarity, shadingDegree: formNumber(f.backgroundDegree, 'Shading'),
  };
}

/** `retarda diameter` for one image with these options. */
export const diameterCommandLine = (name: string, o: DiameterAnalysisOptions): string => commandLine('diameter', [name, ...diameterArgs(o)]);

/** The micrometer form as typed. */
export interface MicrometerForm { divisionUm: string; toleranceUm: string; polarity: string; na: string }

/** The calibration the micrometer form asks for. @throws Error naming the field that is wrong or missing */
export function micrometerOptionsOf(f: MicrometerForm): MicrometerAnalysisOptions {
  const divisionUm = formNumber(f.divisionUm, 'Division spacing');
  if (divisionUm === undefined) throw new Error('Give the spacing of one micrometer division (10 µm for 1 mm in 100)');
  if (f.polarity !== 'auto' && f.polarity !== 'dark' && f.polarity !== 'bright') throw new Error(`Ruler lines: "${f.polarity}" is not dark, bright or auto`);
  return { divisionUm, divisionToleranceUm: formNumber(f.toleranceUm, 'Division tolerance'), polarity: f.polarity, na: formNumber(f.na, 'Numerical aperture') };
}

/** `retarda calibrate` for one micrometer image with these options. */
export const micrometerCommandLine = (name: string, o: MicrometerAnalysisOptions): string => commandLine('calibrate', [name, ...micrometerArgs(o)]);

/** The fibre-numbers form as typed: values and their standard uncertainties (k = 1, in the value's unit). */
export interface FibreNumbersForm {
  diameterUm: string; density: string; linearDensity: string; linearDensityUnit: LinearDensityUnit; tenacity: string; tenacityUnit: TenacityUnit;
  strengthGPa: string; retardanceNm: string; thicknessUm: string; intrinsic: string;
  uDiameterUm: string; diameterDof: string; uDensity: string; uLinearDensity: string; uTenacity: string; uStrengthGPa: string;
  uRetardanceNm: string; uThicknessUm: string; uIntrinsic: string;
}

/** The fibre numbers the form asks for. @throws Error naming the field that is wrong or missing */
export function fibreRequestOf(f: FibreNumbersForm): FibreNumbersRequest {
  const diameterUm = formNumber(f.diameterUm, 'Diameter'), density = formNumber(f.density, 'Density');
  if (diameterUm === undefined || density === undefined) throw new Error('Give at least the diameter and the density of the solid material');
  const ld = formNumber(f.linearDensity, 'Linear density'), ten = formNumber(f.tenacity, 'Tenacity');
  const uncertainties = {
    diameterUm: formNumber(f.uDiameterUm, 'Diameter uncertainty'), diameterDof: formNumber(f.diameterDof, 'Diameter degrees of freedom'),
    densityGPerCm3: formNumber(f.uDensity, 'Density uncertainty'), linearDensity: formNumber(f.uLinearDensity, 'Linear density uncertainty'),
    tenacity: formNumber(f.uTenacity, 'Tenacity uncertainty'), strengthGPa: formNumber(f.uStrengthGPa, 'Tensile strength uncertainty'),
    retardanceNm: formNumber(f.uRetardanceNm, 'Retardance uncertainty'), thicknessUm: formNumber(f.uThicknessUm, 'Optical path uncertainty'),
    intrinsicBirefringence: formNumber(f.uIntrinsic, 'Intrinsic birefringence uncertainty'),
  };
  return {
    diameterUm, densityGPerCm3: density,
    linearDensity: ld === undefined ? undefined : { value: ld, unit: f.linearDensityUnit },
    tenacity: ten === undefined ? undefined : { value: ten, unit: f.tenacityUnit },
    strengthGPa: formNumber(f.strengthGPa, 'Tensile strength'), retardanceNm: formNumber(f.retardanceNm, 'Retardance'),
    thicknessUm: formNumber(f.thicknessUm, 'Optical path'), intrinsicBirefringence: formNumber(f.intrinsic, 'Intrinsic birefringence'),
    ...(Object.values(uncertainties).some((v) => v !== undefined) ? { uncertainties } : {}),
  };
}

/** `retarda fibre` with this request. */
export const fibreCommandLine = (r: FibreNumbersRequest): string => commandLine('fibre', fibreArgs(r));
