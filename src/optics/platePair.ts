import { checkNumber, InputError } from '../common/index.ts';
import { DEG, wrapAxialDeg } from '../common/index.ts';
import type { Image } from '../image/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import { colourModel } from './colourModel.ts';
import { CellColours, EffectiveRetardanceReader } from './effectiveRetardance.ts';
import { NEUTRAL_CAMERA, type CameraCalibration } from './camera.ts';
import { calibrateFromBackground, type CalibrationOptions, type PlateCalibration } from './calibration.ts';
import { buildPlateLookup, type PlateLookup } from './lookupTable.ts';
import { checkColourImage, FULL_SCALE_LEVEL, linearLevelTable, type Rect } from './pixels.ts';
import { opticsKernel, OpticsLayout, type OpticsKernelExports } from '../wasm/index.ts';
import { registrationCheckOfImages, registrationShown, type RegistrationCheck } from './registration.ts';
import { resolveTrain, type OpticalTrain } from './train.ts';
import type { ReadingCounts } from './ranks.ts';

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
  /** The field's usable pixels by their readings, for its statistics without another pass over the pixels. */
  counts: ReadingCounts;
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
  const readerA = EffectiveRetardanceReader.of(modelA, Math.max(0, gpA - gmax), gpA + gmax);
  const readerB = EffectiveRetardanceReader.of(modelB, Math.max(0, gpB - gmax), gpB + gmax);
  const cellsA = new CellColours(calA?.camera ?? options.camera ?? NEUTRAL_CAMERA, bits, readerA);
  const cellsB = new CellColours(calB?.camera ?? options.camera ?? NEUTRAL_CAMERA, bits, readerB);
  const lutA = buildPlateLookup(modelA, { retardanceMaxNm: gmax, birefringenceSign: sign, fullRange: true });
  const lutB = buildPlateLookup(modelB, { retardanceMaxNm: gmax, birefringenceSign: sign, fullRange: true });
  const n = imgA.width * imgA.height;
  const angleRad = new Float32Array(n), confidence = new Float32Array(n), retardanceNm = new Float32Array(n), mask = new Uint8Array(n), clipped = new Uint8Array(n);
  // cos 2 theta and sin 2 theta per pixel, made once per distinct reading (the order statistics read these).
  const cos2 = new Float32Array(n), sin2 = new Float32Array(n);
  const axis = trainA.compensator.axisDeg;
  const nA = lutA.anglesDeg.length, nR = lutA.retardancesNm.length, aStep = lutA.anglesDeg[1] - lutA.anglesDeg[0], rStep = lutA.retardancesNm[1] - lutA.retardancesNm[0];
  // The pixels a block at a time in the optics kernel (src/wasm/opticsKernel.as.ts): pairCells gives each pixel the
  // entry of its pair of colour cells in a table of readings, listing the pairs met for the first time, which are read
  // here; pairWrite gives every pixel its entry's reading. Pixels with the same pair of cells get the same reading.
  const k = opticsKernel(), mem = new OpticsLayout(k), B = Math.min(n, PAIR_BLOCK_PX);
  const search = new PairSearch(lutA, lutB, 1 << (3 * bits), mem);
  const rgbAt = mem.reserve(24 * B), clipAt = mem.reserve(B), hitsAt = mem.reserve(4 * B), cellsBAt = mem.reserve(4 * B), freshAt = mem.reserve(4 * B), countsAt = mem.reserve(4);
  const cacheAt = mem.reserve(12 * PAIR_CACHE_ENTRIES), sumAt = mem.reserve(8);
  const outAt = [0, 1, 2, 3, 4].map(() => mem.reserve(4 * B)), maskAt = mem.reserve(B);
  const levelsAAt = imgA.encoding === 'linear' ? mem.reserve(4 * 4097) : 0, levelsBAt = imgB.encoding === 'linear' ? mem.reserve(4 * 4097) : 0;
  // The table is laid out last; when it would be more than half full its entries move to a table twice the size laid
  // out after it, which is then copied down to where the table starts.
  let shift = 32 - 12, entries = 0;
  const tableAt = mem.reserve(PAIR_ENTRY_BYTES << (32 - shift));
  mem.commit();
  search.load();
  if (levelsAAt) mem.i32(levelsAAt, 4097).set(linearLevelTable(bits));
  if (levelsBAt) mem.i32(levelsBAt, 4097).set(linearLevelTable(bits));
  mem.i32(tableAt, (PAIR_ENTRY_BYTES / 4) << (32 - shift)).fill(-1);
  mem.i32(cacheAt, 3 * PAIR_CACHE_ENTRIES).fill(-1);
  mem.i32(countsAt, 1).fill(0);
  mem.f64(sumAt, 1).fill(0);
  let belowFloor = 0, masked = 0;
  for (let i0 = 0; i0 < n; i0 += B) {
    const len = Math.min(B, n - i0), i1 = i0 + len;
    while (2 * (entries + len) > 1 << (32 - shift)) {
      const size = PAIR_ENTRY_BYTES << (33 - shift), to = mem.reserve(size);
      mem.commit();
      mem.i32(to, size / 4).fill(-1);
      k.pairRehash(tableAt, shift, to, shift - 1);
      new Uint8Array(k.memory.buffer).copyWithin(tableAt, to, to + size);
      mem.release(tableAt + size);
      shift--;
      // The cache holds entry offsets of the old table.
      mem.i32(cacheAt, 3 * PAIR_CACHE_ENTRIES).fill(-1);
    }
    [imgA, imgB].forEach((img, j) => { for (let c = 0; c < 3; c++) mem.f32(rgbAt + 4 * B * (3 * j + c), B).set(img.planes[c].subarray(i0, i1)); });
    mem.u8(clipAt, B).fill(0);
    const nFresh = k.pairCells(rgbAt, rgbAt + 4 * B, rgbAt + 8 * B, rgbAt + 12 * B, rgbAt + 16 * B, rgbAt + 20 * B, len, bits, FULL_SCALE_LEVEL, levelsAAt, levelsBAt,
      clipAt, tableAt, shift, cacheAt, hitsAt, cellsBAt, freshAt, countsAt);
    entries += nFresh;
    const fresh = mem.i32(freshAt, nFresh), ints = mem.i32(tableAt, (PAIR_ENTRY_BYTES / 4) << (32 - shift)), floats = mem.f32(tableAt, ints.length);
    // Each new cell's colour and its best retardance per angle row, all the block's new cells at once.
    for (let f = 0; f < nFresh; f++) {
      const o = fresh[f] >> 2, ca = ints[o], cb = ints[o + 1];
      cellsA.ensure(ca); cellsB.ensure(cb);
      search.need(ca, cellsA.lab, cb, cellsB.lab);
    }
    search.makeRows();
    for (let f = 0; f < nFresh; f++) {
      const o = fresh[f] >> 2, ca = ints[o], cb = ints[o + 1];
      // Candidates: the closed-form first-order reading, and along every angle row the retardance that best explains either image.
      const est = combinePlatePair(cellsA.eff[ca] - gpA, cellsB.eff[cb] - gpB, axis, turn);
      const estDeg = sign === -1 ? wrapAxialDeg(est.angleDeg - 90) : est.angleDeg;
      const bj = Math.round((wrapAxialDeg(estDeg) - lutA.anglesDeg[0]) / aStep) % nA;
      const bk = Math.min(nR - 1, Math.round(est.retardanceNm / rStep));
      const fine = search.read(cellsA.lab, ca, cellsB.lab, cb, bj, bk);
      const ret = fine.retardanceNm;
      const margin = Math.sqrt(fine.alternative / 2) - fine.residual;
      // The angle is undefined as the retardance goes to zero; residual and margin say how well and how uniquely both colours fit.
      floats[o + 2] = wrapAxialDeg(fine.angleDeg) * DEG; floats[o + 3] = ret;
      floats[o + 4] = Math.exp(-fine.residual / 10) * (1 - Math.exp(-margin / 4)) * (ret * ret) / (ret * ret + 400);
      // Of the float32 angle, as the order statistics would make them from the field's angles.
      floats[o + 5] = Math.cos(2 * floats[o + 2]); floats[o + 6] = Math.sin(2 * floats[o + 2]);
      ints[o + 7] = ret < floorNm ? 1 : 0;
    }
    const below = k.pairWrite(hitsAt, len, tableAt, outAt[0], outAt[1], outAt[2], outAt[3], outAt[4], maskAt, sumAt);
    belowFloor += below;
    const unusable = mem.i32(countsAt, 1)[0] - masked;
    masked += unusable;
    [angleRad, retardanceNm, confidence, cos2, sin2].forEach((a, j) => a.set(mem.f32(outAt[j], len), i0));
    // Mask and clipped flags only where the block has some (the arrays' untouched pages take no memory).
    if (below + unusable < len) mask.set(mem.u8(maskAt, len), i0);
    if (unusable > 0) clipped.set(mem.u8(clipAt, len), i0);
  }
  const counts = readingCountsOfTable(mem.i32(tableAt, (PAIR_ENTRY_BYTES / 4) << (32 - shift)), mem.f64(sumAt, 1)[0]);
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
  return { field, calibrationA: calA, calibrationB: calB, registration, counts };
}

