import { checkNumber, giveBack, InputError, takeFloat32, takeUint8 } from '../common/index.ts';
import { DEG } from '../common/index.ts';
import { makeImage, type Image } from '../image/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import { foldMod90, mod90AxisOfSums } from '../orientation/index.ts';
import { srgbDecode } from './colorimetry.ts';
import { calibrateFromBackground } from './calibration.ts';
import { colourModel } from './colourModel.ts';
import { NEUTRAL_CAMERA } from './camera.ts';
import { CellColours } from './effectiveRetardance.ts';
import { buildPlateLookup } from './lookupTable.ts';
import { checkColourImage, FULL_SCALE_LEVEL, quantiseInto, type Rect } from './pixels.ts';
import { rankCounts, uncount, valuesOfCountedRanks, type RankCounts } from './ranks.ts';
import { decodeTableIn, opticsKernel, OpticsLayout, type OpticsKernelExports } from '../wasm/index.ts';
import { resolveTrain, type OpticalTrain } from './train.ts';
import type { CameraCalibration } from './camera.ts';

/** How the compensator image of an angle series was taken. */
export interface PlateSignOptions {
  train?: Partial<OpticalTrain>;
  background?: Rect;
  camera?: CameraCalibration;
  retardanceMaxNm?: number;
  /** The two candidates must differ by at least this much (Delta E76, default 3) for the plate to decide. */
  marginDeltaE?: number;
}

/**
 * For a compensator image: decides between theta and theta + 90 per pixel by the exact forward model. For each
 * candidate the best retardance along that lookup row is found; the candidate whose best colour is nearer wins.
 * Results are cached per (colour cell, angle row). Returns +1 (keep), -1 (add 90 deg) or 0 (undecided).
 */
function plateOrientationChooser(img: Image, o: PlateSignOptions) {
  checkColourImage(img, 'resolving the 90-deg choice with a compensator image');
  const train = resolveTrain(o.train);
  if (!train.compensator) throw new InputError('the compensator image needs a compensator in its train', 'Give the compensator retardance and angle');
  const cal = o.background ? calibrateFromBackground(img, o.background, train, { camera: o.camera }) : null;
  if (cal) train.compensator = { ...train.compensator, retardanceNm: cal.compensatorNm };
  const lut = buildPlateLookup(colourModel(train), { retardanceMaxNm: o.retardanceMaxNm, fullRange: true });
  const margin = checkNumber('plate margin', o.marginDeltaE ?? 3, 0, 100);
  // Colour cells (6 bits per channel) made a block at a time by the caller, each cell's Lab when first met.
  const colours = new CellColours(cal?.camera ?? o.camera ?? NEUTRAL_CAMERA, PLATE_CELL_BITS);
  const lab = colours.lab;
  const nA = lut.anglesDeg.length, nR = lut.retardancesNm.length, step = lut.anglesDeg[1] - lut.anglesDeg[0], C = lut.coords;
  const rowBest = new Map<number, number>();
  const bestOnRow = (cell: number, j: number) => {
    const key = cell * nA + j;
    const hit = rowBest.get(key);
    if (hit !== undefined) return hit;
    const l0 = lab[3 * cell], l1 = lab[3 * cell + 1], l2 = lab[3 * cell + 2];
    let best = Infinity;
    for (let k = 0; k < nR; k++) {
      const o3 = 3 * (j * nR + k), a = C[o3] - l0, b = C[o3 + 1] - l1, c = C[o3 + 2] - l2;
      const d = a * a + b * b + c * c;
      if (d < best) best = d;
    }
    const d = Math.sqrt(best);
    rowBest.set(key, d);
    return d;
  };
  const rowOf = (thetaRad: number) => ((Math.round((thetaRad / DEG - lut.anglesDeg[0]) / step) % nA) + nA) % nA;
  return {
    /** The colour cells of pixels [i0, i0 + out.length) of the compensator image (-1: clipped or invalid, not usable). */
    cellsInto: (i0: number, out: Int32Array) => { quantiseInto(img, PLATE_CELL_BITS, i0, out); },
    /** +1 (keep theta), -1 (add 90 deg) or 0 (undecided) for a pixel of colour cell `cell` (>= 0) read at theta. */
    choose(cell: number, thetaRad: number): number {
      colours.ensure(cell);
      const keep = bestOnRow(cell, rowOf(thetaRad)), flip = bestOnRow(cell, rowOf(thetaRad + Math.PI / 2));
      if (Math.abs(keep - flip) < margin) return 0;
      return keep < flip ? 1 : -1;
    },
  };
}

/**
 * Noise gain g of an angle series' design: with independent image noise of standard deviation sigma, the fit's a4c and
 * a4s scatter by sigma^2 sum_k P1k^2 and sigma^2 sum_k P2k^2 (P the least-squares pseudo-inverse, rows 1 and 2), and
 * g = sum_k P1k^2 + sum_k P2k^2; 1 for 0, 22.5, 45 and 67.5 deg (2 / N x 2 for N equally spaced angles, derived).
 */
function angleNoiseGain(P: number[][]): number {
  let g = 0;
  for (let k = 0; k < P[1].length; k++) g += P[1][k] * P[1][k] + P[2][k] * P[2][k];
  return g;
}

