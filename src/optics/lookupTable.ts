import { checkNumber, InputError } from '../common/index.ts';
import { DEG, axialDiffDeg } from '../common/index.ts';
import type { Vec3 } from './colorimetry.ts';
import { matchLabInto, type ColourModel } from './colourModel.ts';
import { opticsKernel, OpticsLayout } from '../wasm/index.ts';

/** Colour space of the match: CIELAB, or brightness-independent chroma (a*, b*) / (L* + 16). */
export type MatchSpace = 'lab' | 'chroma';

/**
 * Forward-model colours over a grid of (structure angle, retardance): the lookup the plate reader searches.
 * Angles cover [axis - 90, axis] when the train is mirror-symmetric about the compensator axis (the other
 * half repeats it), else [-90, 90).
 */
export interface PlateLookup {
  anglesDeg: Float64Array;
  retardancesNm: Float64Array;
  /** Match coordinates per entry (3 for 'lab', 2 for 'chroma'), index (angle * nRet + ret) * dims. */
  coords: Float32Array;
  dims: 2 | 3;
  space: MatchSpace;
  /** Camera linear sRGB of every entry (model white balance), for rendering test images. */
  linearRgb: Float32Array;
  mirrorAxisDeg: number | null;
  birefringenceSign: 1 | -1;
}

export interface LookupOptions {
  retardanceMaxNm?: number;
  /**
   * Retardance band [low, high] of the grid, nm, instead of [0, retardanceMaxNm]: for a sample of known
   * retardance. Spaced evenly at no more than `retardanceStepNm`; a single value when low = high.
   */
  retardanceRangeNm?: [number, number];
  angleStepDeg?: number;
  retardanceStepNm?: number;
  space?: MatchSpace;
  birefringenceSign?: 1 | -1;
  /** Cover [-90, 90) even when the train is mirror-symmetric (for combining two images). */
  fullRange?: boolean;
}

export const LOOKUP_DEFAULTS = { retardanceMaxNm: 800, angleStepDeg: 1, retardanceStepNm: 2, space: 'lab' as MatchSpace, birefringenceSign: 1 as 1 | -1 };

/** Drops undefined entries so they do not override defaults. */
export function definedOnly<T extends object>(o: T): Partial<T> {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>;
}

/** Match coordinates of a Lab colour in the chosen space. */
export function matchCoords(lab: Vec3, space: MatchSpace): number[] {
  if (space === 'lab') return lab;
  const d = Math.max(1, lab[0] + 16);
  return [(100 * lab[1]) / d, (100 * lab[2]) / d];
}

/** True when polariser, compensator and analyser make theta and 2*axis - theta give the same colour. */
export function isMirrorSymmetric(model: ColourModel): boolean {
  const t = model.train;
  if (!t.compensator) return false;
  const rel = axialDiffDeg(t.compensator.axisDeg - t.polariserDeg, 45);
  const crossedOrParallel = axialDiffDeg(t.analyserDeg - t.polariserDeg, 90) < 1e-9 || axialDiffDeg(t.analyserDeg, t.polariserDeg) < 1e-9;
  return rel < 1e-9 && crossedOrParallel;
}

/** Retardances of the lookup: k * step up to the maximum, or a band spaced evenly at no more than step. */
function retardanceGrid(maxNm: number, stepNm: number, range: [number, number] | undefined): Float64Array {
  if (!range) {
    const nR = Math.floor(maxNm / stepNm + 1e-9) + 1;
    return Float64Array.from({ length: nR }, (_, k) => k * stepNm);
  }
  const [lo, hi] = range;
  checkNumber('lowest retardance of the band', lo, 0, 5000, 'nm');
  checkNumber('highest retardance of the band', hi, lo, 5000, 'nm');
  const nR = hi > lo ? Math.ceil((hi - lo) / stepNm - 1e-9) + 1 : 1;
  return Float64Array.from({ length: nR }, (_, k) => (nR > 1 ? lo + ((hi - lo) * k) / (nR - 1) : lo));
}

