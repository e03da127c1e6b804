export { SCHEMA_VERSION, NOT_DETERMINED } from './schema.ts';
export type { ResultHead } from './schema.ts';
export type { Rect } from './region.ts';
export { parseRect, rectMask } from './region.ts';
export type { OrientOptions, OrientResult } from './orient.ts';
export { analyseOrientation, orientResult } from './orient.ts';
export type { ProfileRequest, ProfileResult } from './profile.ts';
export { analyseProfile, resolveChannel } from './profile.ts';
export type {
  TrainOptions, PlateReadingOptions, OpticsSummaryOptions, PlateOptions, PlatePairAnalysisOptions, FourAngleAnalysisOptions,
  ConfidenceStats, OpticsResult, OpticsAnalysis,
} from './optics.ts';
export {
  analysePlate, analysePlatePair, analyseFourAngle, readPlateField, opticsResult, confidenceStats, retardanceMedian,
  calibrationJson, trainOf, DEFAULT_ANGLES_DEG, analysePlateProfile, oneImageGaps, withholdOrder, withholdProfile,
  ONE_IMAGE_MIN_RETARDANCE_NM, ONE_IMAGE_MEASURED, ONE_IMAGE_AXIS_TOLERANCE_DEG,
} from './optics.ts';
export type { DiameterAnalysisOptions, DiameterDocument } from './diameter.ts';
export { analyseDiameter } from './diameter.ts';
export type { SamplingCheck, MicrometerAnalysisOptions, MicrometerDocument, OpticsCalibrationDocument } from './micrometer.ts';
export { analyseMicrometer, analyseOpticsCalibration, MICROMETER_METHOD } from './micrometer.ts';
export type { FibreNumbersRequest, FibreNumbersResult, LinearDensityUnit, TenacityUnit } from './fibreNumbers.ts';
export { fibreNumbersResult } from './fibreNumbers.ts';
