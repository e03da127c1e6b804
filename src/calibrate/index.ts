/** Public surface of the calibration folder: pixel size from optics or from a stage micrometer. */
export { umPerPxFromOptics, rayleighResolutionUm } from './optics.ts';
export type { OpticsInput } from './optics.ts';
export { calibrateFromMicrometer } from './micrometer.ts';
export type { MicrometerOptions, MicrometerCalibration } from './micrometer.ts';
export { periodFromProfile } from './period.ts';
export type { LineFit, ProfileOptions } from './period.ts';
export { rulerProfile, profileAcross } from './ruler.ts';
export type { RulerProfile } from './ruler.ts';
