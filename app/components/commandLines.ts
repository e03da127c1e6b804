/**
 * The `retarda` command lines that give the same numbers as the optical, fibre and calibration panels,
 * built from the same settings the panels send to the worker (only options that differ from the
 * command line's defaults are written out, except where being explicit helps the reader).
 */
import type { FibreNumbersRequest, PlateOptions, PlateReadingOptions, TrainOptions } from '../../src/analyses/index.ts';

/** The one-image reading's known sample retardance (src/analyses KnownRetardanceOptions). */
export type KnownRetardance = Pick<PlateOptions, 'sampleRetardanceNm' | 'sampleRetardanceToleranceNm'>;
import type { ProfileRequest } from '../../src/analyses/index.ts';
import { rectText } from '../../src/common/index.ts';

/** A file name as a shell word. */
export const quote = (s: string) => (/^[\w.\-/]+$/.test(s) ? s : `"${s.replace(/"/g, '\\"')}"`);
const opt = (name: string, v: number | string | undefined | null) => (v === undefined || v === null || v === '' ? [] : [`--${name} ${typeof v === 'string' ? quote(v) : v}`]);

/** The train options; values equal to the command line's defaults (polariser 0, compensator at +45 from it, 3200 K) are left out. */
export function trainArgs(o: TrainOptions): string[] {
  const pol = o.polariserDeg ?? 0;
  return [
    ...opt('compensator-nm', o.compensatorNm), ...(o.compensatorDeg !== undefined && o.compensatorDeg !== pol + 45 ? opt('compensator-deg', o.compensatorDeg) : []),
    ...(pol !== 0 ? opt('polariser-deg', pol) : []), ...(o.illuminant && o.illuminant !== '3200K' ? opt('illuminant', o.illuminant) : []),
  ];
}

export function plateReadingArgs(o: PlateReadingOptions): string[] {
  return [
    ...trainArgs(o), ...(o.retardanceMaxNm !== undefined && o.retardanceMaxNm !== 800 ? opt('retardance-max-nm', o.retardanceMaxNm) : []),
    ...(o.sampleFree ? [`--sample-free ${rectText(o.sampleFree)}`] : []),
    ...(o.whiteRgb ? [`--white-rgb ${o.whiteRgb.join(',')}`] : []), ...(o.sign && o.sign !== 'positive' ? [`--sign ${o.sign}`] : []),
  ];
}

/** A one-image reading's known sample retardance (`retarda plate` and `profile --source plate`). */
export function knownRetardanceArgs(o: KnownRetardance): string[] {
  return [...opt('sample-retardance-nm', o.sampleRetardanceNm), ...opt('sample-retardance-tolerance-nm', o.sampleRetardanceToleranceNm)];
}

/** Channel options of a profile request (walls as "x1,y1,x2,y2;x3,y3,x4,y4" text, or found). */
export function channelArgs(r: ProfileRequest, wallsText: string | null): string[] {
  return [
    wallsText ? `--walls "${wallsText}"` : '--auto-walls', ...opt('bins', r.bins), ...opt('stations', r.stations), ...opt('axis-deg', r.axisDeg),
    ...opt('core-max', r.coreMax), ...opt('skin-min', r.skinMin), ...opt('weighting', r.weighting),
  ];
}

export const commandLine = (name: string, files: string[], args: string[]) => ['retarda', name, ...files.map(quote), ...args].join(' ');

export function fibreArgs(r: FibreNumbersRequest): string[] {
  const ld = r.linearDensity ? [`--linear-density-${r.linearDensity.unit} ${r.linearDensity.value}`] : [];
  const tenacityName = { 'N/tex': 'n-per-tex', 'cN/dtex': 'cn-per-dtex', 'gf/den': 'gf-per-den' } as const;
  const ten = r.tenacity ? [`--tenacity-${tenacityName[r.tenacity.unit]} ${r.tenacity.value}`] : [];
  const u = r.uncertainties ?? {};
  return [
    `--diameter-um ${r.diameterUm}`, ...opt('diameter-uncertainty-um', u.diameterUm), ...opt('diameter-dof', u.diameterDof),
    `--density ${r.densityGPerCm3}`, ...opt('density-uncertainty', u.densityGPerCm3),
    ...ld, ...opt('linear-density-uncertainty', u.linearDensity), ...ten, ...opt('tenacity-uncertainty', u.tenacity),
    ...opt('strength-gpa', r.strengthGPa), ...opt('strength-uncertainty-gpa', u.strengthGPa),
    ...opt('retardance-nm', r.retardanceNm), ...opt('retardance-uncertainty-nm', u.retardanceNm),
    ...opt('thickness-um', r.thicknessUm), ...opt('thickness-uncertainty-um', u.thicknessUm),
    ...opt('intrinsic-birefringence', r.intrinsicBirefringence), ...opt('intrinsic-birefringence-uncertainty', u.intrinsicBirefringence),
  ];
}

/** The calibrate options of the micrometer panel: the division, its tolerance when given, a polarity other than auto, the NA when given. */
export function micrometerArgs(o: { divisionUm: number; divisionToleranceUm?: number; polarity?: string; na?: number }): string[] {
  return [
    `--division-um ${o.divisionUm}`, ...(o.divisionToleranceUm ? [`--division-tolerance-um ${o.divisionToleranceUm}`] : []),
    ...(o.polarity && o.polarity !== 'auto' ? [`--polarity ${o.polarity}`] : []), ...opt('na', o.na),
  ];
}
