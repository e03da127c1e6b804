import { checkNumber, InputError } from '../common/index.ts';
import { DEG, wrapAxialDeg } from '../common/index.ts';
import type { Image } from '../image/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import { colourModel } from './colourModel.ts';
import { CellColours, EffectiveRetardanceReader } from './effectiveRetardance.ts';
import { NEUTRAL_CAMERA, type CameraCalibration } from './camera.ts';
import { calibrateFromBackground, type CalibrationOptions, type PlateCalibration } from './calibration.ts';
import { buildPlateLookup, type PlateLookup } from './lookupTable.ts';
import { checkColourImage, quantiseInto, type Rect } from './pixels.ts';
import { registrationCheckOfImages, registrationShown, type RegistrationCheck } from './registration.ts';
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
  const cellsA = new CellColours(calA?.camera ?? options.camera ?? NEUTRAL_CAMERA, bits, readerA);
  const cellsB = new CellColours(calB?.camera ?? options.camera ?? NEUTRAL_CAMERA, bits, readerB);
  const lutA = buildPlateLookup(modelA, { retardanceMaxNm: gmax, birefringenceSign: sign, fullRange: true });
  const lutB = buildPlateLookup(modelB, { retardanceMaxNm: gmax, birefringenceSign: sign, fullRange: true });
  const search = new PairSearch(lutA, lutB, 1 << (3 * bits));
  const n = imgA.width * imgA.height;
  const angleRad = new Float32Array(n), confidence = new Float32Array(n), retardanceNm = new Float32Array(n), mask = new Uint8Array(n), clipped = new Uint8Array(n);
  // cos 2 theta and sin 2 theta per pixel, made once per distinct reading (the order statistics read these).
  const cos2 = new Float32Array(n), sin2 = new Float32Array(n);
  const axis = trainA.compensator.axisDeg;
  const nA = lutA.anglesDeg.length, nR = lutA.retardancesNm.length, aStep = lutA.anglesDeg[1] - lutA.anglesDeg[0], rStep = lutA.retardancesNm[1] - lutA.retardancesNm[0];
  let masked = 0, belowFloor = 0;
  // Pixels with the same pair of colour cells get the same reading.
  const pairs = new PairReadings(floorNm);
  const out = { angleRad, retardanceNm, confidence, cos2, sin2 };
  const qa = new Int32Array(Math.min(n, PAIR_BLOCK_PX)), qb = new Int32Array(qa.length);
  let lastA = -1, lastB = -1, lastHit = -1;
  for (let i0 = 0; i0 < n; i0 += PAIR_BLOCK_PX) {
    const len = Math.min(PAIR_BLOCK_PX, n - i0);
    quantiseInto(imgA, bits, i0, qa.subarray(0, len), clipped);
    quantiseInto(imgB, bits, i0, qb.subarray(0, len), clipped);
    for (let t = 0; t < len; t++) {
      const i = i0 + t, ca = qa[t], cb = qb[t];
      if (ca < 0 || cb < 0) { masked++; continue; }
      // Neighbouring pixels often share their pair of cells: the last pair's entry first.
      let hit = ca === lastA && cb === lastB ? lastHit : pairs.find(ca, cb);
      if (hit < 0) {
        cellsA.ensure(ca); cellsB.ensure(cb);
        // Candidates: the closed-form first-order reading, and along every angle row the retardance that best explains either image.
        const est = combinePlatePair(cellsA.eff[ca] - gpA, cellsB.eff[cb] - gpB, axis, turn);
        const estDeg = sign === -1 ? wrapAxialDeg(est.angleDeg - 90) : est.angleDeg;
        const bj = Math.round((wrapAxialDeg(estDeg) - lutA.anglesDeg[0]) / aStep) % nA;
        const bk = Math.min(nR - 1, Math.round(est.retardanceNm / rStep));
        const fine = search.read(cellsA.lab, ca, cellsB.lab, cb, bj, bk);
        const ret = fine.retardanceNm;
        const margin = Math.sqrt(fine.alternative / 2) - fine.residual;
        // The angle is undefined as the retardance goes to zero; residual and margin say how well and how uniquely both colours fit.
        hit = pairs.add(ca, cb, wrapAxialDeg(fine.angleDeg) * DEG, ret, Math.exp(-fine.residual / 10) * (1 - Math.exp(-margin / 4)) * (ret * ret) / (ret * ret + 400));
      }
      lastA = ca; lastB = cb; lastHit = hit;
      if (pairs.write(hit, i, out)) belowFloor++; else mask[i] = 1;
    }
  }
  if (masked > 0) warnings.push(`${masked} pixels at full scale (clipped) or invalid in one of the images were masked`);
  if (belowFloor > 0) warnings.push(`${belowFloor} pixels read below ${floorNm} nm (no measurable sample) were masked (${((100 * belowFloor) / n).toFixed(1)} %)`);
  const registration = registrationCheckOfImages(imgA, imgB);
  const maxShift = options.maxShiftPx ?? 1;
  if (!registrationShown(registration)) {
    warnings.push('the two images share too little structure to check that they line up (a shift along straight channel walls cannot be seen): make sure nothing moved between them');
  } else if (registration.shiftPx > maxShift) {
    warnings.push(`the two images are shifted by ${registration.shiftPx.toFixed(1)} px (dx ${registration.dxPx.toFixed(1)}, dy ${registration.dyPx.toFixed(1)}): register them before a pixel-by-pixel reading`);
  }
  const field: OrientationField = {
    width: imgA.width, height: imgA.height, angleRad, confidence, mask, retardanceNm, clipped, cos2, sin2,
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
/** Pixels per block: both images' colour cells are made a block at a time, not as whole planes. */
const PAIR_BLOCK_PX = 1 << 15;

/**
 * The reading of each distinct pair of colour cells, in an open-addressing table keyed by both cells whose entries
 * hold the reading itself (one cache line per look-up): cell A, cell B, then as float32 the angle, retardance,
 * confidence, cos 2 theta and sin 2 theta, and whether the retardance is below the floor.
 */
class PairReadings {
  private table = new ArrayBuffer(ENTRY_BYTES << 12);
  private ints = new Int32Array(this.table).fill(-1);
  private floats = new Float32Array(this.table);
  private count = 0;
  private shift = 32 - 12;

  constructor(private readonly floorNm: number) {}

  /** First slot tried for a pair: the high bits of a multiplicative (Fibonacci) hash of both cells. */
  private home(a: number, b: number): number {
    return Math.imul(a ^ Math.imul(b, 0x85ebca77), 0x9e3779b1) >>> this.shift;
  }

  /** Offset (in 4-byte words) of the pair's entry, or -1. */
  find(a: number, b: number): number {
    const t = this.ints, m = (t.length >> ENTRY_SHIFT) - 1;
    for (let h = this.home(a, b); ; h = (h + 1) & m) {
      const o = h << ENTRY_SHIFT, k = t[o];
      if (k < 0) return -1;
      if (k === a && t[o + 1] === b) return o;
    }
  }

  /** Writes the entry's reading into pixel i of the field's arrays; true when the retardance is below the floor. */
  write(o: number, i: number, f: { angleRad: Float32Array; retardanceNm: Float32Array; confidence: Float32Array; cos2: Float32Array; sin2: Float32Array }): boolean {
    const v = this.floats;
    f.angleRad[i] = v[o + 2]; f.retardanceNm[i] = v[o + 3]; f.confidence[i] = v[o + 4]; f.cos2[i] = v[o + 5]; f.sin2[i] = v[o + 6];
    return this.ints[o + 7] === 1;
  }

  /** Stores a new pair's reading; returns its entry's offset. */
  add(a: number, b: number, angleRad: number, retardanceNm: number, confidence: number): number {
    if (2 * ++this.count > this.ints.length >> ENTRY_SHIFT) {
      const old = this.ints;
      this.table = new ArrayBuffer(2 * this.table.byteLength);
      this.ints = new Int32Array(this.table).fill(-1); this.floats = new Float32Array(this.table);
      this.shift--;
      for (let o = 0; o < old.length; o += ENTRY_WORDS) if (old[o] >= 0) this.ints.set(old.subarray(o, o + ENTRY_WORDS), this.slotFor(old[o], old[o + 1]));
    }
    const o = this.slotFor(a, b), v = this.floats;
    this.ints[o] = a; this.ints[o + 1] = b;
    v[o + 2] = angleRad; v[o + 3] = retardanceNm; v[o + 4] = confidence;
    // Of the float32 angle, as the order statistics would make them from the field's angles.
    v[o + 5] = Math.cos(2 * v[o + 2]); v[o + 6] = Math.sin(2 * v[o + 2]);
    this.ints[o + 7] = retardanceNm < this.floorNm ? 1 : 0;
    return o;
  }

  /** Offset of the first free entry on the pair's probe sequence. */
  private slotFor(a: number, b: number): number {
    const t = this.ints, m = (t.length >> ENTRY_SHIFT) - 1;
    let h = this.home(a, b);
    while (t[h << ENTRY_SHIFT] >= 0) h = (h + 1) & m;
    return h << ENTRY_SHIFT;
  }
}
const ENTRY_SHIFT = 3, ENTRY_WORDS = 1 << ENTRY_SHIFT, ENTRY_BYTES = 4 * ENTRY_WORDS;

/**
 * The search of both images' lookups for one pair of colours: candidates along every ROW_STRIDE-th angle row (each
 * image's best retardance on the row, made once per colour cell), the best of them and the first-order estimate
 * refined locally, and the best candidate that differs by more than 3 deg or 30 nm.
 */
class PairSearch {
  private readonly nA: number;
  private readonly nR: number;
  private readonly nRows: number;
  private readonly rowsA: CellRows;
  private readonly rowsB: CellRows;
  private readonly costA: Float64Array;
  private readonly costB: Float64Array;

  constructor(private readonly lutA: PlateLookup, private readonly lutB: PlateLookup, nCells: number) {
    this.nA = lutA.anglesDeg.length; this.nR = lutA.retardancesNm.length;
    this.nRows = Math.ceil(this.nA / ROW_STRIDE);
    this.rowsA = new CellRows(lutA, nCells, this.nRows); this.rowsB = new CellRows(lutB, nCells, this.nRows);
    this.costA = new Float64Array(this.nRows); this.costB = new Float64Array(this.nRows);
  }

  /** Sum of squared Lab distances of both images to the lookup entry (j, k). */
  private cost(j: number, k: number, a0: number, a1: number, a2: number, b0: number, b1: number, b2: number): number {
    const o = 3 * (j * this.nR + k), A = this.lutA.coords, B = this.lutB.coords;
    const x = A[o] - a0, y = A[o + 1] - a1, z = A[o + 2] - a2, u = B[o] - b0, v = B[o + 1] - b1, w = B[o + 2] - b2;
    return x * x + y * y + z * z + u * u + v * v + w * w;
  }

  /** Reading of colour cells ca (Lab in labA) and cb (in labB), starting from the estimate (bj, bk). */
  read(labA: Float32Array, ca: number, labB: Float32Array, cb: number, bj: number, bk: number) {
    const a0 = labA[3 * ca], a1 = labA[3 * ca + 1], a2 = labA[3 * ca + 2], b0 = labB[3 * cb], b1 = labB[3 * cb + 1], b2 = labB[3 * cb + 2];
    const { nA, nR, nRows, costA, costB } = this;
    const ra = this.rowsA.of(ca, a0, a1, a2), oa = this.rowsA.offset(ca);
    const rb = this.rowsB.of(cb, b0, b1, b2), ob = this.rowsB.offset(cb);
    let best = this.cost(bj, bk, a0, a1, a2, b0, b1, b2);
    const A = this.lutA.coords, B = this.lutB.coords;
    for (let r = 0; r < nRows; r++) {
      const j = r * ROW_STRIDE, ka = ra[oa + r], kb = rb[ob + r];
      // cost(j, ka) and cost(j, kb), written out.
      let o = 3 * (j * nR + ka);
      let x = A[o] - a0, y = A[o + 1] - a1, z = A[o + 2] - a2, u = B[o] - b0, v = B[o + 1] - b1, w = B[o + 2] - b2;
      const da = x * x + y * y + z * z + u * u + v * v + w * w;
      costA[r] = da;
      if (da < best) { best = da; bj = j; bk = ka; }
      o = 3 * (j * nR + kb);
      x = A[o] - a0; y = A[o + 1] - a1; z = A[o + 2] - a2; u = B[o] - b0; v = B[o + 1] - b1; w = B[o + 2] - b2;
      const db = x * x + y * y + z * z + u * u + v * v + w * w;
      costB[r] = db;
      if (db < best) { best = db; bj = j; bk = kb; }
    }
    // Local search (+-3 deg, +-8 nm) minimising the summed squared Lab distance of both images.
    const aStep = this.lutA.anglesDeg[1] - this.lutA.anglesDeg[0], rStep = this.lutA.retardancesNm[1] - this.lutA.retardancesNm[0];
    const wa = Math.max(1, Math.round(3 / aStep)), wr = Math.max(1, Math.round(8 / rStep));
    let fine = Infinity, fj = bj, fk = bk;
    const kLo = Math.max(0, bk - wr), kHi = Math.min(nR - 1, bk + wr);
    for (let dj = -wa; dj <= wa; dj++) {
      const j = (((bj + dj) % nA) + nA) % nA;
      for (let k = kLo, o = 3 * (j * nR + kLo); k <= kHi; k++, o += 3) {
        const x = A[o] - a0, y = A[o + 1] - a1, z = A[o + 2] - a2, u = B[o] - b0, v = B[o + 1] - b1, w = B[o + 2] - b2;
        const d = x * x + y * y + z * z + u * u + v * v + w * w;
        if (d < fine) { fine = d; fj = j; fk = k; }
      }
    }
    const angleDeg = this.lutA.anglesDeg[fj], retardanceNm = this.lutA.retardancesNm[fk];
    // Best candidate that differs by more than 3 deg or 30 nm: how far the reading stands out.
    const gj = Math.round((angleDeg - this.lutA.anglesDeg[0]) / aStep), gk = Math.round(retardanceNm / rStep);
    let alternative = Infinity;
    for (let r = 0; r < nRows; r++) {
      let dj = Math.abs(r * ROW_STRIDE - gj) * aStep;
      if (dj > 90) dj = 180 - dj;
      const near = dj <= 3;
      if (!(near && Math.abs(ra[oa + r] - gk) * rStep <= 30)) alternative = Math.min(alternative, costA[r]);
      if (!(near && Math.abs(rb[ob + r] - gk) * rStep <= 30)) alternative = Math.min(alternative, costB[r]);
    }
    return { angleDeg, retardanceNm, residual: Math.sqrt(fine / 2), alternative };
  }
}

/** Coarse entries (every 4th retardance) per bounding box of the row scan. */
const BOX_ENTRIES = 8;

/**
 * For each colour cell met: on every ROW_STRIDE-th angle row, the retardance index nearest in Lab (coarse scan over
 * every 4th entry, then +-4 entries). The coarse scan skips runs of BOX_ENTRIES entries whose Lab bounding box lies
 * farther than the best entry found so far (starting from the previous row's): the same first nearest entry as a
 * full scan, since no entry in a box is nearer than the box (the bound is computed with the same monotone roundings).
 */
class CellRows {
  private readonly slot: Int32Array;
  private pool: Uint16Array;
  private count = 0;
  /** Per row and box: Lab minimum and maximum (6 numbers). */
  private readonly boxes: Float64Array;
  private readonly nBoxes: number;

  constructor(private readonly lut: PlateLookup, nCells: number, private readonly nRows: number) {
    this.slot = new Int32Array(nCells).fill(-1);
    this.pool = new Uint16Array(256 * nRows);
    const nR = lut.retardancesNm.length, C = lut.coords, nCoarse = Math.ceil(nR / 4);
    this.nBoxes = Math.ceil(nCoarse / BOX_ENTRIES);
    this.boxes = new Float64Array(nRows * this.nBoxes * 6);
    for (let r = 0; r < nRows; r++) for (let g = 0; g < this.nBoxes; g++) {
      const o = 6 * (r * this.nBoxes + g);
      this.boxes.fill(Infinity, o, o + 3); this.boxes.fill(-Infinity, o + 3, o + 6);
      for (let k = 4 * BOX_ENTRIES * g; k < Math.min(nR, 4 * BOX_ENTRIES * (g + 1)); k += 4) {
        const q = 3 * (r * ROW_STRIDE * nR + k);
        for (let d = 0; d < 3; d++) {
          this.boxes[o + d] = Math.min(this.boxes[o + d], C[q + d]);
          this.boxes[o + 3 + d] = Math.max(this.boxes[o + 3 + d], C[q + d]);
        }
      }
    }
  }

  /** Where the cell's rows start in the array `of` returns (valid after `of`). */
  offset(cell: number): number {
    return this.slot[cell] * this.nRows;
  }

  /** The array holding the cell's rows (made now if the cell is new; colour l0, l1, l2). */
  of(cell: number, l0: number, l1: number, l2: number): Uint16Array {
    if (this.slot[cell] >= 0) return this.pool;
    const s = this.count++;
    if ((s + 1) * this.nRows > this.pool.length) {
      const p = new Uint16Array(2 * this.pool.length);
      p.set(this.pool);
      this.pool = p;
    }
    this.slot[cell] = s;
    const nR = this.lut.retardancesNm.length, C = this.lut.coords, rows = this.pool, o = s * this.nRows;
    const B = this.boxes, nBoxes = this.nBoxes;
    let guess = 0;
    for (let r = 0; r < this.nRows; r++) {
      const base = 3 * r * ROW_STRIDE * nR;
      // The first nearest coarse entry: (distance, index) smallest in that order, starting from the previous row's.
      let bk = guess, bd = 0;
      {
        const q = base + 3 * guess, a = C[q] - l0, b = C[q + 1] - l1, c = C[q + 2] - l2;
        bd = a * a + b * b + c * c;
      }
      for (let g = 0, ob = 6 * r * nBoxes; g < nBoxes; g++, ob += 6) {
        const x = Math.max(B[ob] - l0, l0 - B[ob + 3], 0), y = Math.max(B[ob + 1] - l1, l1 - B[ob + 4], 0), z = Math.max(B[ob + 2] - l2, l2 - B[ob + 5], 0);
        if (x * x + y * y + z * z > bd) continue;
        const kEnd = Math.min(nR, 4 * BOX_ENTRIES * (g + 1));
        for (let k = 4 * BOX_ENTRIES * g; k < kEnd; k += 4) {
          const q = base + 3 * k, a = C[q] - l0, b = C[q + 1] - l1, c = C[q + 2] - l2, v = a * a + b * b + c * c;
          if (v < bd || (v === bd && k < bk)) { bd = v; bk = k; }
        }
      }
      guess = bk;
      // The window's upper end follows the best found so far (as it always has: the same rows as before).
      for (let k = Math.max(0, bk - 4); k <= Math.min(nR - 1, bk + 4); k++) {
        const q = base + 3 * k, a = C[q] - l0, b = C[q + 1] - l1, c = C[q + 2] - l2, v = a * a + b * b + c * c;
        if (v < bd) { bd = v; bk = k; }
      }
      rows[o + r] = bk;
    }
    return rows;
  }
}
