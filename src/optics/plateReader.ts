import { checkNumber, InputError } from '../common/errors.ts';
import { DEG, wrapAxialDeg, axialDiffDeg } from '../common/angles.ts';
import type { Image } from '../image/types.ts';
import type { OrientationField } from '../orientation/types.ts';
import { colourModel, matchLabOfLinearRgb } from './colourModel.ts';
import { cameraToModel, NEUTRAL_CAMERA, type CameraCalibration } from './camera.ts';
import { calibrateFromBackground, type CalibrationOptions, type PlateCalibration } from './calibration.ts';
import { buildPlateLookup, LookupSearcher, matchConfidence, matchCoords, type LookupMatch, type MatchSpace, type PlateLookup, type SearchOptions } from './lookupTable.ts';
import { cellLinearRgb, checkColourImage, quantiseToCells, type Rect } from './pixels.ts';
import { resolveTrain, type OpticalTrain } from './train.ts';

export interface PlateReadOptions extends SearchOptions {
  train?: Partial<OpticalTrain>;
  /** Largest sample retardance searched, nm (default 800). */
  retardanceMaxNm?: number;
  angleStepDeg?: number;
  retardanceStepNm?: number;
  /** 'lab' (default) or 'chroma' (brightness-independent, for uneven illumination). */
  match?: MatchSpace;
  birefringenceSign?: 1 | -1;
  /** Sample-free rectangle: fits compensator retardance, white balance and exposure. */
  background?: Rect;
  calibration?: CalibrationOptions;
  /** Fixed camera calibration (skips the exposure fit when no background is given). */
  camera?: CameraCalibration;
  /**
   * Reference axis for the mirror choice, degrees: of theta and 2*axis - theta the one nearer this axis is
   * reported. Default: compensator axis - 45 deg (the polariser for the usual set-up).
   */
  referenceAxisDeg?: number;
  /** Colour-cube search resolution, bits per channel (default 6; confidence and branch use one bit more). */
  cacheBits?: number;
  /**
   * Pixels read below this retardance show no measurable sample (background, isotropic regions): their
   * orientation is undefined, so they are masked and counted. Default 20 nm; 0 keeps every pixel.
   */
  retardanceMinNm?: number;
}

export interface PlateReading {
  field: OrientationField;
  calibration: PlateCalibration | null;
  lookup: PlateLookup;
  /** Distinct colour cells matched (each one lookup search). */
  cellsMatched: number;
}

/**
 * Reads orientation and retardance per pixel from one compensator-plate colour image. A lookup over
 * (angle, retardance) built from the spectral Jones model is searched in CIELAB (or brightness-independent
 * chroma), once per colour-cube cell; confidence combines match error and the margin to the best distinct
 * alternative. One image cannot tell theta from 2*axis - theta: the field carries ambiguity
 * 'mirror-about-compensator' and reports the candidate nearest the reference axis.
 */
