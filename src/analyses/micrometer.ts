/**
 * Pixel-size calibration as analyses: from a stage-micrometer image (the ticks' grid fitted from the
 * ticks themselves, with its GUM uncertainty) or from the optics alone. They return the JSON documents
 * `retarda calibrate --json` prints. docs/methods.md, "Micrometer calibration".
 */
import { calibrateFromMicrometer, rayleighResolutionUm, umPerPxFromOptics, MICROMETER_OPTION_LIMITS, type OpticsInput } from '../calibrate/index.ts';
import { InputError } from '../common/index.ts';
import { toGrey, type Image } from '../image/index.ts';
import { SCHEMA_VERSION } from './schema.ts';

/** How the micrometer calibration is made, in words (printed by the CLI and the app beside the number). */
export const MICROMETER_METHOD = 'stage micrometer: the ticks located strip by strip along their own direction, ' +
  'each tick\'s position fitted against its index by weighted least squares along the ticks\' normal; ' +
  'uncertainty by the GUM law of propagation (fit, tick direction, graticule tolerance)';

/** What `uncertainty` holds, and whether the graticule's tolerance is in it. */
function uncertaintyKind(toleranceUm: number): string {
  const base = 'relative combined standard uncertainty (k = 1) of umPerPx: the tick-position fit and the tick direction';
  return toleranceUm > 0
    ? `${base}, and the graticule's tolerance of +-${toleranceUm} um per division (rectangular, u = T / sqrt 3)`
    : `${base}; the graticule's own tolerance is not included (none was given: the micrometer's certificate states it)`;
}

/** Objective numerical aperture and wavelength for the sampling check. */
export interface SamplingCheck {
  na?: number;
  /** Wavelength, nm (default 550). */
  wavelengthNm?: number;
}

export interface MicrometerAnalysisOptions extends SamplingCheck {
  /** Spacing of one micrometer division, um (1 mm / 100 = 10). */
  divisionUm: number;
  /** Tolerance of one division, +-um, from the micrometer's certificate (default 0: not included). */
  divisionToleranceUm?: number;
  /** Ruler lines dark or bright; default auto. */
  polarity?: 'auto' | 'dark' | 'bright';
  /** Pixel size the optics give, um/px, for a cross-check (umPerPxFromOptics). */
  opticsUmPerPx?: number | null;
}

/** Sampling advice: a pixel larger than half the Rayleigh resolution under-samples the optics. */
function samplingWarning(o: SamplingCheck, umPerPx: number): string[] {
  if (o.na === undefined) return [];
  const r = rayleighResolutionUm(o.wavelengthNm ?? MICROMETER_OPTION_LIMITS.wavelengthNm.default, o.na);
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
 * um/px from a stage-micrometer image (calibrateFromMicrometer): the value, its relative standard
 * uncertainty (k = 1, `uncertainty`), the interval at k = t_95.45(nu_eff) (2 for many ticks), the
 * budget and the fitted ticks. Warns when the optics' pixel size differs by more than 2 % and when the
 * pixel under-samples the optics (NA given).
 * @throws InputError for a missing or non-positive division spacing, or an image without a ruler
 */
export function analyseMicrometer(img: Image, o: MicrometerAnalysisOptions) {
  if (o.divisionUm === undefined) {
    throw new InputError('the division spacing is needed with a micrometer image', 'Give the division spacing (--division-um 10 for 10 um)');
  }
  const p = o.polarity;
  if (p !== undefined && p !== 'auto' && p !== 'dark' && p !== 'bright') {
    throw new InputError(`the ruler polarity must be auto, dark or bright, got "${String(p)}"`);
  }
  const c = calibrateFromMicrometer(toGrey(img), { divisionUm: o.divisionUm, divisionToleranceUm: o.divisionToleranceUm, polarity: p });
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
    schemaVersion: SCHEMA_VERSION, analysis: 'calibrate' as const, method: 'micrometer' as const, methodDescription: MICROMETER_METHOD,
    source: img.source.name, width: img.width, height: img.height, umPerPx: c.umPerPx, uncertainty: c.relativeUncertainty,
    uncertaintyKind: uncertaintyKind(c.divisionToleranceUm), uncertaintyUmPerPx: c.uncertaintyUmPerPx,
    coverageFactor: c.coverageFactor, coverageProbability: c.coverageProbability, intervalUmPerPx: c.intervalUmPerPx,
    effectiveDof: c.effectiveDof,
    uncertaintyBudget: { fitRelative: c.budget.fit, directionRelative: c.budget.direction, graticuleRelative: c.budget.graticule },
    divisionUm: c.divisionUm, divisionToleranceUm: c.divisionToleranceUm, periodPx: c.periodPx, periodStdErrPx: c.periodStdErrPx,
    divisions: c.divisions, lines: c.lines, rejectedLines: c.rejectedLines, missingLines: c.missingLines,
    rmsResidualPx: c.rmsResidualPx, residualFraction: c.residualFraction, linesDeg: c.linesDeg, linesStdErrDeg: c.linesStdErrDeg,
    polarity: c.polarity, ticks: c.ticks.map((t) => ({ index: t.index, positionPx: t.positionPx, residualPx: t.residualPx, points: t.points, used: t.used })),
    opticsUmPerPx: optics, opticsRatio, warnings,
  };
}

export type MicrometerDocument = ReturnType<typeof analyseMicrometer>;
export type OpticsCalibrationDocument = ReturnType<typeof analyseOpticsCalibration>;