/** Lookups built lately, by everything they are made from (at most LOOKUP_CACHE_SIZE, the least recently used dropped). */
const lookupCache = new Map<string, PlateLookup>();
/** Lookups kept: both images' of a plate pair and a one-image reading's two, about 2 MB each at the default grid. */
const LOOKUP_CACHE_SIZE = 4;

/**
 * Builds the lookup from the spectral Jones model (one pass over wavelengths per entry), or gives the one built
 * lately from the same model and options (the app and a run over several files read with the same train): the
 * same arrays, which callers read and never change. A lamp's spectrum is summed in the optics kernel, whose memory it
 * lays out afresh: build lookups before a reading lays out its own arrays there, never in the middle of one.
 */
export function buildPlateLookup(model: ColourModel, options: LookupOptions = {}): PlateLookup {
  const o = { ...LOOKUP_DEFAULTS, ...definedOnly(options) };
  const key = JSON.stringify([model.train, Array.from(model.wavelengthsNm), Array.from(model.wx), Array.from(model.wy), Array.from(model.wz), model.whiteXyz, model.xyzToCamera, o]);
  const cached = lookupCache.get(key);
  if (cached) {
    lookupCache.delete(key);
    lookupCache.set(key, cached);
    return cached;
  }
  const lookup = buildLookup(model, o, options.retardanceRangeNm);
  lookupCache.set(key, lookup);
  if (lookupCache.size > LOOKUP_CACHE_SIZE) lookupCache.delete(lookupCache.keys().next().value!);
  return lookup;
}

/**
 * X, Y, Z of every lookup entry of a polychromatic train, by the optics kernel's lookupXyz (src/wasm/opticsKernel.as.ts),
 * at 3 (j nRp + k) for angle row j and retardance k (nRp: nR made even). ch, sh: half-phase cos and sin per retardance
 * and wavelength (k nL + i); the angle rows' axis from anglesDeg + slowOffset; polariser (px, py), compensator (when
 * `comp`: axis cC, sC and half-phase cpH, spH), analyser (ax, ay).
 */
function kernelXyz(model: ColourModel, ch: Float64Array, sh: Float64Array, nR: number, nL: number, nA: number, anglesDeg: Float64Array, slowOffset: number,
  px: number, py: number, comp: boolean, cC: number, sC: number, cpH: Float64Array, spH: Float64Array, ax: number, ay: number): Float64Array {
  const nRp = nR + (nR % 2), k = opticsKernel(), mem = new OpticsLayout(k);
  const at = {
    ch: mem.reserve(8 * nL * nRp), sh: mem.reserve(8 * nL * nRp), rows: mem.reserve(32 * nA), cpH: mem.reserve(8 * nL), spH: mem.reserve(8 * nL),
    wx: mem.reserve(8 * nL), wy: mem.reserve(8 * nL), wz: mem.reserve(8 * nL), out: mem.reserve(24 * nA * nRp),
  };
  mem.commit();
  // Wavelength-major, so that two retardances sit side by side (the padding retardance's entries are not read).
  const cT = mem.f64(at.ch, nL * nRp), sT = mem.f64(at.sh, nL * nRp);
  cT.fill(0); sT.fill(0);
  for (let kk = 0; kk < nR; kk++) for (let i = 0; i < nL; i++) { cT[i * nRp + kk] = ch[kk * nL + i]; sT[i * nRp + kk] = sh[kk * nL + i]; }
  const rows = mem.f64(at.rows, 4 * nA);
  for (let j = 0; j < nA; j++) {
    const th = (anglesDeg[j] + slowOffset) * DEG;
    const c = Math.cos(th), s = Math.sin(th);
    rows.set([c, s, c * px + s * py, -s * px + c * py], 4 * j);
  }
  mem.f64(at.cpH, nL).set(cpH); mem.f64(at.spH, nL).set(spH);
  mem.f64(at.wx, nL).set(model.wx); mem.f64(at.wy, nL).set(model.wy); mem.f64(at.wz, nL).set(model.wz);
  k.lookupXyz(at.ch, at.sh, nRp, nL, nA, at.rows, comp ? 1 : 0, cC, sC, at.cpH, at.spH, ax, ay, at.wx, at.wy, at.wz, at.out);
  return mem.f64(at.out, 3 * nA * nRp).slice();
}

