/**
 * Spatial calibration from an image of a stage micrometer of known division spacing, measured from
 * the periodicity of the whole ruler (domain.md §8), with its standard uncertainty.
 */
import { checkNumber, InputError } from '../common/errors.ts';
import type { Plane } from '../common/plane.ts';
import { radToDeg, wrapAxialDeg } from '../common/angles.ts';
import { periodFromProfile } from './period.ts';
import { rulerProfile } from './ruler.ts';

export interface MicrometerOptions {
  /** Spacing of one division of the micrometer, um (a common micrometer: 1 mm / 100 = 10 um). */
  divisionUm: number;
  polarity?: 'auto' | 'dark' | 'bright';
}

export interface MicrometerCalibration {
  umPerPx: number;
  /** Relative standard uncertainty (k = 1) of umPerPx from the line fit: SE(P) / P. */
  relativeUncertainty: number;
  /** Standard uncertainty (k = 1) of umPerPx, um/px. */
  uncertaintyUmPerPx: number;
  periodPx: number;
  periodStdErrPx: number;
  /** Divisions spanned by the lines used. */
  divisions: number;
  lines: number;
  rejectedLines: number;
  rmsResidualPx: number;
  /** Direction of the ruler's lines (the ticks), degrees CCW on screen from +x, (-90, 90]. */
  linesDeg: number;
  polarity: 'dark' | 'bright';
  divisionUm: number;
  warnings: string[];
}

/**
 * um/px = divisionUm / P, P the line period in px from the least-squares fit c = P m + c0 over every
 * line of the ruler. The uncertainty is the fit's standard error only (random line-position scatter);
 * the micrometer's own tolerance and pixel aspect ratio are not in it. Works at any ruler angle and for
 * dark or bright lines. Period found along the profile direction, which is normal to the lines.
 *
 * @throws InputError for a blank image, no line structure, or fewer than 5 lines.
 */
export function calibrateFromMicrometer(grey: Plane, options: MicrometerOptions): MicrometerCalibration {
  const divisionUm = checkNumber('division spacing', options.divisionUm, 1e-3, 1e5, 'um');
  let min = Infinity;
  let max = -Infinity;
  for (const v of grey.data) {
    if (!Number.isFinite(v)) continue;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (!(max > min)) {
    throw new InputError('the micrometer image is uniform (blank)', 'Check the exposure and that the ruler is in view');
  }
  const prof = rulerProfile(grey);
  if (prof.coherency < 0.1) {
    throw new InputError(`no ruler lines found: the image has no dominant line direction (coherency ${prof.coherency.toFixed(2)})`,
      'Image a stage micrometer with its lines in focus');
  }
  const fit = periodFromProfile(prof.values, { sampleStepPx: prof.sampleStepPx, polarity: options.polarity ?? 'auto' });
  const umPerPx = divisionUm / fit.periodPx;
  const rel = fit.periodStdErrPx / fit.periodPx;
  const warnings: string[] = [];
  if (fit.divisions < 20) {
    warnings.push(`only ${fit.divisions} divisions measured: 20 or more give a more reliable calibration`);
  }
  if (fit.rejectedLines > 0) warnings.push(`${fit.rejectedLines} line(s) off the regular grid were left out`);
  const acrossDeg = radToDeg(Math.atan2(-prof.acrossY, prof.acrossX));
  return {
    umPerPx, relativeUncertainty: rel, uncertaintyUmPerPx: umPerPx * rel, periodPx: fit.periodPx,
    periodStdErrPx: fit.periodStdErrPx, divisions: fit.divisions, lines: fit.centresPx.length,
    rejectedLines: fit.rejectedLines, rmsResidualPx: fit.rmsResidualPx, linesDeg: snapToNinety(wrapAxialDeg(acrossDeg + 90)),
    polarity: fit.polarity, divisionUm, warnings,
  };
}

/** Angles within 1e-3 deg of -90 print as -90.000, outside (-90, 90]: report them as +90. */
function snapToNinety(deg: number): number {
  return deg < -90 + 1e-3 ? 90 : deg;
}
