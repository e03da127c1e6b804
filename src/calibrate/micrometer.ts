/**
 * Spatial calibration from an image of a stage micrometer of known division spacing: the ticks' grid
 * fitted from the ticks themselves (fitTickGrid), and its uncertainty by the GUM (docs/methods.md,
 * "Micrometer calibration").
 *
 * umPerPx = D / P, D the division spacing (um), P the fitted period along the ticks' normal (px). By the
 * law of propagation (JCGM 100:2008, 5.1.2, for a product of powers the relative uncertainties add in
 * quadrature) its relative standard uncertainty is
 *   u_rel^2 = (u_fit(P) / P)^2 + (u_dir(P) / P)^2 + (u(D) / D)^2
 * with u_fit the standard error of the least-squares slope of tick position against tick index
 * (Type A, n - 2 degrees of freedom), u_dir the tick direction's standard error propagated to P, and
 * u(D) = T / sqrt(3) for a graticule whose division is certified within +-T (rectangular distribution,
 * GUM 4.3.7; infinite degrees of freedom, GUM G.4.3). The interval is umPerPx +- k u_c with
 * k = t_95.45(nu_eff) (Welch-Satterthwaite, GUM G.4.1), which is 2 once the ticks are many.
 */
import { checkNumber, InputError } from '../common/index.ts';
import { checkLimit } from '../common/index.ts';
import type { Plane } from '../common/index.ts';
import { radToDeg, wrapAxialDeg } from '../common/index.ts';
import { combineUncertainties, coverageFactor, studentTwoSided } from './gum.ts';
import { MICROMETER_LIMITS, MICROMETER_OPTION_LIMITS } from './limits.ts';
import { fitTickGrid, type FittedTick } from './tickGrid.ts';

export interface MicrometerOptions {
  /** Spacing of one division of the micrometer, um (a common micrometer: 1 mm / 100 = 10 um). */
  divisionUm: number;
  /**
   * Tolerance of the division spacing, +-um, as the micrometer's certificate states it (default 0: not
   * included). Taken as the half-width of a rectangular distribution: u(D) = T / sqrt(3).
   */
  divisionToleranceUm?: number;
  polarity?: 'auto' | 'dark' | 'bright';
}

/** Relative standard uncertainties (k = 1) of umPerPx, by source. */
export interface UncertaintyBudget {
  /** Scatter of the tick positions about the fitted grid (Type A). */
  fit: number;
  /** The tick direction's standard error, propagated to the period (Type A). */
  direction: number;
  /** The graticule's tolerance, T / (sqrt(3) D) (Type B). */
  graticule: number;
}

export interface MicrometerCalibration {
  umPerPx: number;
  /** Relative combined standard uncertainty (k = 1) of umPerPx. */
  relativeUncertainty: number;
  /** Combined standard uncertainty (k = 1) of umPerPx, um/px. */
  uncertaintyUmPerPx: number;
  budget: UncertaintyBudget;
  /** Effective degrees of freedom of the combined uncertainty (Welch-Satterthwaite). */
  effectiveDof: number;
  /** k = t_p(nu_eff) for p = coverageProbability (2 for many ticks). */
  coverageFactor: number;
  /** Coverage probability of the interval: that of k = 2 for a normal distribution, 0.9545. */
  coverageProbability: number;
  /** umPerPx -+ k u_c, um/px. */
  intervalUmPerPx: [number, number];
  periodPx: number;
  periodStdErrPx: number;
  /** Divisions spanned by the ticks used. */
  divisions: number;
  lines: number;
  rejectedLines: number;
  missingLines: number;
  rmsResidualPx: number;
  /** rmsResidualPx / periodPx. */
  residualFraction: number;
  /** Direction of the ruler's ticks, degrees CCW on screen from +x, (-90, 90], and its standard uncertainty. */
  linesDeg: number;
  linesStdErrDeg: number;
  polarity: 'dark' | 'bright';
  divisionUm: number;
  divisionToleranceUm: number;
  ticks: FittedTick[];
  warnings: string[];
}

/** The stated coverage probability: P(|Z| <= 2) for a standard normal Z. */
export const COVERAGE_PROBABILITY = studentTwoSided(MICROMETER_LIMITS.coverageFactorAtInfinity, Infinity);

function rangeCheck(grey: Plane): void {
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
  if (grey.width < 16 || grey.height < 16) {
    throw new InputError(`the micrometer image is only ${grey.width} x ${grey.height} px`, 'Use an image at least 16 px each way');
  }
}

/**
 * Calibrates the pixel size from a stage-micrometer image (see the file's description).
 * @throws InputError for a blank image, no ruler, fewer than 5 ticks on a grid, or tick positions that
 * scatter by more than the refusal fraction of a division (the ticks were not found consistently).
 */
