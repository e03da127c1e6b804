import { checkNumber, InputError } from '../common/index.ts';
import { DEG, wrapAxialDeg } from '../common/index.ts';
import { toGrey, type Image } from '../image/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import { colourModel } from './colourModel.ts';
import { EffectiveRetardanceReader, readCells } from './effectiveRetardance.ts';
import { NEUTRAL_CAMERA, type CameraCalibration } from './camera.ts';
import { calibrateFromBackground, type CalibrationOptions, type PlateCalibration } from './calibration.ts';
import { buildPlateLookup, type PlateLookup } from './lookupTable.ts';
import { checkColourImage, clippedPixels, type Rect } from './pixels.ts';
import { registrationCheck, registrationShown, type RegistrationCheck } from './registration.ts';
import { resolveTrain, type OpticalTrain } from './train.ts';

export interface PlatePairOptions {
  train?: Partial<OpticalTrain>;
  /**
   * How far the polariser-compensator-analyser assembly was turned for image B, deg (default +45). The
   * sample turned by -45 deg is optically the same, but a turned stage also turns the picture: image B
   * must then be turned back (registered) before this pixel-by-pixel reading.
   */
  turnDeg?: number;
  retardanceMaxNm?: number;
  birefringenceSign?: 1 | -1;
  background?: Rect;
  /** Sample-free rectangle in image B (default: the same as in A). */
  backgroundB?: Rect;
  calibration?: CalibrationOptions;
  camera?: CameraCalibration;
  /** Warn when the images are shifted by more than this, px (default 1). */
  maxShiftPx?: number;
  cacheBits?: number;
  /**
   * Pixels read below this retardance show no measurable sample (background): their angle is undefined
   * (confidence ~0), so they are masked and counted rather than averaged in. Default 20 nm; 0 keeps every pixel.
   */
  retardanceMinNm?: number;
}

export interface PlatePairReading {
  field: OrientationField;
  calibrationA: PlateCalibration | null;
  calibrationB: PlateCalibration | null;
  registration: RegistrationCheck;
}

/** The train of image B: polariser, analyser and compensator all turned by turnDeg. */
export function turnedTrain(t: OpticalTrain, turnDeg: number): OpticalTrain {
  return {
    ...t, polariserDeg: t.polariserDeg + turnDeg, analyserDeg: t.analyserDeg + turnDeg,
    compensator: t.compensator ? { ...t.compensator, axisDeg: t.compensator.axisDeg + turnDeg } : null,
  };
}

/**
 * Combines the first-order plate readings of two images, u = Gamma_eff,A - Gamma_p = Gamma cos 2(theta - a) and
 * w = Gamma_eff,B - Gamma_p = Gamma cos 2(theta - a - t) (plate axis a, turn t): with X = u and
 * Y = (w - u cos 2t) / sin 2t, theta = a + atan2(Y, X) / 2 and Gamma = hypot(X, Y). For t = 45 deg and a = 45 deg this is
 * theta = 1/2 atan2(u, -v), Gamma = sqrt(u^2 + v^2) with v = w (docs/methods.md §5.1 "Closed form"). Angles in degrees.
 */
export function combinePlatePair(uNm: number, wNm: number, compensatorDeg = 45, turnDeg = 45): { angleDeg: number; retardanceNm: number } {
  const t2 = 2 * turnDeg * DEG;
  const X = uNm, Y = (wNm - uNm * Math.cos(t2)) / Math.sin(t2);
  return { angleDeg: wrapAxialDeg(compensatorDeg + (0.5 * Math.atan2(Y, X)) / DEG), retardanceNm: Math.hypot(X, Y) };
}

/**
 * Two compensator images, the second with the assembly turned by 45 deg (docs/methods.md §5): the full
 * orientation over 180 deg and the retardance per pixel. Candidates: the closed-form first-order reading (each
 * image's effective retardance from its colour) and, along every second angle row of the exact spectral lookup,
 * the retardance that best explains either image; the best candidate by the summed Lab distance of both images is
 * refined locally (1 deg, 2 nm). Confidence combines residual, margin to the best distinct candidate (> 3 deg or
 * > 30 nm) and retardance (the angle is undefined as Gamma -> 0). Registration is checked by phase correlation.
 */
