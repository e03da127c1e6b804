/** Polarisation optics: colorimetry, the spectral Jones forward model, interference charts and the optical readers. */
export { CIE1931_X_BAR, CIE1931_Y_BAR, CIE1931_Z_BAR, D65_SPD, CIE_TABLE_START_NM, CIE_TABLE_STEP_NM } from './cieTables.ts';
export type { WavelengthGrid, Illuminant } from './spectrum.ts';
export {
  wavelengthGrid, cmf1931, d65Spd, blackbodySpd, illuminantASpd, illuminantSpd, parseIlluminant, illuminantLabel, HALOGEN_3200K,
} from './spectrum.ts';
export type { Vec3, Mat3 } from './colorimetry.ts';
export {
  XYZ_TO_SRGB, SRGB_TO_XYZ, D65_WHITE, BRADFORD, xyzToLinearSrgb, linearSrgbToXyz, srgbEncode, srgbDecode, linearSrgbTo8bit,
  xyzToLab, labToXyz, srgbToLab, chromaticity, bradfordMatrix, mulMat3,
} from './colorimetry.ts';
export { deltaE76, deltaE2000 } from './deltaE.ts';
export type { JonesVector, RetarderElement } from './jones.ts';
export { applyRetarder, polarised, analyse, trainIntensity } from './jones.ts';
export { crossedIntensity, oneRetarderIntensity, plateIntensity } from './closedForms.ts';
export type { Compensator, OpticalTrain, SampleRetarder } from './train.ts';
export {
  DEFAULT_TRAIN, FULL_WAVE_DEFAULT_NM, MONOCHROME_DEFAULT_NM, fullWavePlate, quarterWavePlate, resolveTrain, slowAxisRad,
} from './train.ts';
export type { ColourModel, InterferenceColour } from './colourModel.ts';
export { colourModel, transmission, xyzOfTransmission, interferenceColour, matchLabOfLinearRgb } from './colourModel.ts';
export type { CameraCalibration } from './camera.ts';
export { whiteReference, cameraToModel, modelToCamera, NEUTRAL_CAMERA } from './camera.ts';
export type { OrderBand, ChartRow, ChartOptions, RgbBuffer } from './chart.ts';
export { CHART_LIMITS, orderBand, interferenceChart, renderChart, chartTitle } from './chart.ts';
export { medianLinearRgb } from './pixels.ts';
export type { MatchSpace, PlateLookup, LookupOptions, LookupMatch, SearchOptions } from './lookupTable.ts';
export { buildPlateLookup, LookupSearcher, matchConfidence, matchCoords, isMirrorSymmetric } from './lookupTable.ts';
export type { PlateCalibration, CalibrationOptions } from './calibration.ts';
export { calibrateFromBackground, calibrateFromColour } from './calibration.ts';
export type { PlateReadOptions, PlateReading } from './plateReader.ts';
export { readPlate, sampleRetardanceBand } from './plateReader.ts';
export type { MirrorChoiceStats, MirrorResolution, AxisAdvice } from './mirror.ts';
export { mirrorChoiceStats, resolveMirrorWithTexture, compensatorAxisAdvice, chooseMirrorByAxis } from './mirror.ts';
export type { RegistrationCheck } from './registration.ts';
export { phaseCorrelation, gradientMagnitude, registrationCheck } from './registration.ts';
export type { PlatePairOptions, PlatePairReading } from './platePair.ts';
export { readPlatePair, combinePlatePair, turnedTrain } from './platePair.ts';
export type { FourierFit, FourAngleOptions, FourAngleResult, PlateSignOptions } from './fourAngle.ts';
export { angleNoiseFactor, fitFourAngle, fourAngleAnalysis, recycleAngleSeries, seriesIntensityImage } from './fourAngle.ts';
export type { RenderOptions } from './render.ts';
export { renderSampleImage } from './render.ts';
export { rankCounts, uncount, valuesOfCountedRanks, valuesOfRanks, valuesOfRanksOfCounted, type RankCounts, type RankSelection, type SelectionSums, type ReadingCounts } from './ranks.ts';
