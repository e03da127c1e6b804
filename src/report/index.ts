/**
 * What results become for people and files: CSV rows, float TIFF fields, PNG pictures, the orientation and
 * retardance colour maps, scale bars and numbers as the tables print them.
 */
export type { Lab } from './colourMap.ts';
export {
  CYCLIC_CONTROL_POINTS, STEP_WEIGHTS, labToLinearSrgb, labToSrgb8, weightedStep, cyclicLab, cyclicSrgb8, orientationColourTable, angleIndex,
  orientationRgba,
} from './colourMap.ts';
export { retardanceColourTable, retardanceIndex, retardanceRange } from './retardanceColours.ts';
export type { CsvValue } from './csv.ts';
export { csvField, toCsv } from './csv.ts';
export { fieldTiffBytes, fieldTiffChunks } from './fieldTiff.ts';
export type { FieldPage } from './fields.ts';
export { fieldPages } from './fields.ts';
export type { PngPixels } from './png.ts';
export { encodePng } from './png.ts';
export { orientCsvRow, profileCsvRow, profileBinRows } from './rows.ts';
export type { ScaleBar } from './scaleBar.ts';
export { chooseScaleBar } from './scaleBar.ts';
export type { FloatTiffPage, FloatTiffOptions } from './tiff.ts';
export { encodeFloatTiff, floatTiffChunks } from './tiff.ts';
export { formatCell } from './format.ts';