export function readPlatePair(imgA: Image, imgB: Image, options: PlatePairOptions = {}): PlatePairReading {
  checkColourImage(imgA, 'reading a compensator image');
  checkColourImage(imgB, 'reading a compensator image');
  if (imgA.width !== imgB.width || imgA.height !== imgB.height) {
    throw new InputError(`the two plate images differ in size (${imgA.width}x${imgA.height} and ${imgB.width}x${imgB.height})`, 'Take both images with the same camera settings');
  }
  const turn = checkNumber('turn between the images', options.turnDeg ?? 45, -180, 180, 'deg');
  if (Math.abs(Math.sin(2 * turn * DEG)) < 0.3) {
    throw new InputError(`a turn of ${turn} deg between the images cannot separate the angles`, 'Turn the assembly (or the sample) by 45 deg between the two images');
  }
  const gmax = checkNumber('maximum retardance', options.retardanceMaxNm ?? 800, 10, 3000, 'nm');
  const bits = checkNumber('cache bits', options.cacheBits ?? 6, 4, 7);
  const floorNm = checkNumber('smallest retardance read', options.retardanceMinNm ?? 20, 0, 500, 'nm');
  const sign = options.birefringenceSign ?? 1;
  const trainA = resolveTrain(options.train);
  if (!trainA.compensator) throw new InputError('the two-image reading needs a compensator in the train', 'Give the compensator retardance and angle');
  const warnings: string[] = [];
  const calib = (img: Image, rect: Rect | undefined, train: OpticalTrain) => rect ? calibrateFromBackground(img, rect, train, { camera: options.camera, ...options.calibration }) : null;
  const calA = calib(imgA, options.background, trainA);
  const trainB = turnedTrain(trainA, turn);
  const calB = calib(imgB, options.backgroundB ?? options.background, trainB);
  if (calA) trainA.compensator = { ...trainA.compensator, retardanceNm: calA.compensatorNm };
  if (calB) trainB.compensator = { ...trainB.compensator!, retardanceNm: calB.compensatorNm };
  if (!calA && !options.camera) warnings.push('no sample-free area: exposure and white balance were taken as they are; give one (--sample-free x,y,w,h) for a calibrated reading');
  const gpA = trainA.compensator.retardanceNm, gpB = trainB.compensator!.retardanceNm;
  const modelA = colourModel(trainA), modelB = colourModel(trainB);
  const readerA = new EffectiveRetardanceReader(modelA, Math.max(0, gpA - gmax), gpA + gmax);
  const readerB = new EffectiveRetardanceReader(modelB, Math.max(0, gpB - gmax), gpB + gmax);
  const A = readCells(imgA, calA?.camera ?? options.camera ?? NEUTRAL_CAMERA, bits, readerA);
  const B = readCells(imgB, calB?.camera ?? options.camera ?? NEUTRAL_CAMERA, bits, readerB);
  const lutA = buildPlateLookup(modelA, { retardanceMaxNm: gmax, birefringenceSign: sign, fullRange: true });
  const lutB = buildPlateLookup(modelB, { retardanceMaxNm: gmax, birefringenceSign: sign, fullRange: true });
  const rowsA = new Map<number, Uint16Array>(), rowsB = new Map<number, Uint16Array>();
  const n = imgA.width * imgA.height;
  const angleRad = new Float32Array(n), confidence = new Float32Array(n), retardanceNm = new Float32Array(n), mask = new Uint8Array(n);
  const axis = trainA.compensator.axisDeg;
  const nR = lutA.retardancesNm.length, aStep = lutA.anglesDeg[1] - lutA.anglesDeg[0], rStep = lutA.retardancesNm[1] - lutA.retardancesNm[0];
  let masked = 0, belowFloor = 0;
  // Pixels with the same pair of colour cells get the same reading.
  const pairCache = new Map<number, number>();
  const pAngle: number[] = [], pRet: number[] = [], pConf: number[] = [];
  for (let i = 0; i < n; i++) {
    const ca = A.cells[i], cb = B.cells[i];
    if (ca < 0 || cb < 0) { masked++; continue; }
    const key = ca * 2 ** 21 + cb, hit = pairCache.get(key);
    if (hit !== undefined) {
      angleRad[i] = pAngle[hit]; retardanceNm[i] = pRet[hit]; confidence[i] = pConf[hit];
      if (pRet[hit] < floorNm) belowFloor++; else mask[i] = 1;
      continue;
    }
    const la = A.lab.subarray(3 * ca, 3 * ca + 3), lb = B.lab.subarray(3 * cb, 3 * cb + 3);
    // Candidates: the closed-form first-order reading, and along every angle row the retardance that best explains either image.
    const est = combinePlatePair(A.eff[ca] - gpA, B.eff[cb] - gpB, axis, turn);
    const estDeg = sign === -1 ? wrapAxialDeg(est.angleDeg - 90) : est.angleDeg;
    let bj = Math.round((wrapAxialDeg(estDeg) - lutA.anglesDeg[0]) / aStep) % lutA.anglesDeg.length;
    let bk = Math.min(nR - 1, Math.round(est.retardanceNm / rStep));
    let best = pairCost(lutA, lutB, la, lb, bj, bk);
    const ra = rowBestOf(rowsA, ca, lutA, la), rb = rowBestOf(rowsB, cb, lutB, lb);
    for (let r = 0; r < ra.length; r++) {
      const j = r * ROW_STRIDE;
      for (const k of [ra[r], rb[r]]) {
        const d = pairCost(lutA, lutB, la, lb, j, k);
        if (d < best) { best = d; bj = j; bk = k; }
      }
    }
    const fine = refinePair(lutA, lutB, la, lb, bj, bk);
    const ret = fine.retardanceNm;
    // Best candidate that differs by more than 3 deg or 30 nm: how far the reading stands out.
    const fj = Math.round((fine.angleDeg - lutA.anglesDeg[0]) / aStep), fk = Math.round(ret / rStep);
    let alt = Infinity;
    for (let r = 0; r < ra.length; r++) {
      const j = r * ROW_STRIDE;
      let dj = Math.abs(j - fj) * aStep;
      if (dj > 90) dj = 180 - dj;
      for (const k of [ra[r], rb[r]]) {
        if (dj <= 3 && Math.abs(k - fk) * rStep <= 30) continue;
        alt = Math.min(alt, pairCost(lutA, lutB, la, lb, j, k));
      }
    }
    const margin = Math.sqrt(alt / 2) - fine.residual;
    angleRad[i] = wrapAxialDeg(fine.angleDeg) * DEG;
    retardanceNm[i] = ret;
    // The angle is undefined as the retardance goes to zero; residual and margin say how well and how uniquely both colours fit.
    confidence[i] = Math.exp(-fine.residual / 10) * (1 - Math.exp(-margin / 4)) * (ret * ret) / (ret * ret + 400);
    if (ret < floorNm) belowFloor++; else mask[i] = 1;
    pairCache.set(key, pAngle.length);
    pAngle.push(angleRad[i]); pRet.push(ret); pConf.push(confidence[i]);
  }
  if (masked > 0) warnings.push(`${masked} pixels at full scale (clipped) or invalid in one of the images were masked`);
  if (belowFloor > 0) warnings.push(`${belowFloor} pixels read below ${floorNm} nm (no measurable sample) were masked (${((100 * belowFloor) / n).toFixed(1)} %)`);
  const registration = registrationCheck(toGrey(imgA), toGrey(imgB));
  const maxShift = options.maxShiftPx ?? 1;
  if (!registrationShown(registration)) {
    warnings.push('the two images share too little structure to check that they line up (a shift along straight channel walls cannot be seen): make sure nothing moved between them');
  } else if (registration.shiftPx > maxShift) {
    warnings.push(`the two images are shifted by ${registration.shiftPx.toFixed(1)} px (dx ${registration.dxPx.toFixed(1)}, dy ${registration.dyPx.toFixed(1)}): register them before a pixel-by-pixel reading`);
  }
  const field: OrientationField = {
    width: imgA.width, height: imgA.height, angleRad, confidence, mask, retardanceNm, clipped: clippedPixels([imgA, imgB]),
    method: 'plate-pair', ambiguity: 'none', pixelSizeUmPerPx: imgA.pixelSizeUmPerPx,
    options: {
      polariserDeg: trainA.polariserDeg, analyserDeg: trainA.analyserDeg, compensatorDeg: axis, compensatorNmA: gpA, compensatorNmB: gpB,
      turnDeg: turn, illuminant: trainA.illuminant, retardanceMaxNm: gmax, birefringenceSign: sign, cacheBits: bits, retardanceMinNm: floorNm,
    },
    warnings,
  };
  return { field, calibrationA: calA, calibrationB: calB, registration };
}