/** buildPlateLookup's work: the lookup of the model for options `o` (defaults filled in). */
function buildLookup(model: ColourModel, o: typeof LOOKUP_DEFAULTS & LookupOptions, range: [number, number] | undefined): PlateLookup {
  checkNumber('maximum retardance', o.retardanceMaxNm, 10, 5000, 'nm');
  checkNumber('angle step', o.angleStepDeg, 0.05, 15, 'deg');
  checkNumber('retardance step', o.retardanceStepNm, 0.1, 100, 'nm');
  if (o.space !== 'lab' && o.space !== 'chroma') throw new InputError(`match space "${String(o.space)}" is not known`, 'Use lab or chroma');
  const t = model.train;
  const symmetric = isMirrorSymmetric(model) ? t.compensator!.axisDeg : null;
  const mirror = o.fullRange ? null : symmetric;
  const a0 = mirror !== null ? mirror - 90 : -90;
  const nA = Math.round((mirror !== null ? 90 : 180 - o.angleStepDeg) / o.angleStepDeg) + 1;
  const anglesDeg = Float64Array.from({ length: nA }, (_, j) => a0 + j * o.angleStepDeg);
  const retardancesNm = retardanceGrid(o.retardanceMaxNm, o.retardanceStepNm, range);
  const nR = retardancesNm.length;
  const lam = model.wavelengthsNm, nL = lam.length;
  // Half-phase cos/sin of every (retardance, wavelength) pair and of the compensator.
  const ch = new Float64Array(nR * nL), sh = new Float64Array(nR * nL);
  for (let k = 0; k < nR; k++) for (let i = 0; i < nL; i++) {
    const h = (Math.PI * retardancesNm[k]) / lam[i];
    ch[k * nL + i] = Math.cos(h); sh[k * nL + i] = Math.sin(h);
  }
  const comp = t.compensator;
  const cpH = new Float64Array(nL).fill(1), spH = new Float64Array(nL);
  if (comp) for (let i = 0; i < nL; i++) { const h = (Math.PI * comp.retardanceNm) / lam[i]; cpH[i] = Math.cos(h); spH[i] = Math.sin(h); }
  const cC = comp ? Math.cos(comp.axisDeg * DEG) : 1, sC = comp ? Math.sin(comp.axisDeg * DEG) : 0;
  const px = Math.cos(t.polariserDeg * DEG), py = Math.sin(t.polariserDeg * DEG);
  const ax = Math.cos(t.analyserDeg * DEG), ay = Math.sin(t.analyserDeg * DEG);
  const dims = o.space === 'lab' ? 3 : 2;
  const coords = new Float32Array(nA * nR * dims), linearRgb = new Float32Array(nA * nR * 3);
  const slowOffset = o.birefringenceSign === -1 ? 90 : 0;
  const mono = t.monochromeNm !== undefined;
  // X, Y, Z of every entry: for a lamp's spectrum in the optics kernel (lookupXyz, the same operations as below).
  const xyz = mono ? null : kernelXyz(model, ch, sh, nR, nL, nA, anglesDeg, slowOffset, px, py, comp !== null, cC, sC, cpH, spH, ax, ay);
  const nRp = nR + (nR % 2), M = model.xyzToCamera, lab = new Float64Array(3);
  for (let j = 0; j < nA; j++) {
    const th = (anglesDeg[j] + slowOffset) * DEG;
    const c = Math.cos(th), s = Math.sin(th);
    const e1 = c * px + s * py, e2 = -s * px + c * py; // polarised light in the sample's axes (real)
    for (let k = 0; k < nR; k++) {
      let X = 0, Y = 0, Z = 0;
      if (xyz) {
        const q = 3 * (j * nRp + k);
        X = xyz[q]; Y = xyz[q + 1]; Z = xyz[q + 2];
      } else for (let i = 0; i < nL; i++) {
        const hc = ch[k * nL + i], hs = sh[k * nL + i];
        // Sample: axis 1 * (hc + i hs), axis 2 * (hc - i hs), back to x/y.
        const p1r = e1 * hc, p1i = e1 * hs, p2r = e2 * hc, p2i = -e2 * hs;
        let xr = c * p1r - s * p2r, xi = c * p1i - s * p2i, yr = s * p1r + c * p2r, yi = s * p1i + c * p2i;
        if (comp) {
          const r1 = cC * xr + sC * yr, i1 = cC * xi + sC * yi, r2 = -sC * xr + cC * yr, i2 = -sC * xi + cC * yi;
          const pc = cpH[i], ps = spH[i];
          const q1r = r1 * pc - i1 * ps, q1i = r1 * ps + i1 * pc, q2r = r2 * pc + i2 * ps, q2i = i2 * pc - r2 * ps;
          xr = cC * q1r - sC * q2r; xi = cC * q1i - sC * q2i; yr = sC * q1r + cC * q2r; yi = sC * q1i + cC * q2i;
        }
        const re = ax * xr + ay * yr, im = ax * xi + ay * yi;
        const tr = re * re + im * im;
        X = model.whiteXyz[0] * tr; Y = model.whiteXyz[1] * tr; Z = model.whiteXyz[2] * tr;
      }
      // mulMat3(model.xyzToCamera, [X, Y, Z]), then matchCoords(matchLabOfLinearRgb(rgb)): the same operations, no arrays.
      const r = M[0] * X + M[1] * Y + M[2] * Z, g = M[3] * X + M[4] * Y + M[5] * Z, b = M[6] * X + M[7] * Y + M[8] * Z;
      const idx = j * nR + k;
      linearRgb[3 * idx] = r; linearRgb[3 * idx + 1] = g; linearRgb[3 * idx + 2] = b;
      matchLabInto(r, g, b, lab, 0);
      if (dims === 3) { coords[3 * idx] = lab[0]; coords[3 * idx + 1] = lab[1]; coords[3 * idx + 2] = lab[2]; } else {
        const d = Math.max(1, lab[0] + 16);
        coords[2 * idx] = (100 * lab[1]) / d; coords[2 * idx + 1] = (100 * lab[2]) / d;
      }
    }
  }
  return { anglesDeg, retardancesNm, coords, dims, space: o.space, linearRgb, mirrorAxisDeg: symmetric, birefringenceSign: o.birefringenceSign };
}

