/**
 * Pixel-size calibration as analyses: from a stage-micrometer image (the period of the whole ruler) or
 * from the optics alone. They return the JSON documents `retarda calibrate --json` prints.
 */
import { calibrateFromMicrometer, rayleighResolutionUm, umPerPxFromOptics, type OpticsInput } from '../calibrate/index.ts';
import { InputError } from '../common/errors.ts';
import { toGrey, type Image } from '../image/types.ts';
import { SCHEMA_VERSION } from './schema.ts';

const UNCERTAINTY_KIND = 'relative standard uncertainty (k = 1) of umPerPx from the least-squares line fit';

/** Objective numerical aperture and wavelength for the sampling check. */
export interface SamplingCheck {
  na?: number;
  /** Wavelength, nm (default 550). */
  wavelengthNm?: number;
}

export interface MicrometerAnalysisOptions extends SamplingCheck {
  /** Spacing of one micrometer division, um (1 mm / 100 = 10). */
  divisionUm: number;
  /** Ruler lines dark or bright; default auto. */
  polarity?: 'auto' | 'dark' | 'bright';
  /** Pixel size the optics give, um/px, for a cross-check (umPerPxFromOptics). */
  opticsUmPerPx?: number | null;
}

/** Sampling advice: a pixel larger than half the Rayleigh resolution under-samples the optics. */
function samplingWarning(o: SamplingCheck, umPerPx: number): string[] {
  if (o.na === undefined) return [];
  const r = rayleighResolutionUm(o.wavelengthNm ?? 550, o.na);
  return umPerPx > r / 2
    ? [`pixel ${umPerPx.toPrecision(4)} um is larger than half the Rayleigh resolution (${(r / 2).toPrecision(4)} um): the image is under-sampled`]
    : [];
}

/**
 * The optics-only calibration document: camera pixel x binning / (objective x adapter magnification), um/px
 * (umPerPxFromOptics) (`retarda calibrate --camera-pixel-um P --objective-mag M --json`). */
export function analyseOpticsCalibration(o: OpticsInput & SamplingCheck) {
  const umPerPx = umPerPxFromOptics(o);
  return {
    schemaVersion: SCHEMA_VERSION, analysis: 'calibrate' as const, method: 'optics' as const, umPerPx,
    uncertainty: null, uncertaintyUmPerPx: null, periodPx: null, divisions: null, warnings: samplingWarning(o, umPerPx),
  };
}

/**
 * um/px from a stage-micrometer image: the ruler period from a least-squares line fit over all lines
 * (calibrateFromMicrometer), with its standard uncertainty (k = 1). Warns when the optics' pixel size
 * differs by more than 2 % and when the pixel under-samples the optics (NA given).
 * @throws InputError for a missing or non-positive division spacing, or an image without a ruler
 */
export function analyseMicrometer(img: Image, o: MicrometerAnalysisOptions) {
  if (o.divisionUm === undefined) {
    throw new InputError('the division spacing is needed with a micrometer image', 'Give the division spacing, e.g. --division-um 10');
  }
  const p = o.polarity;
  if (p !== undefined && p !== 'auto' && p !== 'dark' && p !== 'bright') {
    throw new InputError(`the ruler polarity must be auto, dark or bright, got "${String(p)}"`);
  }
  const c = calibrateFromMicrometer(toGrey(img), { divisionUm: o.divisionUm, polarity: p });
  const optics = o.opticsUmPerPx ?? null;
  const warnings = [...c.warnings, ...samplingWarning(o, c.umPerPx)];
  let opticsRatio: number | null = null;
  if (optics !== null) {
    opticsRatio = c.umPerPx / optics;
    if (Math.abs(opticsRatio - 1) > 0.02) {
      warnings.push(`the micrometer gives ${c.umPerPx.toPrecision(5)} um/px but the optics give ${optics.toPrecision(5)} ` +
        `(${((opticsRatio - 1) * 100).toFixed(1)} %): check the objective, adapter and binning`);
    }
  }
  return {
    schemaVersion: SCHEMA_VERSION, analysis: 'calibrate' as const, method: 'micrometer' as const, source: img.source.name,
    width: img.width, height: img.height, umPerPx: c.umPerPx, uncertainty: c.relativeUncertainty,
    uncertaintyKind: UNCERTAINTY_KIND, uncertaintyUmPerPx: c.uncertaintyUmPerPx, periodPx: c.periodPx,
    periodStdErrPx: c.periodStdErrPx, divisions: c.divisions, lines: c.lines, rejectedLines: c.rejectedLines,
    rmsResidualPx: c.rmsResidualPx, linesDeg: c.linesDeg, polarity: c.polarity, divisionUm: c.divisionUm,
    opticsUmPerPx: optics, opticsRatio, warnings,
  };
}

export type MicrometerDocument = ReturnType<typeof analyseMicrometer>;
export type OpticsCalibrationDocument = ReturnType<typeof analyseOpticsCalibration>;