export function calibrateFromMicrometer(grey: Plane, options: MicrometerOptions): MicrometerCalibration {
  const divisionUm = checkLimit(MICROMETER_OPTION_LIMITS.divisionUm, options.divisionUm);
  // A tolerance of half a division or more would make the scale meaningless.
  const toleranceUm = checkNumber(MICROMETER_OPTION_LIMITS.divisionToleranceUm.what, options.divisionToleranceUm ?? MICROMETER_OPTION_LIMITS.divisionToleranceUm.default, 0, 0.5 * divisionUm, 'um');
  rangeCheck(grey);
  const g = fitTickGrid(grey, { polarity: options.polarity });
  const P = g.periodPx;
  const residualFraction = g.rmsResidualPx / P;
  const L = MICROMETER_LIMITS;
  if (residualFraction > L.refuseResidualFraction) {
    throw new InputError(`the ticks were not found consistently: their positions scatter by ${(100 * residualFraction).toFixed(0)} % ` +
      `of a division around the fitted grid (a ruler in focus scatters by under ${100 * L.warnResidualFraction} %)`,
    'Check the focus, clean the micrometer or crop the image to the ruler, and say so if the ruler lines are bright on dark (--polarity bright)');
  }
  const umPerPx = divisionUm / P;
  const budget: UncertaintyBudget = {
    fit: g.periodStdErrPx / P, direction: g.directionStdErrPx / P, graticule: toleranceUm / Math.sqrt(3) / divisionUm,
  };
  const c = combineUncertainties([
    { u: budget.fit, dof: Math.max(1, g.dof) }, { u: budget.direction, dof: g.directionDof }, { u: budget.graticule, dof: Infinity },
  ]);
  const k = coverageFactor(COVERAGE_PROBABILITY, c.dof);
  const U = k * c.u * umPerPx;
  const warnings: string[] = [];
  if (residualFraction > L.warnResidualFraction) {
    warnings.push(`CHECK THE RULER: the tick positions scatter by ${(100 * residualFraction).toFixed(1)} % of a division ` +
      `around the fitted grid (under ${100 * L.warnResidualFraction} % for a ruler in focus whose ticks were all found), so some ticks ` +
      'were not found consistently; the uncertainty includes this scatter, but check the focus, dirt and that only one scale is in view');
  }
  if (g.offGridFraction > L.offGridWarnFraction) {
    warnings.push(`CHECK THE RULER: ${(100 * g.offGridFraction).toFixed(0)} % of the lines found as thin as the ticks lie off the ` +
      'fitted grid: another scale, a grid or dirt is in view, and the grid fitted may not be the one meant; crop the image to one scale');
  }
  if (g.countedFromLongerTicks) {
    warnings.push('the shortest ticks were too faint to locate one by one: the divisions were counted from the longer ticks, ' +
      'with the fainter ticks between them confirming the division');
  }
  if (g.missingLines > 0) {
    warnings.push(`${g.missingLines} tick(s) inside the measured span were not found (a gap, dirt or a faint tick); the count went on across them`);
  }
  if (g.rejectedLines > 0) warnings.push(`${g.rejectedLines} tick(s) off the regular grid were left out`);
  if (g.divisions < L.fewDivisions) {
    warnings.push(`CHECK THE RULER: only ${g.divisions} divisions measured; if the ruler's finest ticks were too faint to find, ` +
      `the divisions counted are every 5th or 10th and the pixel size that many times too large; image ${L.recommendedDivisions} or more divisions`);
  } else if (g.divisions < L.recommendedDivisions) {
    warnings.push(`only ${g.divisions} divisions measured: ${L.recommendedDivisions} or more give a more reliable calibration`);
  }
  if (k > 2.3) warnings.push(`few ticks: the interval uses k = ${k.toFixed(2)} (Student t, ${c.dof.toFixed(0)} degrees of freedom) instead of 2`);
  // Tick direction: along the ticks, perpendicular to the normal; CCW on screen (y down) from +x.
  const acrossDeg = radToDeg(Math.atan2(-Math.sin(g.normalRad), Math.cos(g.normalRad)));
  return {
    umPerPx, relativeUncertainty: c.u, uncertaintyUmPerPx: c.u * umPerPx, budget, effectiveDof: c.dof, coverageFactor: k,
    coverageProbability: COVERAGE_PROBABILITY, intervalUmPerPx: [umPerPx - U, umPerPx + U], periodPx: P,
    periodStdErrPx: g.periodStdErrPx, divisions: g.divisions, lines: g.lines, rejectedLines: g.rejectedLines,
    missingLines: g.missingLines, rmsResidualPx: g.rmsResidualPx, residualFraction,
    linesDeg: snapToNinety(wrapAxialDeg(acrossDeg + 90)), linesStdErrDeg: radToDeg(g.normalStdErrRad), polarity: g.polarity,
    divisionUm, divisionToleranceUm: toleranceUm, ticks: g.ticks, warnings,
  };
}

/** Angles within 1e-3 deg of -90 print as -90.000, outside (-90, 90]: report them as +90. */
function snapToNinety(deg: number): number {
  return deg < -90 + 1e-3 ? 90 : deg;
}