/**
 * The usable pixels by their readings (ReadingCounts) from the table of pair readings as pairWrite left it: each
 * entry's confidence, retardance and count (its last int32 is masked + 2 x the count of its pixels left usable).
 */
function readingCountsOfTable(ints: Int32Array, confidenceSum: number): ReadingCounts {
  const floats = new Float32Array(ints.buffer, ints.byteOffset, ints.length), W = PAIR_ENTRY_BYTES / 4;
  let m = 0;
  for (let o = 0; o < ints.length; o += W) if (ints[o] !== -1 && ints[o + 7] >> 1 > 0) m++;
  const confidence = new Float32Array(m), retardanceNm = new Float32Array(m), pixels = new Int32Array(m);
  for (let o = 0, j = 0; o < ints.length; o += W) {
    if (ints[o] === -1 || ints[o + 7] >> 1 === 0) continue;
    retardanceNm[j] = floats[o + 3]; confidence[j] = floats[o + 4]; pixels[j++] = ints[o + 7] >> 1;
  }
  return { confidence, retardanceNm, pixels, confidenceSum };
}

const ROW_STRIDE = 2;
/** Pixels per block: both images' colour cells are made a block at a time, not as whole planes. */
const PAIR_BLOCK_PX = 1 << 15;

/** Bytes per entry of the table of pair readings (src/wasm/opticsKernel.as.ts, PAIR_ENTRY_BYTES): cell A, cell B, then as
 * float32 the angle, retardance, confidence, cos 2 theta and sin 2 theta, and whether the retardance is below the floor. */
