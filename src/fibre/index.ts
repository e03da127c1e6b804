/** Public surface of the fibre folder: diameters from images, edge models, fibre numbers. */
export { measureFibreDiameters, DIAMETER_DEFAULTS, DIAMETER_LIMITS, DROP_REASON_TEXT } from './diameter.ts';
export type { DiameterOptions, DiameterResult, DiameterStation, DiameterSummary, FibreDiameter } from './diameter.ts';
export type { DropReason, DroppedStation } from './stations.ts';
export { erf, erfc, normalCdf, normalQuantile, studentTQuantile, studentTCdf } from '../common/index.ts';
export { expandedInterval, COVERAGE_PROBABILITY } from './uncertainty.ts';
export type { Combined, Interval } from './uncertainty.ts';
export { fitErfEdge, fitBlurredBar, parabolaEdgeIndex } from './edgeFit.ts';
export type { ErfEdgeFit, ErfEdgeStart, BlurredBarFit, BlurredBarStart } from './edgeFit.ts';
export { RESOLVABLE_WIDTH_PER_SIGMA } from './barPool.ts';
export { stationStats } from './stats.ts';
export type { StationStats } from './stats.ts';
export {
  roundAreaUm2, texFromArea, texFromDiameter, diameterUmFromTex, texToDtex, dtexToTex, texToDenier, denierToTex,
  packingFraction, gpaFromNPerTex, nPerTexFromGpa, cnPerDtexToNPerTex, nPerTexToCnPerDtex, gfPerDenToNPerTex,
  nPerTexToGfPerDen, birefringence, orientationFactor, vibroscopeLinearDensity, offNormalWidth, fibreNumbers,
  powerLawInterval,
} from './numbers.ts';
export type {
  PackingFraction, OrientationFactor, VibroscopeResult, FibreNumbersInput, FibreNumbers, FibreNumberUncertainties,
  FibreNumberKey, FibreNumberInterval,
} from './numbers.ts';