export function readPlate(img: Image, options: PlateReadOptions = {}): PlateReading {
  checkColourImage(img, 'reading a compensator image');
  const train = resolveTrain(options.train);
  if (!train.compensator) throw new InputError('reading orientation from one colour image needs a compensator in the train', 'Give the compensator retardance and angle');
  if (train.monochromeNm !== undefined) throw new InputError('a compensator image is read in white light, not through a narrow-band filter', 'Remove the filter wavelength');
  const bits = checkNumber('cache bits', options.cacheBits ?? 6, 4, 7);
  const floorNm = checkNumber('smallest retardance read', options.retardanceMinNm ?? 20, 0, 500, 'nm');
  const sign = options.birefringenceSign ?? 1;
  const space = options.match ?? 'lab';
  let calibration: PlateCalibration | null = null;
  let camera = options.camera ?? NEUTRAL_CAMERA;
  const warnings: string[] = [];
  if (options.background) {
    calibration = calibrateFromBackground(img, options.background, train, { camera: options.camera, ...options.calibration });
    camera = calibration.camera;
    train.compensator = { ...train.compensator, retardanceNm: calibration.compensatorNm };
    if (calibration.residualDeltaE00 > 5) {
      warnings.push(`the background colour is ${calibration.residualDeltaE00.toFixed(1)} Delta E00 from any compensator colour: check the rectangle is sample-free and the compensator is in`);
    }
  } else if (!options.camera && space === 'lab') {
    warnings.push('no background rectangle: exposure and white balance were taken as they are; give --background for a calibrated reading');
  }
  const model = colourModel(train);
  const lookup = buildPlateLookup(model, {
    retardanceMaxNm: options.retardanceMaxNm, angleStepDeg: options.angleStepDeg, retardanceStepNm: options.retardanceStepNm,
    space, birefringenceSign: sign,
  });
  const searcher = new LookupSearcher(lookup, options);
  // Sub-cells one bit finer than the search cells: each search cell is searched once; each sub-cell then picks
  // among its parent's best and alternative entries with its own colour and gets its own confidence.
  const subBits = bits + 1;
  const { cells: subCells, saturated, invalid } = quantiseToCells(img, subBits);
  const parentLevel = Int32Array.from({ length: 1 << subBits }, (_, q) => Math.round((q * ((1 << bits) - 1)) / ((1 << subBits) - 1)));
  const subMask = (1 << subBits) - 1;
  const nCells = 1 << (3 * bits), nSub = 1 << (3 * subBits);
  const cBest = new Int32Array(nCells).fill(-1), cAlt = new Int32Array(nCells), cNear = new Int32Array(nCells);
  const sEntry = new Int32Array(nSub).fill(-1), sConf = new Float32Array(nSub);
  const n = img.width * img.height;
  const angleRad = new Float32Array(n), confidence = new Float32Array(n), retardanceNm = new Float32Array(n), mask = new Uint8Array(n);
  const axis = train.compensator.axisDeg;
  const ref = options.referenceAxisDeg ?? axis - 45;
  checkNumber('reference axis', ref, -360, 360, 'deg');
  const mirror = lookup.mirrorAxisDeg;
  if (mirror === null) warnings.push('the train is not symmetric about the compensator axis: the full angle range was searched');
  // Reported angle per lookup row: of theta and its mirror image, the one nearer the reference axis.
  const rowAngleRad = Float32Array.from(lookup.anglesDeg, (a) => {
    let v = a;
    if (mirror !== null && axialDiffDeg(2 * mirror - a, ref) < axialDiffDeg(a, ref)) v = 2 * mirror - a;
    return wrapAxialDeg(v) * DEG;
  });
  const nR = lookup.retardancesNm.length, dims = lookup.dims, C = lookup.coords;
  const dist = (idx: number, q: number[]) => {
    if (idx < 0) return Infinity;
    let d = 0;
    for (let k = 0; k < dims; k++) d += (C[idx * dims + k] - q[k]) ** 2;
    return Math.sqrt(d);
  };
  let matched = 0, belowFloor = 0;
  for (let i = 0; i < n; i++) {
    const sub = subCells[i];
    if (sub < 0) continue;
    if (sEntry[sub] < 0) {
      const r = parentLevel[(sub >> (2 * subBits)) & subMask], g = parentLevel[(sub >> subBits) & subMask], b = parentLevel[sub & subMask];
      const cell = (r << (2 * bits)) | (g << bits) | b;
      if (cBest[cell] < 0) {
        const m = searcher.match(matchCoords(matchLabOfLinearRgb(cameraToModel(camera, cellLinearRgb(cell, bits))), space));
        cBest[cell] = m.bestIndex; cAlt[cell] = m.alternativeIndex; cNear[cell] = m.nearAlternativeIndex;
        matched++;
      }
      const q = matchCoords(matchLabOfLinearRgb(cameraToModel(camera, cellLinearRgb(sub, subBits))), space);
      const cand = [cBest[cell], cAlt[cell], cNear[cell]], d = cand.map((c) => dist(c, q));
      let pick = 0;
      if (d[1] < d[pick]) pick = 1;
      if (d[2] < d[pick]) pick = 2;
      const others = d.filter((_, k) => k !== pick);
      sEntry[sub] = cand[pick];
      sConf[sub] = matchConfidence({ distance: d[pick], alternativeDistance: Math.min(...others) } as LookupMatch);
    }
    const e = sEntry[sub], j = Math.floor(e / nR);
    angleRad[i] = rowAngleRad[j];
    retardanceNm[i] = lookup.retardancesNm[e - j * nR];
    confidence[i] = sConf[sub];
    if (retardanceNm[i] < floorNm) { belowFloor++; continue; }
    mask[i] = 1;
  }
  if (belowFloor > 0) warnings.push(`${belowFloor} pixels read below ${floorNm} nm (no measurable sample) were masked (${((100 * belowFloor) / n).toFixed(1)} %)`);
  if (saturated > 0) warnings.push(`${saturated} saturated pixels were masked (${((100 * saturated) / n).toFixed(2)} %)`);
  if (invalid > 0) warnings.push(`${invalid} pixels with values outside [0, 1] were masked`);
  const field: OrientationField = {
    width: img.width, height: img.height, angleRad, confidence, mask, retardanceNm,
    method: 'plate',
    ambiguity: mirror !== null ? 'mirror-about-compensator' : 'none',
    ambiguityAxisDeg: mirror !== null ? mirror : undefined,
    pixelSizeUmPerPx: img.pixelSizeUmPerPx,
    options: {
      polariserDeg: train.polariserDeg, analyserDeg: train.analyserDeg, compensatorNm: train.compensator.retardanceNm,
      compensatorDeg: axis, illuminant: train.illuminant, retardanceMaxNm: lookup.retardancesNm[lookup.retardancesNm.length - 1],
      match: space, birefringenceSign: sign, referenceAxisDeg: ref, cacheBits: bits, retardanceMinNm: floorNm,
      mirrorAssumption: mirror !== null ? `orientation taken within 45 deg of ${wrapAxialDeg(ref)} deg (of theta and ${2 * mirror} - theta, the nearer)` : 'none',
    },
    warnings,
  };
  return { field, calibration, lookup, cellsMatched: matched };
}