const PAIR_ENTRY_BYTES = 32;
/** Entries of the kernel's cache of recent pairs (its PAIR_CACHE_BITS). */
const PAIR_CACHE_ENTRIES = 1 << 12;

/**
 * The search of both images' lookups for one pair of colours: candidates along every ROW_STRIDE-th angle row (each
 * image's best retardance on the row, made once per colour cell), the best of them and the first-order estimate
 * refined locally, and the best candidate that differs by more than 3 deg or 30 nm. Run by the optics kernel
 * (src/wasm/opticsKernel.as.ts: cellRows, pairRead) on copies of both lookups in its memory.
 */
class PairSearch {
  private readonly nA: number;
  private readonly nR: number;
  private readonly nRows: number;
  private readonly rowsA: CellRows;
  private readonly rowsB: CellRows;
  private readonly k: OpticsKernelExports;
  /** Byte offsets in the kernel's memory: both lookups' Lab, angles and retardances, each image's two rows, costs, result. */
  private readonly at: { C: number; D: number; angles: number; rets: number; ra: number; rb: number; costs: number; out: number };
  /** Views of the kernel's memory at `at` (remade when the memory grows). */
  private views: { buffer: ArrayBuffer; ra: Uint16Array; rb: Uint16Array; outI: Int32Array; outF: Float64Array } | null = null;

