import type { Limit } from '../common/index.ts';

/**
 * Ranges and defaults of the options a user gives (docs/methods.md §11.3-11.5), for the analysis, the command line
 * and the app. The tolerance is also at most half a division (checked against the division given).
 */
export const MICROMETER_OPTION_LIMITS = {
  divisionUm: { what: 'division spacing', min: 1e-3, max: 1e5, unit: 'um' },
  divisionToleranceUm: { what: 'division tolerance', min: 0, max: 5e4, default: 0, unit: 'um' },
  wavelengthNm: { what: 'wavelength for the sampling check', min: 1, max: 1e5, default: 550, unit: 'nm' },
} as const satisfies Record<string, Limit>;

/**
 * Defaults and limits of the micrometer calibration, defined once (docs/methods.md, "Micrometer
 * calibration"). The residual fractions are of the fitted period: a ruler in focus whose ticks were all
 * found places them within about 1 % of a division of a regular grid; ticks indexed at random would
 * scatter by P / sqrt(12), 29 %.
 */
export const MICROMETER_LIMITS = {
  /** Fewest ticks on the grid for a calibration (a straight-line fit with 3 degrees of freedom). */
  minLines: 5,
  /** Divisions to measure over for a reliable calibration (common practice, no source). */
  recommendedDivisions: 20,
  /** Fewer divisions than this: a loud warning (too few to tell a ruler's finest ticks from its every 5th or 10th). */
  fewDivisions: 10,
  /** Smallest period the ticks can be located at, px (below it the ticks are not resolved). */
  minPeriodPx: 3,
  /** RMS residual of the tick positions above this fraction of the period: a loud warning. */
  warnResidualFraction: 0.03,
  /**
   * RMS residual above this fraction of the period: refused (the ticks were not found consistently).
   * Rulers found correctly in the validation renderings stay below about 4 % even when noisy and blurred.
   */
  refuseResidualFraction: 0.06,
  /**
   * Share of the tick-like lines found that do not end on the fitted grid above which a loud warning is
   * given: printed numbers, tick ends and blur leave up to about a fifth off it in the validation
   * renderings, a second scale in view 40 % or more.
   */
  offGridWarnFraction: 0.3,
  /** Lines of one strip profile scattering by more than this fraction of their period are no grid. */
  stripResidualFraction: 0.1,
  /** Smallest half-width of the centroid window, px. */
  minCentreWindowPx: 1.5,
  /**
   * Standard uncertainty below which no tick position is trusted, px: the centroid's residual bias on
   * the pixel grid (a Type B component, GUM 4.3), set from noise-free renderings, whose tick positions
   * scatter by up to about this much about their grid.
   */
  tickPositionFloorPx: 0.005,
  /** Rows per strip along the ticks, px (first pass; widened on noisy images). */
  stripWidthPx: 8,
  /** Coverage probability of the stated interval: that of k = 2 for a normal distribution, 95.45 % (GUM 6.3.3). */
  coverageFactorAtInfinity: 2,
} as const;
