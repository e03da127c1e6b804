import { DEG } from '../common/index.ts';
import { retardInPlace, polarised } from './jones.ts';
import { cmf1931, illuminantSpd, wavelengthGrid, type WavelengthGrid } from './spectrum.ts';
import {
  bradfordMatrix, D65_WHITE, linearSrgbTo8bit, matMul3, mulMat3, xyzToLab, xyzToLabInto, XYZ_TO_SRGB, SRGB_TO_XYZ,
  type Mat3, type Vec3,
} from './colorimetry.ts';
import { resolveTrain, slowAxisRad, type OpticalTrain, type SampleRetarder } from './train.ts';

/**
 * The spectral forward model of one optical train, with its integration weights precomputed:
 * X = k sum S(lambda) T(lambda) xbar(lambda) dlambda (same for Y, Z), k = 1 / sum S ybar dlambda, so the
 * open beam (no sample, parallel polars) has Y = 1. Monochrome trains integrate one wavelength.
 */
export interface ColourModel {
  train: OpticalTrain;
  wavelengthsNm: Float64Array;
  /** Per-wavelength weights for X, Y, Z (include S, the CMF, the step and k). */
  wx: Float64Array; wy: Float64Array; wz: Float64Array;
  /** XYZ of the open beam: the Lab white. */
  whiteXyz: Vec3;
  /** Open-beam XYZ -> camera linear sRGB, white-balanced to the lamp (Bradford adaptation to D65). */
  xyzToCamera: Mat3;
}

/** Builds the forward model. Default grid 380-780 nm in 5-nm steps. */
export function colourModel(train: Partial<OpticalTrain> = {}, grid: WavelengthGrid = wavelengthGrid()): ColourModel {
  const t = resolveTrain(train);
  let w = grid.wavelengthsNm, step = grid.stepNm;
  if (t.monochromeNm !== undefined) {
    w = Float64Array.of(t.monochromeNm);
    step = 1;
  }
  const n = w.length;
  const wx = new Float64Array(n), wy = new Float64Array(n), wz = new Float64Array(n);
  let norm = 0;
  for (let i = 0; i < n; i++) {
    const s = t.monochromeNm !== undefined ? 1 : illuminantSpd(t.illuminant, w[i]) * step;
    const [x, y, z] = cmf1931(w[i]);
    wx[i] = s * x; wy[i] = s * y; wz[i] = s * z;
    norm += s * y;
  }
  for (let i = 0; i < n; i++) { wx[i] /= norm; wy[i] /= norm; wz[i] /= norm; }
  let whiteXyz: Vec3 = [sum(wx), sum(wy), sum(wz)];
  if (t.monochromeNm !== undefined) whiteXyz = [...D65_WHITE];
  const adapt = t.monochromeNm !== undefined ? identity3() : bradfordMatrix(whiteXyz, D65_WHITE);
  return { train: t, wavelengthsNm: w, wx, wy, wz, whiteXyz, xyzToCamera: matMul3(XYZ_TO_SRGB, adapt) };
}

const sum = (a: Float64Array) => a.reduce((s, v) => s + v, 0);
const identity3 = (): Mat3 => [1, 0, 0, 0, 1, 0, 0, 0, 1];

/**
 * Spectral transmission T(lambda) of the train with this sample (Jones product, polariser -> sample ->
 * compensator -> analyser), I/I0 with I0 the light after the polariser.
 */
export function transmission(model: ColourModel, sample: SampleRetarder, out = new Float64Array(model.wavelengthsNm.length)): Float64Array {
  const t = model.train;
  const p = t.polariserDeg * DEG, a = t.analyserDeg * DEG;
  const sa = slowAxisRad(sample);
  const cS = Math.cos(sa), sS = Math.sin(sa);
  const comp = t.compensator;
  const cC = comp ? Math.cos(comp.axisDeg * DEG) : 1, sC = comp ? Math.sin(comp.axisDeg * DEG) : 0;
  const ca = Math.cos(a), sAn = Math.sin(a);
  const e0 = polarised(p), e = new Float64Array(4);
  for (let i = 0; i < out.length; i++) {
    const lam = model.wavelengthsNm[i];
    const hs = (Math.PI * sample.retardanceNm) / lam;
    e.set(e0);
    retardInPlace(e, cS, sS, Math.cos(hs), Math.sin(hs));
    if (comp) {
      const hp = (Math.PI * comp.retardanceNm) / lam;
      retardInPlace(e, cC, sC, Math.cos(hp), Math.sin(hp));
    }
    const re = ca * e[0] + sAn * e[2], im = ca * e[1] + sAn * e[3];
    out[i] = re * re + im * im;
  }
  return out;
}

/** XYZ (open beam Y = 1) of a transmission spectrum; monochrome trains give grey I * white. */
export function xyzOfTransmission(model: ColourModel, tr: Float64Array): Vec3 {
  if (model.train.monochromeNm !== undefined) {
    const w = model.whiteXyz;
    return [w[0] * tr[0], w[1] * tr[0], w[2] * tr[0]];
  }
  let x = 0, y = 0, z = 0;
  for (let i = 0; i < tr.length; i++) { x += model.wx[i] * tr[i]; y += model.wy[i] * tr[i]; z += model.wz[i] * tr[i]; }
  return [x, y, z];
}

/** Everything the model predicts for one sample. */
export interface InterferenceColour {
  /** Tristimulus values, open beam Y = 1, under the lamp. */
  xyz: Vec3;
  /** CIELAB with the open beam as white (the chart convention). */
  lab: Vec3;
  /** Camera linear sRGB (white-balanced to the lamp, Bradford to D65), unclipped. */
  linearRgb: Vec3;
  /** 8-bit sRGB, linear values clipped to [0, 1] first. */
  srgb8: Vec3;
}

/** Interference colour of a sample in the model's train. */
export function interferenceColour(model: ColourModel, sample: SampleRetarder): InterferenceColour {
  const xyz = xyzOfTransmission(model, transmission(model, sample));
  const linearRgb = mulMat3(model.xyzToCamera, xyz);
  return { xyz, lab: xyzToLab(xyz, model.whiteXyz), linearRgb, srgb8: linearSrgbTo8bit(linearRgb) };
}

/**
 * Lab used for matching camera pixels: camera linear sRGB (negative values clipped to 0, as a camera cannot
 * record them) back to XYZ with the sRGB matrix, then CIELAB against the D65 white.
 */
export function matchLabOfLinearRgb(rgb: Vec3): Vec3 {
  const out: Vec3 = [0, 0, 0];
  matchLabInto(rgb[0], rgb[1], rgb[2], out, 0);
  return out;
}

/** matchLabOfLinearRgb of (r, g, b) written to out[o], out[o + 1], out[o + 2] (no new array). */
export function matchLabInto(r: number, g: number, b: number, out: Vec3 | Float64Array | Float32Array, o: number): void {
  const x = Math.max(0, r), y = Math.max(0, g), z = Math.max(0, b), m = SRGB_TO_XYZ;
  xyzToLabInto(m[0] * x + m[1] * y + m[2] * z, m[3] * x + m[4] * y + m[5] * z, m[6] * x + m[7] * y + m[8] * z, D65_WHITE, out, o);
}