  constructor(private readonly lutA: PlateLookup, private readonly lutB: PlateLookup, nCells: number, private readonly mem: OpticsLayout) {
    this.nA = lutA.anglesDeg.length; this.nR = lutA.retardancesNm.length;
    this.nRows = Math.ceil(this.nA / ROW_STRIDE);
    this.k = mem.k;
    // Both lookups' Lab interleaved, A's then B's for each entry: a candidate's two colours lie side by side.
    const C = mem.reserve(8 * lutA.coords.length), D = C + 12;
    this.at = {
      C, D, angles: mem.reserve(8 * this.nA), rets: mem.reserve(8 * this.nR), ra: mem.reserve(2 * this.nRows), rb: mem.reserve(2 * this.nRows),
      costs: mem.reserve(16 * this.nRows), out: mem.reserve(24),
    };
    const batch = new CellBatch(this.nRows, mem);
    this.rowsA = new CellRows(lutA, nCells, this.nRows, mem, C, batch); this.rowsB = new CellRows(lutB, nCells, this.nRows, mem, D, batch);
  }

  /** Writes the lookups into the kernel's memory (after the layout's commit). */
  load(): void {
    const { mem, at } = this;
    const ab = mem.f32(at.C, 2 * this.lutA.coords.length), A = this.lutA.coords, B = this.lutB.coords;
    for (let e = 0; e < A.length / 3; e++) for (let d = 0; d < 3; d++) { ab[6 * e + d] = A[3 * e + d]; ab[6 * e + 3 + d] = B[3 * e + d]; }
    mem.f64(at.angles, this.nA).set(this.lutA.anglesDeg); mem.f64(at.rets, this.nR).set(this.lutA.retardancesNm);
    this.rowsA.load(); this.rowsB.load();
  }

  /** Notes that the rows of cells ca (Lab in labA) and cb (in labB) will be read (made by makeRows unless made). */
  need(ca: number, labA: Float32Array, cb: number, labB: Float32Array): void {
    this.rowsA.need(ca, labA); this.rowsB.need(cb, labB);
  }

  /** Makes the rows of the cells noted since the last call. */
  makeRows(): void {
    this.rowsA.make(); this.rowsB.make();
  }

  /** Reading of colour cells ca (Lab in labA) and cb (in labB), starting from the estimate (bj, bk); their rows made. */
  read(labA: Float32Array, ca: number, labB: Float32Array, cb: number, bj: number, bk: number) {
    const a0 = labA[3 * ca], a1 = labA[3 * ca + 1], a2 = labA[3 * ca + 2], b0 = labB[3 * cb], b1 = labB[3 * cb + 1], b2 = labB[3 * cb + 2];
    const { at, nRows } = this;
    const buffer = this.k.memory.buffer;
    if (this.views?.buffer !== buffer) {
      this.views = { buffer, ra: new Uint16Array(buffer, at.ra, nRows), rb: new Uint16Array(buffer, at.rb, nRows), outI: new Int32Array(buffer, at.out, 2), outF: new Float64Array(buffer, at.out + 8, 2) };
    }
    const v = this.views;
    // Each image's rows for its cell, where pairRead reads them.
    const oa = this.rowsA.offset(ca), ob = this.rowsB.offset(cb);
    v.ra.set(this.rowsA.pool.subarray(oa, oa + nRows)); v.rb.set(this.rowsB.pool.subarray(ob, ob + nRows));
    const aStep = this.lutA.anglesDeg[1] - this.lutA.anglesDeg[0], rStep = this.lutA.retardancesNm[1] - this.lutA.retardancesNm[0];
    this.k.pairRead(at.C, at.D, LAB_PAIR_FLOATS, this.nA, this.nR, ROW_STRIDE, nRows, at.angles, at.rets, aStep, rStep, a0, a1, a2, b0, b1, b2, at.ra, at.rb, bj, bk, at.costs, at.out);
    const fj = v.outI[0], fk = v.outI[1], fine = v.outF[0], alternative = v.outF[1];
    return { angleDeg: this.lutA.anglesDeg[fj], retardanceNm: this.lutA.retardancesNm[fk], residual: Math.sqrt(fine / 2), alternative };
  }
}

