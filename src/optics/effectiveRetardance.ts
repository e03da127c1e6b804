import { DEG } from '../common/index.ts';
import { colourModel, matchLabOfLinearRgb, transmission, xyzOfTransmission, type ColourModel } from './colourModel.ts';
import { cameraToModel, type CameraCalibration } from './camera.ts';
import { cellLinearRgb } from './pixels.ts';
import { mulMat3, type Vec3 } from './colorimetry.ts';

/** Entries per run whose Lab bounding box lets EffectiveRetardanceReader.read skip the run. */
const READER_BOX_ENTRIES = 16;

/** Readers kept by EffectiveRetardanceReader.of: both images' of a plate pair, twice. */
const READER_CACHE_SIZE = 4;
const readerCache = new Map<string, EffectiveRetardanceReader>();

/**
 * First-order plate reading, Gamma_eff = Gamma_p + Gamma cos 2(theta - axis): the nearest colour (CIELAB) in the
 * sequence of one retarder at 45 deg between the train's polars, for Gamma_eff from loNm to hiNm.
 */
export class EffectiveRetardanceReader {
  private readonly labs: Float32Array;
  /** Per run of READER_BOX_ENTRIES entries: Lab minimum and maximum (6 numbers). */
  private readonly boxes: Float32Array;
  /** Scratch: each run's squared distance bound for the colour being read. */
  private readonly bounds: Float64Array;
  /**
   * The reader for the model's train and range, made once and kept for the next reading with the same optics (the
   * readers made lately, at most READER_CACHE_SIZE; a reader holds no state between reads).
   */
  static of(model: ColourModel, loNm: number, hiNm: number): EffectiveRetardanceReader {
    const key = JSON.stringify([model.train, loNm, hiNm]);
    let r = readerCache.get(key);
    if (r) readerCache.delete(key);
    else r = new EffectiveRetardanceReader(model, loNm, hiNm);
    readerCache.set(key, r);
    if (readerCache.size > READER_CACHE_SIZE) readerCache.delete(readerCache.keys().next().value!);
    return r;
  }

  constructor(model: ColourModel, private readonly loNm: number, hiNm: number, private readonly stepNm = 1) {
    const t = model.train;
    const plain = colourModel({ ...t, compensator: null });
    const n = Math.floor((hiNm - loNm) / stepNm) + 1;
    this.labs = new Float32Array(3 * n);
    // interferenceColour's linear RGB, its spectrum written into one array.
    const spectrum = new Float64Array(plain.wavelengthsNm.length);
    for (let k = 0; k < n; k++) {
      const xyz = xyzOfTransmission(plain, transmission(plain, { angleRad: (t.polariserDeg + 45) * DEG, retardanceNm: loNm + k * stepNm }, spectrum));
      this.labs.set(matchLabOfLinearRgb(mulMat3(plain.xyzToCamera, xyz)), 3 * k);
    }
    const nBoxes = Math.ceil(n / READER_BOX_ENTRIES);
    this.boxes = new Float32Array(6 * nBoxes);
    this.bounds = new Float64Array(nBoxes);
    for (let g = 0; g < nBoxes; g++) for (let d = 0; d < 3; d++) {
      let lo = Infinity, hi = -Infinity;
      for (let k = g * READER_BOX_ENTRIES; k < Math.min(n, (g + 1) * READER_BOX_ENTRIES); k++) { lo = Math.min(lo, this.labs[3 * k + d]); hi = Math.max(hi, this.labs[3 * k + d]); }
      this.boxes[6 * g + d] = lo; this.boxes[6 * g + 3 + d] = hi;
    }
  }

  /**
   * The first entry nearest to `lab` (squared distance, float64 from the float32 Lab). Runs of entries whose
   * bounding box lies farther than the best so far are skipped, starting from the run whose box is nearest: the
   * same entry as a scan of all (no entry is nearer than its box, the bound taken with the same monotone roundings,
   * and equal distances go to the lower index).
   */
  read(lab: Vec3): number {
    const L = this.labs, X = this.boxes, bounds = this.bounds, n = L.length / 3, nBoxes = bounds.length;
    const l0 = lab[0], l1 = lab[1], l2 = lab[2];
    let start = 0;
    for (let g = 0; g < nBoxes; g++) {
      const o = 6 * g;
      const x = Math.max(X[o] - l0, l0 - X[o + 3], 0), y = Math.max(X[o + 1] - l1, l1 - X[o + 4], 0), z = Math.max(X[o + 2] - l2, l2 - X[o + 5], 0);
      bounds[g] = x * x + y * y + z * z;
      if (bounds[g] < bounds[start]) start = g;
    }
    let best = -1, bestD = Infinity;
    for (let r = -1; r < nBoxes; r++) {
      const g = r < 0 ? start : r;
      if ((r >= 0 && g === start) || bounds[g] > bestD) continue;
      for (let k = g * READER_BOX_ENTRIES; k < Math.min(n, (g + 1) * READER_BOX_ENTRIES); k++) {
        const a = L[3 * k] - l0, b = L[3 * k + 1] - l1, c = L[3 * k + 2] - l2;
        const d = a * a + b * b + c * c;
        if (d < bestD || (d === bestD && k < best)) { bestD = d; best = k; }
      }
    }
    return this.loNm + Math.max(0, best) * this.stepNm;
  }
}

/**
 * Per colour-cube cell, made the first time a pixel falls in it: Lab (camera calibration removed) and, with a
 * reader, the effective retardance.
 */
export class CellColours {
  readonly lab: Float32Array;
  readonly eff: Float32Array;
  private readonly done: Uint8Array;
  constructor(private readonly camera: CameraCalibration, private readonly bits: number, private readonly reader?: EffectiveRetardanceReader) {
    const nCells = 1 << (3 * bits);
    this.lab = new Float32Array(3 * nCells); this.eff = new Float32Array(nCells); this.done = new Uint8Array(nCells);
  }

  /** Makes cell c's entries unless made; true when they were made now. */
  ensure(c: number): boolean {
    if (this.done[c]) return false;
    const l = matchLabOfLinearRgb(cameraToModel(this.camera, cellLinearRgb(c, this.bits)));
    this.lab.set(l, 3 * c);
    if (this.reader) this.eff[c] = this.reader.read(l);
    this.done[c] = 1;
    return true;
  }
}
