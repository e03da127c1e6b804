/** Public surface of the calibration folder: pixel size from optics or from a stage micrometer. */
export { umPerPxFromOptics, rayleighResolutionUm } from './optics.ts';
export type { OpticsInput } from './optics.ts';
export { calibrateFromMicrometer, COVERAGE_PROBABILITY } from './micrometer.ts';
export type { MicrometerOptions, MicrometerCalibration, UncertaintyBudget } from './micrometer.ts';
export { fitTickGrid } from './tickGrid.ts';
export type { TickGrid, FittedTick, TickGridOptions } from './tickGrid.ts';
export { periodFromProfile, lineFit } from './period.ts';
export type { LineFit, ProfileOptions } from './period.ts';
export { lineCentre } from './lineCentre.ts';
export { rulerAxes } from './tickDirection.ts';
export { stripProfiles } from './strips.ts';
export { combineUncertainties, coverageFactor, roundWithUncertainty, studentTwoSided } from './gum.ts';
export type { UncertaintyComponent } from './gum.ts';
export { MICROMETER_LIMITS, MICROMETER_OPTION_LIMITS } from './limits.ts';