/** Float32s per entry of both lookups in the kernel's memory: image A's Lab, then image B's. */
const LAB_PAIR_FLOATS = 6;

/** Coarse entries (every 4th retardance) per bounding box of the row scan (even: the kernel takes two at a time). */
const BOX_ENTRIES = 8;
/** Cells per call of the kernel's cellRows. */
const CELL_BATCH = 4096;

/** The kernel's memory for one call of cellRows: the cells' Lab, their guesses, their rows and the kernel's scratch. */
class CellBatch {
  /** Byte offsets in the kernel's memory. */
  readonly at: { labs: number; guesses: number; rows: number; bounds: number; dists: number };
  constructor(nRows: number, mem: OpticsLayout) {
    this.at = { labs: mem.reserve(24 * CELL_BATCH), guesses: mem.reserve(4 * CELL_BATCH), rows: mem.reserve(2 * nRows * CELL_BATCH), bounds: mem.reserve(8 * 64), dists: mem.reserve(8 * BOX_ENTRIES) };
  }
}

/**
 * For each colour cell met: on every ROW_STRIDE-th angle row, the retardance index nearest in Lab (coarse scan over
 * every 4th entry, then +-4 entries; the optics kernel's cellRows). The coarse scan skips runs of BOX_ENTRIES entries
 * whose Lab bounding box lies farther than the best entry found so far (starting from the previous row's): the same
 * first nearest entry as a full scan, since no entry in a box is nearer than the box (the bound is computed with the
 * same monotone roundings).
 */
class CellRows {
  /** Per cell: its slot in the pool, -1 while not made. */
  private readonly slot: Int32Array;
  /** The cells' rows, nRows uint16s a slot. */
  pool: Uint16Array;
  private count = 0;
  /** Cells noted by `need`, with their Lab, for the next `make`. */
  private pending: number[] = [];
  private pendingLab: number[] = [];
  private readonly nBoxes: number;
  /** Boxes per row as laid out (nBoxes made even) and coarse entries per row (nBoxes x BOX_ENTRIES). */
  private readonly nBp: number;
  private readonly nCp: number;
  /** Per row: the coarse entries' L, a, b (nCp each), float64. */
  private readonly coarse: Float64Array;
  /** Per row: the boxes' minima of L, a, b, then maxima (nBp each), float64. */
  private readonly boxes: Float64Array;
  /** Byte offsets in the kernel's memory of the coarse entries and the boxes. */
  private readonly at: { coarse: number; boxes: number };

