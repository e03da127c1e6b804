/** `retarda diameter`, `calibrate` and `fibre`: lengths, the pixel size and the fibre numbers, with their words. */
import { DIAMETER_LIMITS } from '../fibre/index.ts';
import { MICROMETER_OPTION_LIMITS } from '../calibrate/index.ts';
import type { DiameterAnalysisOptions, FibreNumbersRequest, MicrometerAnalysisOptions, TenacityUnit } from '../analyses/index.ts';
import { limitArg, valueArg, type OptionSpec } from './spec.ts';

/** Options of `retarda diameter`. */
export const DIAMETER_OPTIONS: OptionSpec[] = [
  { name: 'um-per-px', kind: 'number', help: 'pixel size in the object, um/px (overrides the file\'s resolution tags)', limit: DIAMETER_LIMITS.pixelSizeUmPerPx },
  {
    name: 'um-per-px-uncertainty', kind: 'number', limit: DIAMETER_LIMITS.pixelSizeUncertainty,
    help: 'relative standard uncertainty (k = 1) of the pixel size, e.g. 0.002, as `calibrate` gives it (`uncertainty`); enters the um intervals',
  },
  { name: 'step-px', kind: 'number', help: 'distance between stations along the fibre, px', limit: DIAMETER_LIMITS.stepPx },
  { name: 'average-px', kind: 'number', help: 'length along the fibre each profile is averaged over, px', limit: DIAMETER_LIMITS.averageLengthPx },
  { name: 'polarity', kind: 'string', help: 'fibre darker (dark) or brighter (bright) than the background', defaultText: 'auto' },
  { name: 'shading-degree', formerName: 'background-degree', kind: 'number', help: 'shading: degree of the surface of the uneven lamp field removed first (0 = a flat level)', limit: DIAMETER_LIMITS.shadingDegree },
];

/** `retarda diameter`'s options as words, without the image names. */
export function diameterArgs(o: DiameterAnalysisOptions): string[] {
  return [
    ...valueArg('um-per-px', o.pixelSizeUmPerPx), ...valueArg('um-per-px-uncertainty', o.pixelSizeUncertainty),
    ...limitArg('step-px', DIAMETER_LIMITS.stepPx, o.stepPx), ...limitArg('average-px', DIAMETER_LIMITS.averageLengthPx, o.averagePx),
    ...valueArg('polarity', o.polarity, 'auto'), ...limitArg('shading-degree', DIAMETER_LIMITS.shadingDegree, o.shadingDegree),
  ];
}

/** Options of `retarda calibrate`. */
export const CALIBRATE_OPTIONS: OptionSpec[] = [
  { name: 'division-um', kind: 'number', help: 'spacing of one micrometer division, um (1 mm / 100 = 10)', limit: MICROMETER_OPTION_LIMITS.divisionUm },
  {
    name: 'division-tolerance-um', kind: 'number', limit: MICROMETER_OPTION_LIMITS.divisionToleranceUm, defaultText: '0: not included',
    help: 'tolerance of one division, +-um, as the micrometer\'s certificate states it; added to the uncertainty as a ' +
      'rectangular distribution (u = T / sqrt 3), at most half a division. A tolerance stated over the whole scale: divide it by the number of divisions',
  },
  { name: 'polarity', kind: 'string', help: 'ruler lines dark or bright', defaultText: 'auto' },
  { name: 'camera-pixel-um', kind: 'number', help: 'camera sensor pixel pitch, um (optics mode or cross-check)' },
  { name: 'objective-mag', kind: 'number', help: 'objective magnification' },
  { name: 'adapter-mag', kind: 'number', help: 'camera adapter / intermediate lens magnification', defaultText: '1' },
  { name: 'binning', kind: 'number', help: 'camera binning', defaultText: '1' },
  { name: 'na', kind: 'number', help: 'objective numerical aperture, for a sampling check' },
  { name: 'wavelength-nm', kind: 'number', help: 'wavelength for the sampling check, nm', limit: MICROMETER_OPTION_LIMITS.wavelengthNm },
];

/**
 * A micrometer calibration's options as words, without the image names (the optics' cross-check, `opticsUmPerPx`,
 * comes from --camera-pixel-um and --objective-mag, which the app does not give).
 */
export function micrometerArgs(o: Omit<MicrometerAnalysisOptions, 'opticsUmPerPx'>): string[] {
  return [
    ...valueArg('division-um', o.divisionUm), ...limitArg('division-tolerance-um', MICROMETER_OPTION_LIMITS.divisionToleranceUm, o.divisionToleranceUm),
    ...valueArg('polarity', o.polarity, 'auto'), ...valueArg('na', o.na), ...limitArg('wavelength-nm', MICROMETER_OPTION_LIMITS.wavelengthNm, o.wavelengthNm),
  ];
}