const ROW_STRIDE = 2;

/** Sum of squared Lab distances of both images to the lookup entry (j, k). */
function pairCost(lutA: PlateLookup, lutB: PlateLookup, la: Float32Array, lb: Float32Array, j: number, k: number): number {
  const o = 3 * (j * lutA.retardancesNm.length + k), A = lutA.coords, B = lutB.coords;
  const x = A[o] - la[0], y = A[o + 1] - la[1], z = A[o + 2] - la[2], u = B[o] - lb[0], v = B[o + 1] - lb[1], w = B[o + 2] - lb[2];
  return x * x + y * y + z * z + u * u + v * v + w * w;
}

/** For one colour cell: on every ROW_STRIDE-th angle row, the retardance index nearest in Lab (coarse scan, then +-4 entries). */
function rowBestOf(cache: Map<number, Uint16Array>, cell: number, lut: PlateLookup, lab: Float32Array): Uint16Array {
  const hit = cache.get(cell);
  if (hit) return hit;
  const nA = lut.anglesDeg.length, nR = lut.retardancesNm.length, C = lut.coords;
  const rows = new Uint16Array(Math.ceil(nA / ROW_STRIDE));
  const d = (j: number, k: number) => { const o = 3 * (j * nR + k), a = C[o] - lab[0], b = C[o + 1] - lab[1], c = C[o + 2] - lab[2]; return a * a + b * b + c * c; };
  for (let r = 0; r < rows.length; r++) {
    const j = r * ROW_STRIDE;
    let bk = 0, bd = Infinity;
    for (let k = 0; k < nR; k += 4) { const v = d(j, k); if (v < bd) { bd = v; bk = k; } }
    for (let k = Math.max(0, bk - 4); k <= Math.min(nR - 1, bk + 4); k++) { const v = d(j, k); if (v < bd) { bd = v; bk = k; } }
    rows[r] = bk;
  }
  cache.set(cell, rows);
  return rows;
}

/** Local search (+-3 deg, +-8 nm) minimising the summed squared Lab distance of both images. */
function refinePair(lutA: PlateLookup, lutB: PlateLookup, la: Float32Array, lb: Float32Array, j0: number, k0: number) {
  const nA = lutA.anglesDeg.length, nR = lutA.retardancesNm.length;
  const aStep = lutA.anglesDeg[1] - lutA.anglesDeg[0], rStep = lutA.retardancesNm[1] - lutA.retardancesNm[0];
  const wa = Math.max(1, Math.round(3 / aStep)), wr = Math.max(1, Math.round(8 / rStep));
  let best = Infinity, bj = j0, bk = k0;
  for (let dj = -wa; dj <= wa; dj++) {
    const j = (((j0 + dj) % nA) + nA) % nA;
    for (let k = Math.max(0, k0 - wr); k <= Math.min(nR - 1, k0 + wr); k++) {
      const d = pairCost(lutA, lutB, la, lb, j, k);
      if (d < best) { best = d; bj = j; bk = k; }
    }
  }
  return { angleDeg: lutA.anglesDeg[bj], retardanceNm: lutA.retardancesNm[bk], residual: Math.sqrt(best / 2) };
}