  /** `coordsAt`: where the lookup's Lab lies in the kernel's memory (LAB_PAIR_FLOATS float32s an entry); `batch`: the memory of a cellRows call. */
  constructor(private readonly lut: PlateLookup, nCells: number, private readonly nRows: number, private readonly mem: OpticsLayout,
    private readonly coordsAt: number, private readonly batch: CellBatch) {
    this.slot = new Int32Array(nCells).fill(-1);
    this.pool = new Uint16Array(256 * nRows);
    const nR = lut.retardancesNm.length, C = lut.coords, nCoarse = Math.ceil(nR / 4);
    this.nBoxes = Math.ceil(nCoarse / BOX_ENTRIES);
    this.nBp = this.nBoxes + (this.nBoxes % 2);
    // The kernel marks the boxes to read in 64 bits: at most 64 boxes (2048 coarse entries, far above the largest lookup).
    if (this.nBp > 64) throw new Error(`a lookup of ${nR} retardances has more boxes than the row scan takes`);
    this.nCp = this.nBoxes * BOX_ENTRIES;
    const { nBoxes, nBp, nCp } = this;
    this.coarse = new Float64Array(nRows * 3 * nCp);
    this.boxes = new Float64Array(nRows * 6 * nBp);
    for (let r = 0; r < nRows; r++) {
      const co = 3 * nCp * r, bo = 6 * nBp * r;
      for (let d = 0; d < 3; d++) {
        this.boxes.fill(Infinity, bo + d * nBp, bo + (d + 1) * nBp);
        this.boxes.fill(-Infinity, bo + (3 + d) * nBp, bo + (4 + d) * nBp);
      }
      for (let g = 0; g < nBoxes; g++) {
        for (let k = 4 * BOX_ENTRIES * g; k < Math.min(nR, 4 * BOX_ENTRIES * (g + 1)); k += 4) {
          const q = 3 * (r * ROW_STRIDE * nR + k);
          for (let d = 0; d < 3; d++) {
            this.coarse[co + d * nCp + k / 4] = C[q + d];
            this.boxes[bo + d * nBp + g] = Math.min(this.boxes[bo + d * nBp + g], C[q + d]);
            this.boxes[bo + (3 + d) * nBp + g] = Math.max(this.boxes[bo + (3 + d) * nBp + g], C[q + d]);
          }
        }
      }
    }
    this.at = { coarse: mem.reserve(8 * this.coarse.length), boxes: mem.reserve(8 * this.boxes.length) };
  }

  /** Writes the coarse entries and boxes into the kernel's memory (after the layout's commit). */
  load(): void {
    this.mem.f64(this.at.coarse, this.coarse.length).set(this.coarse);
    this.mem.f64(this.at.boxes, this.boxes.length).set(this.boxes);
  }

  /** Where the cell's rows start in `pool` (after `make`). */
  offset(cell: number): number {
    return this.slot[cell] * this.nRows;
  }

  /** Notes the cell (Lab in `lab`) for the next `make` unless its rows are made or noted. */
  need(cell: number, lab: Float32Array): void {
    if (this.slot[cell] !== -1) return;
    this.slot[cell] = -2;
    this.pending.push(cell);
    this.pendingLab.push(lab[3 * cell], lab[3 * cell + 1], lab[3 * cell + 2]);
  }

  /** Makes the rows of the cells noted, CELL_BATCH at a time, into the pool. */
  make(): void {
    const { at } = this.batch, nRows = this.nRows, cells = this.pending;
    if (cells.length === 0) return;
    while ((this.count + cells.length) * nRows > this.pool.length) {
      const p = new Uint16Array(2 * this.pool.length);
      p.set(this.pool);
      this.pool = p;
    }
    for (let c0 = 0; c0 < cells.length; c0 += CELL_BATCH) {
      const n = Math.min(CELL_BATCH, cells.length - c0);
      this.mem.f64(at.labs, 3 * n).set(this.pendingLab.slice(3 * c0, 3 * (c0 + n)));
      this.mem.k.cellRows(this.coordsAt, LAB_PAIR_FLOATS, this.lut.retardancesNm.length, nRows, ROW_STRIDE, this.at.coarse, this.nCp, this.at.boxes, this.nBoxes, this.nBp, BOX_ENTRIES,
        at.labs, n, at.guesses, at.bounds, at.dists, at.rows);
      this.pool.set(this.mem.u16(at.rows, n * nRows), this.count * nRows);
      for (let c = 0; c < n; c++) this.slot[cells[c0 + c]] = this.count++;
    }
    this.pending = []; this.pendingLab = [];
  }
}