/** Result of matching one colour. */
export interface LookupMatch {
  angleDeg: number;
  retardanceNm: number;
  /** Distance to the best entry (Delta E76 in 'lab'; chroma units in 'chroma'). */
  distance: number;
  /** Distance to the best entry that differs by more than the distinctness thresholds. */
  alternativeDistance: number;
  /** Lookup entries of the best match and of the best distinct alternative (-1 when there is none). */
  bestIndex: number;
  alternativeIndex: number;
  /** The best entry just outside the distinctness radius (the nearest alternative in the winner's own valley). */
  nearAlternativeIndex: number;
}

export interface SearchOptions {
  /** Entries count as distinct alternatives when they differ by more than this angle (default 1.5 deg, below the 2-deg accuracy aim) ... */
  distinctDeg?: number;
  /** ... or by more than this retardance (default 20 nm). */
  distinctNm?: number;
}

/** Coarse entries per tile of the coarse pass: angle rows by retardance columns. */
const TILE_ROWS = 4, TILE_COLUMNS = 8;

/**
 * Coarse-to-fine nearest entry: a coarse pass over every `stride`-th entry (about 3 deg x 8 nm), then a
 * full-resolution window around the coarse winner; the same for the best distinct alternative.
 */
export class LookupSearcher {
  private readonly nA: number;
  private readonly nR: number;
  private readonly strideA: number;
  private readonly strideR: number;
  private readonly coarse: Int32Array;
  private readonly coarseJ: Int32Array;
  private readonly coarseK: Int32Array;
  private readonly coarseDist: Float64Array;
  private readonly nRc: number;
  private readonly distinctJ: number;
  private readonly distinctK: number;
  private readonly periodJ: number;
  private readonly c: Float32Array;
  private readonly dims: number;
  /** Coarse-grid tiles: first and last coarse row and column (inclusive), and Lab (or chroma) bounds. */
  private readonly tiles: { j0: number; j1: number; k0: number; k1: number }[];
  private readonly tileLo: Float64Array;
  private readonly tileHi: Float64Array;
  private readonly tileBound: Float64Array;
  /** Coarse distances made for the current colour: made when stamp[m] equals the call's number. */
  private readonly stamp: Int32Array;
  private call = 0;

