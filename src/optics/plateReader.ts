import { checkNumber, InputError } from '../common/index.ts';
import { DEG, wrapAxialDeg, axialDiffDeg } from '../common/index.ts';
import type { Image } from '../image/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import { colourModel, matchLabOfLinearRgb } from './colourModel.ts';
import { cameraToModel, NEUTRAL_CAMERA, type CameraCalibration } from './camera.ts';
import { calibrateFromBackground, type CalibrationOptions, type PlateCalibration } from './calibration.ts';
import { buildPlateLookup, LookupSearcher, matchConfidence, matchCoords, type LookupMatch, type MatchSpace, type PlateLookup, type SearchOptions } from './lookupTable.ts';
import { cellLinearRgb, checkColourImage, FULL_SCALE_LEVEL, linearLevelTable, quantiseInto, type Rect } from './pixels.ts';
import { opticsKernel, OpticsLayout } from '../wasm/index.ts';
import type { ReadingCounts } from './ranks.ts';

/** Pixels per block: colour cells are made a block at a time, not as a whole plane. */
const PLATE_BLOCK_PX = 1 << 15;
/**
 * Float32s per sub-cell reading in the kernel's memory: angle, retardance, confidence, masked, cos 2 theta, sin 2 theta,
 * then the int32 count of its pixels left usable (plateWrite counts them).
 */
const READING_FLOATS = 7;
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
  /**
   * Known sample retardance, nm (a uniform film; thickness x birefringence): the lookup is restricted to
   * the band sampleRetardanceNm +- sampleRetardanceToleranceNm, so each colour fixes the angle (up to the
   * mirror about the compensator axis). Pixels whose colour the sample-free colour explains at least as well
   * (no sample, or the slow axis along a polariser) are then masked and counted instead of the retardance
   * floor (unless retardanceMinNm is 0); with a background rectangle also those within its 99th-percentile
   * colour distance of the sample-free colour (sensor noise).
   */
  sampleRetardanceNm?: number;
  /**
   * Half-width of the known-retardance band, nm (default 10 % of sampleRetardanceNm). Inside the band angle trades
   * against retardance (first order, only Gamma sin 2 theta is seen), most near the compensator axis: keep it no wider
   * than the sample's real spread. Measured: a 10 % band reads S_axis against the axis about 0.03 low for uniform 45 +- 30 deg.
   */
  sampleRetardanceToleranceNm?: number;
  /** Count the usable pixels of each reading (PlateReading.counts), for the field's statistics (analysePlate's summary). */
  countReadings?: boolean;
}

/** The retardance band of a constrained reading, nm, or null without one. */
export function sampleRetardanceBand(options: Pick<PlateReadOptions, 'sampleRetardanceNm' | 'sampleRetardanceToleranceNm'>): [number, number] | null {
  if (options.sampleRetardanceNm === undefined) {
    if (options.sampleRetardanceToleranceNm !== undefined) {
      throw new InputError('a retardance tolerance was given without the sample retardance', 'Give the sample retardance too, or drop the tolerance');
    }
    return null;
  }
  const r = checkNumber('sample retardance', options.sampleRetardanceNm, 1, 5000, 'nm');
  const t = checkNumber('sample retardance tolerance', options.sampleRetardanceToleranceNm ?? 0.1 * r, 0, r, 'nm');
  return [r - t, r + t];
}