/**
 * The factor by which an angle series' angle noise shrinks one pixel's cos 2(theta - axis) on average, from the pixel's
 * confidence c = A / (A + 3 residual) and the design's noise gain g (field.options.angleNoiseGain):
 * exp(-g (residual / A)^2 / 4), residual / A = (1 - c) / (3 c). The fitted vector (a4c, a4s) of length A / 2 scatters
 * by sigma^2 g / 2 across its direction, so its phase 4 theta by 2 sigma^2 g / A^2 and 2 theta by sigma^2 g / (2 A^2);
 * for a normal angle error E cos 2 epsilon = exp(-var(2 epsilon) / 2) (the characteristic function of the normal
 * distribution), and the residual estimates sigma (N - 3 degrees of freedom per pixel; docs/methods.md §6.5, "Angle noise").
 */
export function angleNoiseFactor(confidence: number, gain: number): number {
  if (!(confidence > 0)) return 0;
  const r = (1 - confidence) / (3 * confidence);
  return Math.exp(-gain * r * r / 4);
}

/** Colour-cube bits per channel of the compensator image that decides the 90-deg choice. */
const PLATE_CELL_BITS = 6;

/** Per-pixel Fourier coefficients of I(alpha) = a0 + a4c cos 4 alpha + a4s sin 4 alpha. */
export interface FourierFit {
  a0: number; a4c: number; a4s: number;
  /** theta = 1/4 atan2(-a4s, -a4c), degrees in [0, 90). */
  angleDeg: number;
  /** A = 2 sqrt(a4c^2 + a4s^2). */
  amplitude: number;
  /** b = a0 - A/2. */
  background: number;
  /** RMS of the fit residual (0 for 3 angles). */
  residual: number;
}

/** Normal-equation solver for the design [1, cos 4a, sin 4a] at the given angles (radians). */
function designPseudoInverse(anglesRad: number[]): number[][] {
  const rows = anglesRad.map((a) => [1, Math.cos(4 * a), Math.sin(4 * a)]);
  const M = [[0, 0, 0], [0, 0, 0], [0, 0, 0]];
  for (const r of rows) for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) M[i][j] += r[i] * r[j];
  const [a, b, c] = M[0], [d, e, f] = M[1], [g, h, k] = M[2];
  const det = a * (e * k - f * h) - b * (d * k - f * g) + c * (d * h - e * g);
  if (Math.abs(det) < 1e-9 * rows.length ** 3) {
    throw new InputError('these polariser angles cannot separate orientation (the cos 4a / sin 4a fit is singular)', 'Use at least 3 angles spread over 90 deg, e.g. 0, 22.5, 45, 67.5');
  }
  const inv = [
    [(e * k - f * h) / det, -(b * k - c * h) / det, (b * f - c * e) / det],
    [-(d * k - f * g) / det, (a * k - c * g) / det, -(a * f - c * d) / det],
    [(d * h - e * g) / det, -(a * h - b * g) / det, (a * e - b * d) / det],
  ];
  // P = M^-1 X^T: coefficient i = sum_k P[i][k] I_k.
  return [0, 1, 2].map((i) => rows.map((r) => inv[i][0] * r[0] + inv[i][1] * r[1] + inv[i][2] * r[2]));
}

/**
 * Least-squares fit of I(alpha) = b + A sin^2 2(theta - alpha) = a0 + a4c cos 4 alpha + a4s sin 4 alpha over any
 * set of at least 3 angles (degrees): a4c = -(A/2) cos 4 theta, a4s = -(A/2) sin 4 theta (docs/methods.md §6.1).
 */
export function fitFourAngle(intensities: number[], anglesDeg: number[]): FourierFit {
  const P = designPseudoInverse(anglesDeg.map((a) => a * DEG));
  return fitWith(P, intensities, anglesDeg.map((a) => a * DEG));
}

function fitWith(P: number[][], I: ArrayLike<number>, anglesRad: number[]): FourierFit {
  let a0 = 0, a4c = 0, a4s = 0;
  for (let k = 0; k < I.length; k++) { a0 += P[0][k] * I[k]; a4c += P[1][k] * I[k]; a4s += P[2][k] * I[k]; }
  const amplitude = 2 * Math.sqrt(a4c * a4c + a4s * a4s);
  let angleDeg = (0.25 * Math.atan2(-a4s, -a4c)) / DEG;
  if (angleDeg < 0) angleDeg += 90;
  if (angleDeg >= 90) angleDeg -= 90;
  let ss = 0;
  for (let k = 0; k < I.length; k++) {
    const r = I[k] - (a0 + a4c * Math.cos(4 * anglesRad[k]) + a4s * Math.sin(4 * anglesRad[k]));
    ss += r * r;
  }
  const dof = I.length - 3;
  return { a0, a4c, a4s, angleDeg, amplitude, background: a0 - amplitude / 2, residual: dof > 0 ? Math.sqrt(ss / dof) : 0 };
}