  constructor(readonly lut: PlateLookup, options: SearchOptions = {}) {
    this.nA = lut.anglesDeg.length;
    this.nR = lut.retardancesNm.length;
    const aStep = this.nA > 1 ? lut.anglesDeg[1] - lut.anglesDeg[0] : 1;
    const rStep = this.nR > 1 ? lut.retardancesNm[1] - lut.retardancesNm[0] : 1;
    this.strideA = Math.max(1, Math.round(3 / aStep));
    this.strideR = Math.max(1, Math.round(8 / rStep));
    const idx: number[] = [], js: number[] = [], ks: number[] = [];
    for (let j = 0; j < this.nA; j += this.strideA) for (let k = 0; k < this.nR; k += this.strideR) { idx.push(j * this.nR + k); js.push(j); ks.push(k); }
    this.coarse = Int32Array.from(idx);
    this.coarseJ = Int32Array.from(js);
    this.coarseK = Int32Array.from(ks);
    this.coarseDist = new Float64Array(idx.length);
    this.nRc = Math.ceil(this.nR / this.strideR);
    this.distinctJ = (options.distinctDeg ?? 1.5) / aStep;
    this.distinctK = (options.distinctNm ?? 20) / rStep;
    this.periodJ = 180 / aStep;
    this.c = lut.coords;
    this.dims = lut.dims;
    const nc = this.nRc, na = this.coarse.length / nc;
    this.tiles = [];
    for (let j0 = 0; j0 < na; j0 += TILE_ROWS) for (let k0 = 0; k0 < nc; k0 += TILE_COLUMNS) {
      this.tiles.push({ j0, j1: Math.min(na, j0 + TILE_ROWS) - 1, k0, k1: Math.min(nc, k0 + TILE_COLUMNS) - 1 });
    }
    this.tileLo = new Float64Array(3 * this.tiles.length).fill(Infinity);
    this.tileHi = new Float64Array(3 * this.tiles.length).fill(-Infinity);
    this.tiles.forEach((t, b) => {
      for (let jc = t.j0; jc <= t.j1; jc++) for (let kc = t.k0; kc <= t.k1; kc++) {
        const o = this.dims * this.coarse[jc * nc + kc];
        for (let d = 0; d < this.dims; d++) {
          this.tileLo[3 * b + d] = Math.min(this.tileLo[3 * b + d], this.c[o + d]);
          this.tileHi[3 * b + d] = Math.max(this.tileHi[3 * b + d], this.c[o + d]);
        }
      }
      if (this.dims === 2) { this.tileLo[3 * b + 2] = 0; this.tileHi[3 * b + 2] = 0; }
    });
    this.tileBound = new Float64Array(this.tiles.length);
    this.stamp = new Int32Array(this.coarse.length);
  }

