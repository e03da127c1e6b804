export { SCHEMA_VERSION, NOT_DETERMINED, upgradeResult, upgradeCommandLine } from './schema.ts';
export type { ResultHead } from './schema.ts';
export type { OrientOptions, OrientResult } from './orient.ts';
export { analyseOrientation, analyseOrientationRows, analyseOrientationStreamed, orientResult, HELD_FIELD_MAX_PIXELS } from './orient.ts';
export type { ProfileRequest, ProfileResult } from './profile.ts';
export { analyseProfile, resolveChannel } from './profile.ts';
export type {
  TrainOptions, PlateReadingOptions, KnownRetardanceOptions, OpticsSummaryOptions, PlateOptions, PlatePairAnalysisOptions, AngleSeriesAnalysisOptions,
  ConfidenceStats, OpticsResult, OpticsAnalysis, ReadingKind,
} from './optics.ts';
export {
  analysePlate, analysePlatePair, analyseAngleSeries, readPlateField, opticsResult, confidenceStats, retardanceMedian,
  calibrationJson, trainOf, DEFAULT_ANGLES_DEG, READING_NAMES, OPTICS_LIMITS, COMPENSATOR_OFFSET_DEG, DEFAULT_ILLUMINANT, analysePlateProfile, oneImageGaps, withholdOrder, withholdProfile,
  ONE_IMAGE_MIN_RETARDANCE_NM, ONE_IMAGE_MEASURED, ONE_IMAGE_AXIS_TOLERANCE_DEG, OPTICS_MAX_PIXELS, ANGLE_SERIES_WITH_PLATE_MAX_PIXELS, checkReadingSize,
} from './optics.ts';
export type { DiameterAnalysisOptions, DiameterDocument } from './diameter.ts';
export { analyseDiameter } from './diameter.ts';
export type { SamplingCheck, MicrometerAnalysisOptions, MicrometerDocument, OpticsCalibrationDocument } from './micrometer.ts';
export { analyseMicrometer, analyseOpticsCalibration, MICROMETER_METHOD } from './micrometer.ts';
export type { FibreNumbersRequest, FibreNumbersResult, LinearDensityUnit, TenacityUnit } from './fibreNumbers.ts';
export { fibreNumbersResult } from './fibreNumbers.ts';
export type { SeriesFrame, SeriesOptions, SeriesPoint, SeriesResult } from './series.ts';
export { analyseSeries, SERIES_MODELS, FRAME_TIME_LIMIT } from './series.ts';
export type { TrendPoint, TrendReading, TrendReadingValue, TrendResult, TrendVariable } from './trend.ts';
export { readingOf, trendResult, trendCsvRows, trendVariable, TREND_READINGS, TREND_READING_WORDS, TREND_SOURCE, TREND_VALUE_LIMIT, TREND_NAME_MAX, TREND_MAX_PIXELS } from './trend.ts';