export interface FourAngleOptions {
  /** Angles of the crossed pair (or of the sample, negated), degrees. Default 0, 22.5, 45, 67.5. */
  anglesDeg?: number[];
  /** Open-beam or blank-slide image for flat-field division (same size). */
  flatField?: Image;
  /** Dark/background image subtracted before the flat-field division (same size). */
  dark?: Image;
  /** Pixels whose amplitude is below this fraction of the 99th-percentile amplitude are masked (default 0.02). */
  amplitudeFloor?: number;
  /** Compensator image resolving the 90-deg ambiguity, with its reading options. */
  plate?: Image;
  plateOptions?: PlateSignOptions;
  /** Without a plate: take orientations within 45 deg of this axis (default: the axis the field concentrates about). */
  referenceAxisDeg?: number;
  /** Keep the per-pixel background b (default true); without it the result's background is null (4 bytes per pixel less). */
  keepBackground?: boolean;
}

export interface FourAngleResult {
  field: OrientationField;
  amplitude: Float32Array;
  /** Per-pixel background b = a0 - A/2, or null when not kept (keepBackground false). */
  background: Float32Array | null;
  residual: Float32Array;
  /** Fraction of usable pixels whose 90-deg choice the plate image decided (0 without a plate). */
  resolvedFraction: number;
  /** The middle amplitude (rank n/2 of the n usable pixels' amplitudes), or null when no pixel is usable. */
  amplitudeMedian: number | null;
}

/** sRGB decoding of stored values through a 65536-entry table (exact for 8- and 16-bit data), built on first use. */
let srgbTable: Float32Array | null = null;
const decodeTable = (): Float32Array => (srgbTable ??= Float32Array.from({ length: 65536 }, (_, k) => srgbDecode(k / 65535)));

/** Pixels per call of the optics kernel (a multiple of 4): a block's inputs and results stay in the caches. */
const KERNEL_BLOCK_PX = 1 << 13;

/** A block's colour planes in the kernel's memory (3 x KERNEL_BLOCK_PX floats). */
interface IntensityStage { k: OpticsKernelExports; rgbAt: number; rgb: Float32Array[] }

function intensityStage(mem: OpticsLayout): IntensityStage {
  const rgbAt = mem.reserve(3 * 4 * KERNEL_BLOCK_PX);
  return { k: mem.k, rgbAt, rgb: [] };
}

/**
 * The linear intensity of pixels [i0, i0 + len) of an image (len <= KERNEL_BLOCK_PX), made by the kernel at byte
 * offset `at` of its memory (intensityRgb or intensityGrey: Rec. 709 luminance of linear RGB, or the grey channel,
 * decoded through decodeTable when sRGB; float32 arithmetic); pixels with a plane at full scale get a 1 at
 * clipAt + t. Returns whether any did. The stage's views are made after the layout's commit.
 */
function intensityOfBlock(s: IntensityStage, img: Image, i0: number, len: number, at: number, clipAt: number): boolean {
  const { k } = s, i1 = i0 + len, table = img.encoding === 'srgb' ? decodeTableIn(k, decodeTable) : 0;
  if (img.channels === 3) {
    if (s.rgb.length === 0 || s.rgb[0].buffer !== k.memory.buffer) s.rgb = [0, 1, 2].map((c) => new Float32Array(k.memory.buffer, s.rgbAt + 4 * KERNEL_BLOCK_PX * c, KERNEL_BLOCK_PX));
    for (let c = 0; c < 3; c++) s.rgb[c].set(img.planes[c].subarray(i0, i1));
    return k.intensityRgb(s.rgbAt, s.rgbAt + 4 * KERNEL_BLOCK_PX, s.rgbAt + 8 * KERNEL_BLOCK_PX, len, FULL_SCALE_LEVEL, table, at, clipAt) > 0;
  }
  // In place: the grey plane's values become its intensities.
  new Float32Array(k.memory.buffer, at, len).set(img.planes[0].subarray(i0, i1));
  return k.intensityGrey(at, len, FULL_SCALE_LEVEL, table, at, clipAt) > 0;
}

/**
 * Linear intensity of pixels [i0, i0 + out.length) of an image into `out`: luminance of linear RGB (Rec. 709
 * weights), or the grey channel, decoded when sRGB (in the optics kernel, float32 arithmetic). With `clipped`,
 * marks pixels with a plane at full scale; with `clippedAsOne` instead, sets their intensity to 1.
 */
export function linearIntensityInto(img: Image, i0: number, out: Float32Array, clipped: Uint8Array | null, clippedAsOne = false): void {
  const mem = new OpticsLayout(opticsKernel()), stage = intensityStage(mem);
  const at = mem.reserve(4 * KERNEL_BLOCK_PX), clipAt = mem.reserve(KERNEL_BLOCK_PX);
  mem.commit();
  const view = mem.f32(at, KERNEL_BLOCK_PX), clip = mem.u8(clipAt, KERNEL_BLOCK_PX);
  for (let s = 0; s < out.length; s += KERNEL_BLOCK_PX) {
    const len = Math.min(KERNEL_BLOCK_PX, out.length - s);
    clip.fill(0);
    const any = intensityOfBlock(stage, img, i0 + s, len, at, clipped || clippedAsOne ? clipAt : 0);
    if (any && clippedAsOne) for (let t = 0; t < len; t++) { if (clip[t]) view[t] = 1; }
    out.set(len === KERNEL_BLOCK_PX ? view : view.subarray(0, len), s);
    if (any && !clippedAsOne) for (let t = 0; t < len; t++) if (clip[t]) clipped![i0 + s + t] = 1;
  }
}