export interface PlateReading {
  field: OrientationField;
  calibration: PlateCalibration | null;
  lookup: PlateLookup;
  /** Distinct colour cells matched (each one lookup search). */
  cellsMatched: number;
  /** With countReadings, the field's usable pixels by their readings, for its statistics without another pass over the pixels; else null. */
  counts: ReadingCounts | null;
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
    warnings.push('no sample-free area: exposure and white balance were taken as they are; give one (--sample-free x,y,w,h) for a calibrated reading');
  }
  const band = sampleRetardanceBand(options);
  const model = colourModel(train);
  const lookup = buildPlateLookup(model, {
    retardanceMaxNm: options.retardanceMaxNm, angleStepDeg: options.angleStepDeg, retardanceStepNm: options.retardanceStepNm,
    space, birefringenceSign: sign, retardanceRangeNm: band ?? undefined,
  });
  // With a known retardance the sample-free colour (any angle, 0 nm) is the look-alike the band cannot hold:
  // a pixel that matches it as well as the band is sample-free or has its slow axis along a polariser.
  const zeroCoords = band ? Array.from(buildPlateLookup(model, { retardanceRangeNm: [0, 0], angleStepDeg: 15, space, birefringenceSign: sign }).coords.subarray(0, lookup.dims)) : null;
  // Inside a known-retardance band only the angle is asked: entries count as distinct by angle alone.
  const searcher = new LookupSearcher(lookup, band ? { ...options, distinctNm: options.distinctNm ?? band[1] - band[0] + 1 } : options);
  // Sub-cells one bit finer than the search cells: each search cell is searched once; each sub-cell then picks
  // among its parent's best and alternative entries with its own colour and gets its own confidence.
  const subBits = bits + 1;
  const parentLevel = Int32Array.from({ length: 1 << subBits }, (_, q) => Math.round((q * ((1 << bits) - 1)) / ((1 << subBits) - 1)));
  const subMask = (1 << subBits) - 1;
  const nCells = 1 << (3 * bits), nSub = 1 << (3 * subBits);
  const cBest = new Int32Array(nCells).fill(-1), cAlt = new Int32Array(nCells), cNear = new Int32Array(nCells);
  const n = img.width * img.height;
  const angleRad = new Float32Array(n), confidence = new Float32Array(n), retardanceNm = new Float32Array(n), mask = new Uint8Array(n), clipped = new Uint8Array(n);
  // cos 2 theta and sin 2 theta per pixel, made once per sub-cell (the order statistics read these).
  const cos2 = new Float32Array(n), sin2 = new Float32Array(n);
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
  const distanceToZero = (q: number[]) => (zeroCoords ? Math.sqrt(zeroCoords.reduce((acc, v, k) => acc + (v - q[k]) ** 2, 0)) : Infinity);
  // Sensor noise spreads sample-free pixels around the sample-free colour, and some then fit the band better:
  // with a background rectangle, colours within its 99th-percentile distance of that colour count as sample-free too.
  let freeRadius = 0;
  if (zeroCoords && options.background && floorNm > 0) {
    const r = options.background, dz: number[] = [];
    const row = new Int32Array(r.width);
    for (let y = r.y; y < r.y + r.height; y++) {
      quantiseInto(img, subBits, y * img.width + r.x, row);
      for (const sub of row) if (sub >= 0) dz.push(distanceToZero(matchCoords(matchLabOfLinearRgb(cameraToModel(camera, cellLinearRgb(sub, subBits))), space)));
    }
    dz.sort((a, b) => a - b);
    if (dz.length) freeRadius = dz[Math.min(dz.length - 1, Math.floor(0.99 * dz.length))];
  }
  let matched = 0, belowFloor = 0;
  // The reading of a sub-cell met for the first time, into entry k of the kernel's readings.
  const readSub = (sub: number, readings: Float32Array, k: number) => {
    const r = parentLevel[(sub >> (2 * subBits)) & subMask], g = parentLevel[(sub >> subBits) & subMask], b = parentLevel[sub & subMask];
    const cell = (r << (2 * bits)) | (g << bits) | b;
    if (cBest[cell] < 0) {
      const m = searcher.match(matchCoords(matchLabOfLinearRgb(cameraToModel(camera, cellLinearRgb(cell, bits))), space));
      cBest[cell] = m.bestIndex; cAlt[cell] = m.alternativeIndex; cNear[cell] = m.nearAlternativeIndex;
      matched++;
    }
    const q = matchCoords(matchLabOfLinearRgb(cameraToModel(camera, cellLinearRgb(sub, subBits))), space);
    // Of the parent's best, alternative and nearest alternative, the one nearest this sub-cell's colour (the first on ties).
    const d0 = dist(cBest[cell], q), d1 = dist(cAlt[cell], q), d2 = dist(cNear[cell], q);
    let pick = 0, dPick = d0;
    if (d1 < dPick) { pick = 1; dPick = d1; }
    if (d2 < dPick) { pick = 2; dPick = d2; }
    const dOther = pick === 0 ? Math.min(d1, d2) : pick === 1 ? Math.min(d0, d2) : Math.min(d0, d1);
    const dZero = distanceToZero(q);
    const e = pick === 0 ? cBest[cell] : pick === 1 ? cAlt[cell] : cNear[cell], j = Math.floor(e / nR);
    const o = READING_FLOATS * k;
    readings[o] = rowAngleRad[j];
    readings[o + 1] = lookup.retardancesNm[e - j * nR];
    readings[o + 2] = matchConfidence({ distance: dPick, alternativeDistance: Math.min(dZero, dOther) } as LookupMatch);
    // Masked: sample-free (with a known retardance band) or read below the floor (the float32 retardance, as stored).
    readings[o + 3] = (band ? floorNm > 0 && dZero <= Math.max(dPick, freeRadius) : readings[o + 1] < floorNm) ? 1 : 0;
    // Of the float32 angle, as the order statistics would make them from the field's angles.
    readings[o + 4] = Math.cos(2 * readings[o]); readings[o + 5] = Math.sin(2 * readings[o]);
    readings[o + 6] = 0; // no pixel counted yet (0 as int32 too)
  };
  // The pixels a block at a time in the optics kernel (src/wasm/opticsKernel.as.ts): plateCells gives each pixel's
  // sub-cell and lists those met for the first time, which are read here; plateWrite gives every pixel its sub-cell's reading.
  const k = opticsKernel(), mem = new OpticsLayout(k), B = Math.min(n, PLATE_BLOCK_PX);
  const rgbAt = mem.reserve(12 * B), subsAt = mem.reserve(4 * B), clipAt = mem.reserve(B), freshAt = mem.reserve(4 * B), countsAt = mem.reserve(8), sumAt = mem.reserve(8);
  const outAt = [0, 1, 2, 3, 4].map(() => mem.reserve(4 * B)), maskAt = mem.reserve(B);
  const levelsAt = img.encoding === 'linear' ? mem.reserve(4 * 4097) : 0, indexAt = mem.reserve(4 * nSub);
  let capacity = 4096;
  const readingsAt = mem.reserve(4 * READING_FLOATS * capacity);
  mem.commit();
  if (levelsAt) mem.i32(levelsAt, 4097).set(linearLevelTable(subBits));
  mem.i32(indexAt, nSub).fill(-1);
  mem.i32(countsAt, 2).fill(0);
  mem.f64(sumAt, 1).fill(0);
  let nRead = 0;
  // Pixels at full scale and with values not usable so far (the kernel's counts).
  const counts = new Int32Array(2);
  for (let i0 = 0; i0 < n; i0 += B) {
    const len = Math.min(B, n - i0), i1 = i0 + len;
    for (let c = 0; c < 3; c++) mem.f32(rgbAt + 4 * B * c, B).set(img.planes[c].subarray(i0, i1));
    const clip = mem.u8(clipAt, B);
    clip.fill(0);
    const nFresh = k.plateCells(rgbAt, rgbAt + 4 * B, rgbAt + 8 * B, len, subBits, FULL_SCALE_LEVEL, levelsAt, subsAt, clipAt, indexAt, freshAt, countsAt);
    if (nFresh > 0) {
      if (nRead + nFresh > capacity) {
        // The readings are laid out last: they grow in place.
        const more = Math.max(capacity, nRead + nFresh - capacity);
        mem.reserve(4 * READING_FLOATS * more);
        capacity += more;
        mem.commit();
      }
      const fresh = mem.i32(freshAt, nFresh), index = mem.i32(indexAt, nSub), readings = mem.f32(readingsAt, READING_FLOATS * capacity);
      for (let f = 0; f < nFresh; f++) {
        readSub(fresh[f], readings, nRead);
        index[fresh[f]] = nRead++;
      }
    }
    const [satBefore, invBefore] = counts;
    counts.set(mem.i32(countsAt, 2));
    const masked = k.plateWrite(subsAt, len, indexAt, readingsAt, outAt[0], outAt[1], outAt[2], outAt[3], outAt[4], maskAt, options.countReadings ? sumAt : 0), unusable = counts[0] - satBefore + counts[1] - invBefore;
    belowFloor += masked;
    [angleRad, retardanceNm, confidence, cos2, sin2].forEach((a, j) => a.set(mem.f32(outAt[j], len), i0));
    // Mask and clipped flags only where the block has some (the arrays' untouched pages take no memory).
    if (masked + unusable < len) mask.set(mem.u8(maskAt, len), i0);
    if (counts[0] > satBefore) clipped.set(mem.u8(clipAt, len), i0);
  }
  const [saturated, invalid] = counts;
  const pixelCounts = options.countReadings ? readingCounts(mem.f32(readingsAt, READING_FLOATS * nRead), mem.f64(sumAt, 1)[0]) : null;
  if (belowFloor > 0) {
    const why = band ? 'matching the sample-free colour as well as any colour of the given retardance (no sample, or slow axis along a polariser)' : `read below ${floorNm} nm (no measurable sample)`;
    warnings.push(`${belowFloor} pixels ${why} were masked (${((100 * belowFloor) / n).toFixed(1)} %)`);
  }
  if (saturated > 0) warnings.push(`${saturated} pixels at full scale (clipped) were masked (${((100 * saturated) / n).toFixed(2)} %)`);
  if (invalid > 0) warnings.push(`${invalid} pixels with values outside [0, 1] were masked`);
  const field: OrientationField = {
    width: img.width, height: img.height, angleRad, confidence, mask, retardanceNm, clipped, cos2, sin2,
    method: 'plate',
    ambiguity: mirror !== null ? 'mirror-about-compensator' : 'none',
    ambiguityAxisDeg: mirror !== null ? mirror : undefined,
    pixelSizeUmPerPx: img.pixelSizeUmPerPx,
    options: {
      polariserDeg: train.polariserDeg, analyserDeg: train.analyserDeg, compensatorNm: train.compensator.retardanceNm,
      compensatorDeg: axis, illuminant: train.illuminant, retardanceMaxNm: lookup.retardancesNm[lookup.retardancesNm.length - 1],
      match: space, birefringenceSign: sign, referenceAxisDeg: ref, cacheBits: bits, retardanceMinNm: floorNm,
      ...(band ? { sampleRetardanceNm: options.sampleRetardanceNm, sampleRetardanceToleranceNm: (band[1] - band[0]) / 2 } : {}),
      mirrorAssumption: mirror !== null ? `orientation taken within 45 deg of ${wrapAxialDeg(ref)} deg (of theta and ${2 * mirror} - theta, the nearer)` : 'none',
    },
    warnings,
  };
  return { field, calibration, lookup, cellsMatched: matched, counts: pixelCounts };
}

/** The usable pixels by their sub-cells' readings (ReadingCounts) from the readings as plateWrite counted them. */
function readingCounts(readings: Float32Array, confidenceSum: number): ReadingCounts {
  const counted = new Int32Array(readings.buffer, readings.byteOffset, readings.length), nRead = readings.length / READING_FLOATS;
  let m = 0;
  for (let j = 0; j < nRead; j++) if (counted[READING_FLOATS * j + 6] > 0) m++;
  const c: ReadingCounts = { confidence: new Float32Array(m), retardanceNm: new Float32Array(m), pixels: new Int32Array(m), confidenceSum };
  for (let j = 0, q = 0; j < nRead; j++) {
    const o = READING_FLOATS * j;
    if (counted[o + 6] === 0) continue;
    c.retardanceNm[q] = readings[o + 1]; c.confidence[q] = readings[o + 2]; c.pixels[q++] = counted[o + 6];
  }
  return c;
}