  /** Squared distance of coarse entry m to the colour, made once per call (coarseDist, stamp). */
  private coarseAt(m: number, q0: number, q1: number, q2: number): number {
    if (this.stamp[m] === this.call) return this.coarseDist[m];
    const c = this.c;
    let d: number;
    if (this.dims === 3) {
      const o = 3 * this.coarse[m], a = c[o] - q0, b = c[o + 1] - q1, e = c[o + 2] - q2;
      d = a * a + b * b + e * e;
    } else {
      const o = 2 * this.coarse[m], a = c[o] - q0, b = c[o + 1] - q1;
      d = a * a + b * b;
    }
    this.coarseDist[m] = d;
    this.stamp[m] = this.call;
    return d;
  }

  /**
   * Best full-resolution entry in the window around (j0, k0); with avoidJ >= 0 only entries distinct from it (as
   * `distinct`: rows farther than distinctJ, or within them entries farther than distinctK).
   */
  private refine(j0: number, k0: number, q0: number, q1: number, q2: number, avoidJ: number, avoidK: number, widen = 0): [number, number] {
    let best = -1, bestD = Infinity;
    const wa = this.strideA + Math.ceil(widen * this.distinctJ), wr = this.strideR + Math.ceil(widen * this.distinctK);
    const jLo = Math.max(0, j0 - wa), jHi = Math.min(this.nA - 1, j0 + wa);
    const kLo = Math.max(0, k0 - wr), kHi = Math.min(this.nR - 1, k0 + wr);
    const c = this.c, nR = this.nR, three = this.dims === 3, dK = this.distinctK;
    for (let j = jLo; j <= jHi; j++) {
      let rowDistinct = true;
      if (avoidJ >= 0) {
        let dj = Math.abs(j - avoidJ);
        if (dj > this.periodJ / 2) dj = this.periodJ - dj;
        rowDistinct = dj > this.distinctJ;
      }
      for (let k = kLo; k <= kHi; k++) {
        if (!rowDistinct && !(Math.abs(k - avoidK) > dK)) continue;
        const idx = j * nR + k;
        let d: number;
        if (three) {
          const o = 3 * idx, a = c[o] - q0, b = c[o + 1] - q1, e = c[o + 2] - q2;
          d = a * a + b * b + e * e;
        } else {
          const o = 2 * idx, a = c[o] - q0, b = c[o + 1] - q1;
          d = a * a + b * b;
        }
        if (d < bestD) { bestD = d; best = idx; }
      }
    }
    return [best, bestD];
  }