/** Linear intensity plane of a whole image (linearIntensityInto over every pixel; a linear grey image's own plane). */
function linearIntensity(img: Image): Float32Array {
  if (img.channels === 1 && img.encoding === 'linear') return img.planes[0];
  const out = takeFloat32(img.width * img.height, false); // every value written
  linearIntensityInto(img, 0, out, null);
  return out;
}

/**
 * An image of an angle series reduced to what fourAngleAnalysis reads of it: one plane of linear intensity
 * (encoding 'linear', 32-bit), a third of an RGB image's memory. With `markClipped` (the series' own images),
 * pixels with a plane at full scale are set to 1 so they still count as clipped (every other pixel's intensity is
 * below FULL_SCALE_LEVEL); without it (flat field, dark image) every value is kept. fourAngleAnalysis gives the same
 * reading from the reduced images as from the images themselves.
 */
export function seriesIntensityImage(img: Image, markClipped = true): Image {
  if (img.channels === 1 && img.encoding === 'linear') return img;
  const plane = takeFloat32(img.width * img.height, false);
  linearIntensityInto(img, 0, plane, null, markClipped);
  return makeImage({ ...img, channels: 1, planes: [plane], bitDepth: 32, encoding: 'linear' });
}

/** Pixels per block of the angle series: the images' intensities are made a block at a time, not as whole planes. */
const SERIES_BLOCK_PX = 1 << 15;

/**
 * Four-angle (or any-angle) crossed-polariser analysis: per-pixel Fourier fit for orientation mod 90 deg
 * (slow or fast axis), relative retardance amplitude, background and residual, after optional dark
 * subtraction and flat-field division. With a compensator image, the plate's effective retardance tells
 * addition from subtraction and so picks theta or theta + 90.
 */