/** The option names of the tenacity in each unit. */
export const TENACITY_OPTION: Record<TenacityUnit, string> = { 'N/tex': 'tenacity-n-per-tex', 'cN/dtex': 'tenacity-cn-per-dtex', 'gf/den': 'tenacity-gf-per-den' };

/** Options of `retarda fibre`. */
export const FIBRE_OPTIONS: OptionSpec[] = [
  { name: 'diameter-um', kind: 'number', help: 'fibre diameter, um' },
  { name: 'density', kind: 'number', help: 'density of the solid material, g/cm3' },
  { name: 'linear-density-tex', kind: 'number', help: 'measured linear density, tex (for the packing fraction)' },
  { name: 'linear-density-dtex', kind: 'number', help: 'measured linear density, dtex' },
  { name: 'linear-density-den', kind: 'number', help: 'measured linear density, denier' },
  { name: TENACITY_OPTION['N/tex'], kind: 'number', help: 'tenacity (breaking force per linear density), N/tex' },
  { name: TENACITY_OPTION['cN/dtex'], kind: 'number', help: 'tenacity, cN/dtex' },
  { name: TENACITY_OPTION['gf/den'], kind: 'number', help: 'tenacity, gf/den' },
  { name: 'strength-gpa', kind: 'number', help: 'tensile strength (breaking force per area), GPa: gives the tenacity at this density' },
  { name: 'retardance-nm', kind: 'number', help: 'retardance through the fibre, nm (for the birefringence)' },
  { name: 'thickness-um', kind: 'number', help: 'optical path for the birefringence, um', defaultText: 'the diameter' },
  { name: 'intrinsic-birefringence', kind: 'number', help: 'birefringence of perfectly aligned material (orientation factor)' },
  // Standard uncertainties (k = 1), each in its value's unit: they give the 95 % intervals (law of propagation, GUM).
  { name: 'diameter-uncertainty-um', kind: 'number', help: 'standard uncertainty (k = 1) of the diameter, um (`uUm` of `diameter`)' },
  { name: 'diameter-dof', kind: 'number', help: 'degrees of freedom of that uncertainty (`dofUm` of `diameter`)', defaultText: 'infinite' },
  { name: 'density-uncertainty', kind: 'number', help: 'standard uncertainty of the density, g/cm3' },
  { name: 'linear-density-uncertainty', kind: 'number', help: 'standard uncertainty of the linear density, in its unit' },
  { name: 'tenacity-uncertainty', kind: 'number', help: 'standard uncertainty of the tenacity, in its unit' },
  { name: 'strength-uncertainty-gpa', kind: 'number', help: 'standard uncertainty of the tensile strength, GPa' },
  { name: 'retardance-uncertainty-nm', kind: 'number', help: 'standard uncertainty of the retardance, nm' },
  { name: 'thickness-uncertainty-um', kind: 'number', help: 'standard uncertainty of the optical path, um' },
  { name: 'intrinsic-birefringence-uncertainty', kind: 'number', help: 'standard uncertainty of the intrinsic birefringence' },
];

/** `retarda fibre`'s options as words. */
export function fibreArgs(r: FibreNumbersRequest): string[] {
  const u = r.uncertainties ?? {};
  return [
    ...valueArg('diameter-um', r.diameterUm), ...valueArg('diameter-uncertainty-um', u.diameterUm), ...valueArg('diameter-dof', u.diameterDof),
    ...valueArg('density', r.densityGPerCm3), ...valueArg('density-uncertainty', u.densityGPerCm3),
    ...(r.linearDensity ? [`--linear-density-${r.linearDensity.unit}`, String(r.linearDensity.value)] : []), ...valueArg('linear-density-uncertainty', u.linearDensity),
    ...(r.tenacity ? [`--${TENACITY_OPTION[r.tenacity.unit]}`, String(r.tenacity.value)] : []), ...valueArg('tenacity-uncertainty', u.tenacity),
    ...valueArg('strength-gpa', r.strengthGPa), ...valueArg('strength-uncertainty-gpa', u.strengthGPa),
    ...valueArg('retardance-nm', r.retardanceNm), ...valueArg('retardance-uncertainty-nm', u.retardanceNm),
    ...valueArg('thickness-um', r.thicknessUm), ...valueArg('thickness-uncertainty-um', u.thicknessUm),
    ...valueArg('intrinsic-birefringence', r.intrinsicBirefringence), ...valueArg('intrinsic-birefringence-uncertainty', u.intrinsicBirefringence),
  ];
}