  /** Matches one colour given in match coordinates. */
  match(q: number[]): LookupMatch {
    const q0 = q[0], q1 = q[1], q2 = this.dims === 3 ? q[2] : 0;
    const cd = this.coarseDist, nc = this.nRc, na = this.coarse.length / nc, tiles = this.tiles;
    if (++this.call === 2 ** 31 - 1) { this.stamp.fill(0); this.call = 1; }
    // Coarse pass, tile by tile: a tile's bound (squared distance of the colour to its box, made with the same
    // monotone roundings as an entry's) is never above any of its entries', so tiles beyond the best so far, and
    // later beyond the valley limit, hold no entry that matters. The entries read are exactly those a full pass
    // would use.
    const bound = this.tileBound, lo = this.tileLo, hi = this.tileHi;
    let first = 0;
    for (let b = 0; b < tiles.length; b++) {
      const x = Math.max(lo[3 * b] - q0, q0 - hi[3 * b], 0), y = Math.max(lo[3 * b + 1] - q1, q1 - hi[3 * b + 1], 0), z = Math.max(lo[3 * b + 2] - q2, q2 - hi[3 * b + 2], 0);
      bound[b] = x * x + y * y + z * z;
      if (bound[b] < bound[first]) first = b;
    }
    // The nearest tile's entries first, then every tile that could hold a nearer entry.
    let cbD = Infinity;
    for (let t = -1; t < tiles.length; t++) {
      const b = t < 0 ? first : t;
      if (t === first || bound[b] > cbD) continue;
      const tile = tiles[b];
      for (let jc = tile.j0; jc <= tile.j1; jc++) for (let kc = tile.k0; kc <= tile.k1; kc++) {
        const d = this.coarseAt(jc * nc + kc, q0, q1, q2);
        if (d < cbD) cbD = d;
      }
    }
    // Valleys: coarse local minima within 6 units of the best (narrow valleys can fall between coarse samples).
    const limit = (Math.sqrt(cbD) + 6) ** 2;
    const minima: number[] = [];
    for (let b = 0; b < tiles.length; b++) {
      if (bound[b] > limit) continue;
      const tile = tiles[b];
      for (let jc = tile.j0; jc <= tile.j1; jc++) for (let kc = tile.k0; kc <= tile.k1; kc++) {
        const m = jc * nc + kc, d = this.coarseAt(m, q0, q1, q2);
        if (d > limit) continue;
        let isMin = true;
        for (let dj = -1; dj <= 1 && isMin; dj++) for (let dk = -1; dk <= 1; dk++) {
          const j2 = jc + dj, k2 = kc + dk;
          if ((dj === 0 && dk === 0) || j2 < 0 || j2 >= na || k2 < 0 || k2 >= nc) continue;
          if (this.coarseAt(j2 * nc + k2, q0, q1, q2) < d) { isMin = false; break; }
        }
        if (isMin) minima.push(m);
      }
    }
    // Nearest first; equal distances in coarse order (as a stable sort of the minima in coarse order gives them).
    minima.sort((a, b) => cd[a] - cd[b] || a - b);
    const top = minima.slice(0, 4);
    // Refine each valley; the overall winner is the best refined entry.
    let best = -1, bestD = Infinity;
    const refined: [number, number][] = top.map((m) => [this.coarseJ[m], this.coarseK[m]]);
    for (const [j, k] of refined) {
      const [idx, d] = this.refine(j, k, q0, q1, q2, -1, -1);
      if (d < bestD) { bestD = d; best = idx; }
    }
    const bj = Math.floor(best / this.nR), bk = best - bj * this.nR;
    // Best distinct alternative: refined around each candidate valley, avoiding the winner's neighbourhood.
    let altD = Infinity, altI = -1;
    for (const [j, k] of refined) {
      const [idx, d] = this.refine(j, k, q0, q1, q2, bj, bk);
      if (idx >= 0 && d < altD) { altD = d; altI = idx; }
    }
    // Just outside the distinctness radius around the winner: the nearest alternatives of all.
    const [near, nearD] = this.refine(bj, bk, q0, q1, q2, bj, bk, 1);
    return {
      angleDeg: this.lut.anglesDeg[bj], retardanceNm: this.lut.retardancesNm[bk], distance: Math.sqrt(bestD),
      alternativeDistance: Math.sqrt(near >= 0 ? Math.min(altD, nearD) : altD),
      bestIndex: best, alternativeIndex: altI, nearAlternativeIndex: near,
    };
  }
}

/** Confidence from match error and margin: (1 - exp(-margin / 4)) * exp(-error / 15), in [0, 1]. */
export function matchConfidence(m: LookupMatch, marginScale = 4, errorScale = 15): number {
  const margin = Math.max(0, m.alternativeDistance - m.distance);
  if (!Number.isFinite(margin)) return Math.exp(-m.distance / errorScale);
  return (1 - Math.exp(-margin / marginScale)) * Math.exp(-m.distance / errorScale);
}