export function fourAngleAnalysis(images: Image[], options: FourAngleOptions = {}): FourAngleResult {
  const angles = options.anglesDeg ?? [0, 22.5, 45, 67.5];
  if (images.length < 3) throw new InputError(`the angle analysis needs at least 3 images, got ${images.length}`, 'Give one image per polariser angle');
  if (angles.length !== images.length) {
    throw new InputError(`${images.length} images but ${angles.length} angles`, 'Give one polariser angle per image (--angles)');
  }
  angles.forEach((a) => checkNumber('polariser angle', a, -360, 360, 'deg'));
  const { width, height } = images[0];
  for (const im of [...images, options.flatField, options.dark, options.plate]) {
    if (im && (im.width !== width || im.height !== height)) {
      throw new InputError(`${im.source.name} is ${im.width}x${im.height}, the first image is ${width}x${height}`, 'All images of one analysis must have the same size');
    }
  }
  const floor = checkNumber('amplitude floor', options.amplitudeFloor ?? 0.02, 0, 1);
  const anglesRad = angles.map((a) => a * DEG);
  const P = designPseudoInverse(anglesRad);
  const dark = options.dark ? linearIntensity(options.dark) : null;
  const flat = options.flatField ? linearIntensity(options.flatField) : null;
  let flatMean = 1;
  if (flat) {
    let s = 0;
    for (let i = 0; i < flat.length; i++) s += flat[i] - (dark ? dark[i] : 0);
    flatMean = s / flat.length;
  }
  const n = width * height;
  // The kernel's fit (four images) writes every pixel of these: arrays from the pool (their pages already touched)
  // need not be zeroed first; fitBlock writes only the pixels it reads.
  const take = () => takeFloat32(n, images.length !== 4);
  const angleRad = take(), confidence = take(), mask = takeUint8(n);
  const amplitude = take(), residual = take(), cos2 = take(), sin2 = take();
  const background = options.keepBackground === false ? null : take();
  const out = { angleRad, confidence, mask, amplitude, background, residual, cos2, sin2, sumCos4: 0, sumSin4: 0 };
  const fit = { P, cos4: anglesRad.map((a) => Math.cos(4 * a)), sin4: anglesRad.map((a) => Math.sin(4 * a)), dark, flat, flatMean };
  const counts = { flatBad: 0, nonFinite: 0, clipped: 0 };
  // A clipped image value would pull the fit: such pixels are not read.
  const clipped = takeUint8(n);
  if (images.length === 4) fitSeriesOfFour(images, clipped, fit, out, counts);
  else {
    const block = images.map(() => new Float32Array(Math.min(n, SERIES_BLOCK_PX)));
    for (let i0 = 0; i0 < n; i0 += SERIES_BLOCK_PX) {
      const len = Math.min(SERIES_BLOCK_PX, n - i0);
      const I = block.map((b) => b.subarray(0, len));
      images.forEach((img, k) => linearIntensityInto(img, i0, I[k], clipped));
      fitBlock(I, i0, clipped, fit, out, counts);
    }
  }
  const { flatBad, nonFinite, clipped: clippedCount } = counts;
  // The 99th percentile by radix selection in place (src/optics/ranks.ts), not a sort or a copy: the same value. Its
  // counts, less the pixels masked below, give the usable pixels' middle amplitude with one more pass.
  const ampCounts = rankCounts(amplitude, { mask }), k = ampCounts.count;
  const ampRef = k ? valuesOfCountedRanks(ampCounts, [Math.min(k - 1, Math.floor(0.99 * (k - 1)))])[0] : 0;
  let lowAmp = 0;
  // The pixels masked here leave the confidence-weighted sums of cos 4 theta and sin 4 theta the fit made.
  const sums = Float64Array.of(out.sumCos4, out.sumSin4), limit = floor * ampRef;
  lowAmp += maskLowAmplitude(mask, amplitude, confidence, angleRad, limit, sums, ampCounts);
  const amplitudeMedian = ampCounts.count ? valuesOfCountedRanks(ampCounts, [ampCounts.count >> 1])[0] : null;
  const warnings: string[] = [];
  if (flatBad) warnings.push(`${flatBad} pixels with a dark flat field were masked`);
  if (clippedCount) warnings.push(`${clippedCount} pixels at full scale (clipped) in an image were masked (${((100 * clippedCount) / n).toFixed(2)} %)`);
  if (nonFinite) warnings.push(`${nonFinite} pixels with a non-finite value (NaN or infinity) in an image were masked`);
  if (lowAmp) warnings.push(`${lowAmp} pixels with no measurable anisotropy (amplitude below ${floor} of the 99th percentile) were masked`);
  let ambiguity: OrientationField['ambiguity'] = 'mod-90';
  let resolvedFraction = 0;
  let ambiguous: Uint8Array | undefined;
  let decidedAxisDeg: number | null = null;
  if (options.plate) {
    const plate = plateOrientationChooser(options.plate, options.plateOptions ?? {});
    let usable = 0, resolved = 0;
    // Confidence-weighted sums of cos 2 theta and sin 2 theta over the pixels the plate decided (their axis mod 180 deg).
    const decided = new Float64Array(2);
    ambiguous = takeUint8(n, false).fill(1);
    const cells = new Int32Array(Math.min(n, SERIES_BLOCK_PX));
    for (let i0 = 0; i0 < n; i0 += SERIES_BLOCK_PX) {
      const len = Math.min(SERIES_BLOCK_PX, n - i0);
      plate.cellsInto(i0, cells.subarray(0, len));
      for (let t = 0; t < len; t++) {
        const i = i0 + t, cell = cells[t];
        if (!mask[i] || cell < 0) continue;
        usable++;
        const c = plate.choose(cell, angleRad[i]);
        if (c === 0) continue;
        if (c < 0) { angleRad[i] += 90 * DEG; cos2[i] = -cos2[i]; sin2[i] = -sin2[i]; }
        resolved++;
        ambiguous[i] = 0;
        decided[0] += confidence[i] * cos2[i]; decided[1] += confidence[i] * sin2[i];
      }
    }
    if (resolved > 0 && (decided[0] !== 0 || decided[1] !== 0)) decidedAxisDeg = (0.5 * Math.atan2(decided[1], decided[0])) / DEG;
    resolvedFraction = usable ? resolved / usable : 0;
    const byNeighbours = resolved > 0 && resolved < usable ? decideByNeighbours(width, height, mask, ambiguous, angleRad, cos2, sin2, confidence) : 0;
    if (usable > 0 && resolved + byNeighbours === usable) ambiguity = 'none';
    warnings.push(`the plate image decided the 90-deg choice in ${(100 * resolvedFraction).toFixed(1)} % of pixels${byNeighbours ? `, their neighbours' director in ${((100 * byNeighbours) / usable).toFixed(1)} % more` : ''}; the rest (slow axis near the polars, or too little retardance) keep the fit's value in [0, 90)`);
  }
  // Angles above 90 deg come from the plate's and the neighbours' turns by 90 deg, or from fitBlock's float64 angle
  // just below 90 deg rounded up to float32; the kernel's (fitFour, four images) are float32 below 90 deg already.
  if (options.plate || images.length !== 4) for (let i = 0; i < n; i++) if (angleRad[i] > Math.PI / 2) angleRad[i] -= Math.PI;
  let field: OrientationField = {
    width, height, angleRad, cos2, sin2, confidence, mask, clipped, method: 'angle-series', ambiguity, ambiguous: ambiguity === 'mod-90' ? ambiguous : undefined,
    pixelSizeUmPerPx: images[0].pixelSizeUmPerPx,
    // The noise gain only where the residual estimates the noise (more than 3 angles).
    options: { anglesDeg: angles, flatField: !!flat, dark: !!dark, amplitudeFloor: floor, plate: !!options.plate, angleNoiseGain: images.length > 3 ? angleNoiseGain(P) : null },
    warnings,
  };
  // Unresolved pixels: show them within 45 deg of the axis the field is concentrated about, so the
  // picture and S_2D are not split between theta and theta + 90 (the assumption is stated in a warning). Without a
  // plate the axis is mod90Axis's, from the sums the fit made (cos 4 theta and sin 4 theta are the fit's own
  // components), known itself only modulo 90 deg; with one, the pixels it decided fix the axis modulo 180 deg
  // (1/2 atan2 of their sums of sin 2 theta and cos 2 theta), and the rest are folded about that: about the
  // mod-90 axis, a field about 90 deg (or any axis in (90, 180) deg) had its undecided pixels put 90 deg off.
  if (ambiguity === 'mod-90') field = foldMod90(field, options.referenceAxisDeg ?? decidedAxisDeg ?? mod90AxisOfSums(sums[0], sums[1]), true);
  return { field, amplitude, background, residual, resolvedFraction, amplitudeMedian };
}

/**
 * Hands an angle series' per-pixel arrays (its field's, and the amplitude, background and residual planes) back to
 * the array pool (src/common/arrayPool.ts) for the next reading of the same size, which then writes its own into
 * pages already touched. For the one who holds the reading and is done with it: nothing may read it afterwards.
 */
export function recycleAngleSeries(r: { field: OrientationField; amplitude?: Float32Array | null; background?: Float32Array | null; residual?: Float32Array | null }): void {
  const f = r.field;
  giveBack(f.angleRad, f.cos2, f.sin2, f.confidence, f.mask, f.clipped, f.ambiguous, r.amplitude, r.background, r.residual);
}

/**
 * Masks the usable pixels whose amplitude is at most `limit`, takes them out of the amplitudes' rank counts and takes
 * their confidence x cos 4 theta and x sin 4 theta from sums[0] and sums[1], in pixel order; returns how many it masked.
 * The optics kernel (lowAmplitude) lists a block's such pixels (the block's mask and amplitudes copied into its memory).
 */
function maskLowAmplitude(mask: Uint8Array, amplitude: Float32Array, confidence: Float32Array, angleRad: Float32Array, limit: number, sums: Float64Array, counts: RankCounts): number {
  const k = opticsKernel(), mem = new OpticsLayout(k), n = mask.length, B = Math.min(Math.max(n, 1), SERIES_BLOCK_PX);
  const at = { mask: mem.reserve(B), amplitude: mem.reserve(4 * B), listed: mem.reserve(4 * B) };
  mem.commit();
  const maskView = mem.u8(at.mask, B), amplitudeView = mem.f32(at.amplitude, B), listed = mem.i32(at.listed, B);
  let masked = 0;
  for (let i0 = 0; i0 < n; i0 += B) {
    const len = Math.min(B, n - i0);
    maskView.set(mask.subarray(i0, i0 + len)); amplitudeView.set(amplitude.subarray(i0, i0 + len));
    const m = k.lowAmplitude(at.mask, at.amplitude, len, limit, at.listed);
    masked += m;
    for (let q = 0; q < m; q++) {
      const i = i0 + listed[q];
      mask[i] = 0;
      uncount(counts, i);
      const w = confidence[i];
      if (w !== 0) { sums[0] -= w * Math.cos(4 * angleRad[i]); sums[1] -= w * Math.sin(4 * angleRad[i]); }
    }
  }
  return masked;
}

/** Side of the blocks whose decided pixels give an undecided pixel its neighbours' director (3 x 3 blocks around it), px. */
const NEIGHBOUR_BLOCK_PX = 8;
/**
 * Least length of the neighbours' mean doubled-angle vector (confidence-weighted) for it to decide a pixel: their
 * directors must agree (for a wrapped-normal spread, 0.3 is a spread of about 45 deg, derived); our own choice.
 */
const NEIGHBOUR_MIN_ORDER = 0.3;

/**
 * Decides the 90-deg choice of pixels the compensator image left undecided (slow axis near a polariser, or too
 * little retardance) by director continuity: of theta and theta + 90 deg, the one nearer the confidence-weighted
 * mean director of the decided pixels in the 3 x 3 blocks of NEIGHBOUR_BLOCK_PX around it, when those agree
 * (NEIGHBOUR_MIN_ORDER). A director field is continuous over its correlation length (tens of pixels in these
 * textures), while theta and theta + 90 deg are as far apart as axes can be. Changes the arrays in place and marks
 * the pixels decided; returns how many it decided.
 */
function decideByNeighbours(width: number, height: number, mask: Uint8Array, ambiguous: Uint8Array, angleRad: Float32Array, cos2: Float32Array, sin2: Float32Array, confidence: Float32Array): number {
  const B = NEIGHBOUR_BLOCK_PX, bw = Math.ceil(width / B), bh = Math.ceil(height / B);
  const sc = new Float64Array(bw * bh), ss = new Float64Array(bw * bh), sw = new Float64Array(bw * bh);
  for (let y = 0; y < height; y++) {
    const row = ((y / B) | 0) * bw;
    for (let x = 0; x < width; x++) {
      const i = y * width + x;
      if (!mask[i] || ambiguous[i]) continue;
      const b = row + ((x / B) | 0), w = confidence[i];
      sc[b] += w * cos2[i]; ss[b] += w * sin2[i]; sw[b] += w;
    }
  }
  let decided = 0;
  for (let y = 0; y < height; y++) {
    const by = (y / B) | 0;
    for (let x = 0; x < width; x++) {
      const i = y * width + x;
      if (!mask[i] || !ambiguous[i]) continue;
      const bx = (x / B) | 0;
      let c = 0, s = 0, w = 0;
      for (let j = Math.max(0, by - 1); j <= Math.min(bh - 1, by + 1); j++) {
        for (let k = Math.max(0, bx - 1); k <= Math.min(bw - 1, bx + 1); k++) { const b = j * bw + k; c += sc[b]; s += ss[b]; w += sw[b]; }
      }
      if (!(w > 0) || Math.hypot(c, s) < NEIGHBOUR_MIN_ORDER * w) continue;
      // theta + 90 deg turns 2 theta by 180 deg: the choice is the sign of the doubled-angle vector's projection.
      if (c * cos2[i] + s * sin2[i] < 0) { angleRad[i] += Math.PI / 2; cos2[i] = -cos2[i]; sin2[i] = -sin2[i]; }
      ambiguous[i] = 0;
      decided++;
    }
  }
  return decided;
}

interface SeriesFit {
  P: number[][]; cos4: number[]; sin4: number[];
  dark: Float32Array | null; flat: Float32Array | null; flatMean: number;
}
interface SeriesOut {
  angleRad: Float32Array; confidence: Float32Array; mask: Uint8Array;
  amplitude: Float32Array; background: Float32Array | null; residual: Float32Array;
  /** cos 2 theta and sin 2 theta of the fit's angle (1 and 0 where a pixel is not read). */
  cos2: Float32Array; sin2: Float32Array;
  /** Sums over the read pixels of confidence x cos 4 theta and confidence x sin 4 theta (for mod90Axis). */
  sumCos4: number; sumSin4: number;
}

/**
 * cos 2 theta and sin 2 theta for the fit's theta = 1/4 atan2(sin 4 theta, cos 4 theta) in [0, 90) deg, by the
 * half-angle formulas without trigonometry: 2 theta lies in [0, 180) deg, so sin 2 theta = sqrt((1 - cos 4 theta) / 2)
 * >= 0 and cos 2 theta takes the sign of sin 4 theta = 2 sin 2 theta cos 2 theta; each is taken from the square
 * root whose argument is the larger, the other as sin 4 theta / (2 times it). Written into cos2[i] and sin2[i].
 */
function doubledAngleInto(cos4: number, sin4: number, cos2: Float32Array, sin2: Float32Array, i: number): void {
  if (cos4 >= 0) {
    const c = Math.sqrt(0.5 + 0.5 * cos4);
    cos2[i] = sin4 < 0 ? -c : c; sin2[i] = Math.abs(sin4) / (2 * c);
  } else {
    const s = Math.sqrt(0.5 - 0.5 * cos4);
    sin2[i] = s; cos2[i] = sin4 / (2 * s);
  }
}

/**
 * The per-pixel fit (fitFourAngle's, after dark subtraction and flat-field division) of one block of pixels
 * starting at i0, whose intensities per image are in I; writes the outputs and counts the pixels not read.
 */
function fitBlock(I: Float32Array[], i0: number, clipped: Uint8Array, fit: SeriesFit, out: SeriesOut, counts: { flatBad: number; nonFinite: number; clipped: number }): void {
  const nImg = I.length, len = I[0].length, { dark, flat, flatMean } = fit;
  const P0 = Float64Array.from(fit.P[0]), P1 = Float64Array.from(fit.P[1]), P2 = Float64Array.from(fit.P[2]);
  const cos4 = Float64Array.from(fit.cos4), sin4 = Float64Array.from(fit.sin4), v = new Float64Array(nImg);
  const { angleRad, confidence, mask, amplitude, background, residual, cos2, sin2 } = out;
  const sums = new Float64Array(2); // (not boxed: see fitSeriesOfFour)
  for (let t = 0; t < len; t++) {
    const i = i0 + t;
    cos2[i] = 1;
    if (clipped[i]) { counts.clipped++; continue; }
    let f = 1;
    const d = dark ? dark[i] : 0;
    if (flat) {
      const fv = flat[i] - d;
      if (!(fv > 1e-6)) { counts.flatBad++; continue; }
      f = flatMean / fv;
    }
    let a0 = 0, a4c = 0, a4s = 0;
    for (let k = 0; k < nImg; k++) {
      const x = (I[k][t] - d) * f;
      v[k] = x;
      a0 += P0[k] * x; a4c += P1[k] * x; a4s += P2[k] * x;
    }
    if (!Number.isFinite(a0 + a4c + a4s)) { counts.nonFinite++; continue; }
    let ss = 0;
    for (let k = 0; k < nImg; k++) { const r = v[k] - (a0 + a4c * cos4[k] + a4s * sin4[k]); ss += r * r; }
    const h = Math.sqrt(a4c * a4c + a4s * a4s), amp = 2 * h, res = nImg > 3 ? Math.sqrt(ss / (nImg - 3)) : 0;
    let th = 0.25 * Math.atan2(-a4s, -a4c);
    if (th < 0) th += Math.PI / 2;
    // Rounded up to 90 deg, theta is taken as 0: 2 theta turns by 180 deg (below).
    const turned = th >= Math.PI / 2;
    if (turned) th -= Math.PI / 2;
    angleRad[i] = th;
    amplitude[i] = amp; residual[i] = res;
    if (background) background[i] = a0 - amp / 2;
    const w = Math.fround(amp / (amp + 3 * res + 1e-12));
    confidence[i] = w;
    mask[i] = 1;
    if (h > 0) {
      // (cos 4 theta, sin 4 theta) = -(a4c, a4s) / h.
      const c4 = -a4c / h, s4 = -a4s / h;
      doubledAngleInto(c4, s4, cos2, sin2, i);
      if (turned) { cos2[i] = -cos2[i]; sin2[i] = -sin2[i]; }
      sums[0] += w * c4; sums[1] += w * s4;
    } else {
      cos2[i] = Math.cos(2 * angleRad[i]); sin2[i] = Math.sin(2 * angleRad[i]);
    }
  }
  out.sumCos4 += sums[0]; out.sumSin4 += sums[1];
}

/**
 * fitBlock for four images (the usual series) over every block of the images, in the optics kernel
 * (src/wasm/opticsKernel.as.ts: fitFour, after intensityRgb or intensityGrey), four pixels at a time in float32
 * arithmetic (the readings are float32: they differ from fitBlock's float64 evaluation by a few units in the last
 * place). Each block's image values are copied into the kernel's memory and its results copied out.
 */
function fitSeriesOfFour(images: Image[], clipped: Uint8Array, fit: SeriesFit, out: SeriesOut, counts: { flatBad: number; nonFinite: number; clipped: number }): void {
  const n = clipped.length, { dark, flat, flatMean } = fit, B = KERNEL_BLOCK_PX;
  const k = opticsKernel(), mem = new OpticsLayout(k), stage = intensityStage(mem);
  const intensityAt = [0, 1, 2, 3].map(() => mem.reserve(4 * B));
  const darkAt = dark ? mem.reserve(4 * B) : 0, flatAt = flat ? mem.reserve(4 * B) : 0, clipAt = mem.reserve(B);
  const names = ['angleRad', 'amplitude', 'residual', 'background', 'confidence', 'cos2', 'sin2'] as const;
  const outAt = names.map((name) => (name === 'background' && !out.background ? 0 : mem.reserve(4 * B)));
  const maskAt = mem.reserve(B), coeffAt = mem.reserve(20 * 4), sumsAt = mem.reserve(16), countsAt = mem.reserve(16);
  mem.commit();
  mem.f32(coeffAt, 20).set([...fit.P[0], ...fit.P[1], ...fit.P[2], ...fit.cos4, ...fit.sin4]);
  mem.f64(sumsAt, 2).fill(0);
  const kCounts = mem.i32(countsAt, 4);
  kCounts.fill(0);
  const clip = mem.u8(clipAt, B), mask = mem.u8(maskAt, B);
  const outViews = outAt.map((at) => (at ? mem.f32(at, B) : null));
  const darkView = dark ? mem.f32(darkAt, B) : null, flatView = flat ? mem.f32(flatAt, B) : null;
  for (let i0 = 0; i0 < n; i0 += B) {
    const len = Math.min(B, n - i0), i1 = i0 + len;
    clip.fill(0);
    images.forEach((img, j) => intensityOfBlock(stage, img, i0, len, intensityAt[j], clipAt));
    if (darkView) darkView.set(dark!.subarray(i0, i1));
    if (flatView) flatView.set(flat!.subarray(i0, i1));
    const zeroBefore = kCounts[3], clippedBefore = kCounts[0], notReadBefore = kCounts[0] + kCounts[1] + kCounts[2];
    k.fitFour(intensityAt[0], intensityAt[1], intensityAt[2], intensityAt[3], darkAt, flatAt, flatMean, clipAt, len, coeffAt,
      outAt[0], outAt[1], outAt[2], outAt[3], outAt[4], outAt[5], outAt[6], maskAt, sumsAt, countsAt);
    names.forEach((name, j) => { const v = outViews[j]; if (v) out[name]!.set(len === B ? v : v.subarray(0, len), i0); });
    // Mask and clipped flags only where the block has some (the arrays' untouched pages take no memory).
    if (kCounts[0] + kCounts[1] + kCounts[2] - notReadBefore < len) out.mask.set(len === B ? mask : mask.subarray(0, len), i0);
    if (kCounts[0] > clippedBefore) clipped.set(len === B ? clip : clip.subarray(0, len), i0);
    // Zero amplitude (rare): cos 2 theta and sin 2 theta of the angle itself, as fitBlock makes them.
    if (kCounts[3] !== zeroBefore) {
      for (let i = i0; i < i1; i++) if (Number.isNaN(out.cos2[i])) { out.cos2[i] = Math.cos(2 * out.angleRad[i]); out.sin2[i] = Math.sin(2 * out.angleRad[i]); }
    }
  }
  const sums = mem.f64(sumsAt, 2);
  out.sumCos4 += sums[0]; out.sumSin4 += sums[1];
  counts.clipped += kCounts[0]; counts.flatBad += kCounts[1]; counts.nonFinite += kCounts[2];
}
