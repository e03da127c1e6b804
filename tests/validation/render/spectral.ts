/**
 * Spectral rendering of a birefringent sample between crossed polarisers with a full-wave compensator,
 * for the validation renderer (written independently of the project's optics code).
 *
 * Per wavelength the transmitted intensity is |e_a^T W_p W_s e_p|^2 (Jones calculus: polariser unit vector
 * e_p, sample retarder W_s, compensator W_p, analyser unit vector e_a; light meets the sample first), with a
 * linear retarder of retardance Gamma and slow axis theta written as
 *   W(delta, theta) = R(theta) diag(exp(-i delta/2), exp(+i delta/2)) R(-theta),  delta = 2 pi Gamma / lambda
 * (Jones 1941, J. Opt. Soc. Am. 31:488; any text on polarisation optics, e.g. Hecht, Optics, ch. 8).
 * Retardances do not depend on wavelength (no dispersion). Colour: XYZ = k sum S(lambda) T(lambda) cmf(lambda)
 * dlambda over 380-780 nm in 5 nm steps with k = 1 / sum S ybar dlambda (the open beam has Y = 1); lamp S =
 * Planck's law; colour-matching functions = the multi-lobe analytic fit of Wyman, Sloan & Shirley (2013),
 * "Simple Analytic Approximations to the CIE XYZ Color Matching Functions", J. Computer Graphics Techniques
 * 2(2):1-11 (JCGT); XYZ -> linear sRGB with the IEC 61966-2-1 matrix; camera white balance by per-channel
 * gains that make the open beam (lamp through parallel polarisers, no sample, no compensator) neutral,
 * R = G = B = 1 (a camera's "white balance on the lamp"); sRGB transfer curve of IEC 61966-2-1.
 *
 * Angles inside are radians in a frame with y up, so an angle CCW on screen is the same number here.
 */

/** Wavelength grid, nm: 380, 385, ..., 780. */
export const WAVELENGTHS_NM = Float64Array.from({ length: 81 }, (_, i) => 380 + 5 * i);
const D_LAMBDA_NM = 5;

/** Piecewise Gaussian lobe of Wyman et al. (2013): exp(-t^2/2), t = (lambda - mu) tau1 below mu, (lambda - mu) tau2 above. */
function lobe(lambdaNm: number, mu: number, tau1: number, tau2: number): number {
  const t = (lambdaNm - mu) * (lambdaNm < mu ? tau1 : tau2);
  return Math.exp(-0.5 * t * t);
}

/**
 * CIE 1931 2-degree colour-matching functions, multi-lobe fit of Wyman, Sloan & Shirley (2013), eq. 2
 * (inverse-width form, tau in 1/nm). Returns [xbar, ybar, zbar].
 */
export function cmfWyman(lambdaNm: number): [number, number, number] {
  const x = 1.056 * lobe(lambdaNm, 599.8, 0.0264, 0.0323) + 0.362 * lobe(lambdaNm, 442.0, 0.0624, 0.0374) - 0.065 * lobe(lambdaNm, 501.1, 0.049, 0.0382);
  const y = 0.821 * lobe(lambdaNm, 568.8, 0.0213, 0.0247) + 0.286 * lobe(lambdaNm, 530.9, 0.0613, 0.0322);
  const z = 1.217 * lobe(lambdaNm, 437.0, 0.0845, 0.0278) + 0.681 * lobe(lambdaNm, 459.0, 0.0385, 0.0725);
  return [x, y, z];
}

/**
 * Planck's law, spectral radiant exitance up to a constant: lambda^-5 / (exp(c2 / (lambda T)) - 1), with
 * c2 = 1.438776877e-2 m K (CODATA 2018 second radiation constant). lambda in nm, T in kelvin.
 */
export function planckRelative(lambdaNm: number, temperatureK: number): number {
  const l = lambdaNm * 1e-9;
  return 1 / (l ** 5 * (Math.exp(1.438776877e-2 / (l * temperatureK)) - 1));
}

/** XYZ (Y of the white = 1) -> linear sRGB, IEC 61966-2-1 (D65) matrix, rows R, G, B. */
export const XYZ_TO_LINEAR_SRGB = [
  [3.2406, -1.5372, -0.4986],
  [-0.9689, 1.8758, 0.0415],
  [0.0557, -0.204, 1.057],
];

/** sRGB transfer curve (IEC 61966-2-1): 12.92 L below 0.0031308, else 1.055 L^(1/2.4) - 0.055. Input clipped to [0, 1]. */
export function srgbEncode(linear: number): number {
  const L = Math.min(1, Math.max(0, linear));
  return L <= 0.0031308 ? 12.92 * L : 1.055 * L ** (1 / 2.4) - 0.055;
}

/** A complex 2x2 matrix, [re00, im00, re01, im01, re10, im10, re11, im11]. */
export type Jones = Float64Array;

function jmul(a: Jones, b: Jones): Jones {
  const o = new Float64Array(8);
  for (let r = 0; r < 2; r++) {
    for (let c = 0; c < 2; c++) {
      let re = 0, im = 0;
      for (let k = 0; k < 2; k++) {
        const ar = a[(r * 2 + k) * 2], ai = a[(r * 2 + k) * 2 + 1], br = b[(k * 2 + c) * 2], bi = b[(k * 2 + c) * 2 + 1];
        re += ar * br - ai * bi; im += ar * bi + ai * br;
      }
      o[(r * 2 + c) * 2] = re; o[(r * 2 + c) * 2 + 1] = im;
    }
  }
  return o;
}

const rotation = (a: number): Jones => Float64Array.of(Math.cos(a), 0, -Math.sin(a), 0, Math.sin(a), 0, Math.cos(a), 0);
const IDENTITY: Jones = Float64Array.of(1, 0, 0, 0, 0, 0, 1, 0);

/** Linear retarder W(delta, theta) = R(theta) diag(e^{-i delta/2}, e^{+i delta/2}) R(-theta). */
export function retarder(deltaRad: number, thetaRad: number): Jones {
  const h = deltaRad / 2;
  const d = Float64Array.of(Math.cos(h), -Math.sin(h), 0, 0, 0, 0, Math.cos(h), Math.sin(h));
  return jmul(jmul(rotation(thetaRad), d), rotation(-thetaRad));
}

/** Amplitude e_a^T M e_p for real unit vectors at angles p (polariser) and a (analyser): [re, im]. */
function project(m: Jones, pRad: number, aRad: number): [number, number] {
  const px = Math.cos(pRad), py = Math.sin(pRad), ax = Math.cos(aRad), ay = Math.sin(aRad);
  const re = ax * (m[0] * px + m[2] * py) + ay * (m[4] * px + m[6] * py);
  const im = ax * (m[1] * px + m[3] * py) + ay * (m[5] * px + m[7] * py);
  return [re, im];
}

/** The optics: polariser, analyser and compensator (slow axis) angles in degrees CCW, lamp colour temperature. */
export interface OpticalTrain {
  polariserDeg: number;
  analyserDeg: number;
  compensator: { retardanceNm: number; axisDeg: number } | null;
  lampK: number;
}

const rad = (d: number) => (d * Math.PI) / 180;

/** The compensator's Jones matrix at one wavelength (identity without one). */
function compensatorJones(t: OpticalTrain, lambdaNm: number): Jones {
  return t.compensator ? retarder((2 * Math.PI * t.compensator.retardanceNm) / lambdaNm, rad(t.compensator.axisDeg)) : IDENTITY;
}

/**
 * Transmission of the train with a sample of retardance Gamma (nm) and slow axis theta (rad), at one
 * wavelength, by the full matrix product |e_a^T W_p W_s e_p|^2 (1 = all the light the polariser passes).
 */
export function jonesTransmission(t: OpticalTrain, sampleNm: number, sampleRad: number, lambdaNm: number): number {
  const m = jmul(compensatorJones(t, lambdaNm), retarder((2 * Math.PI * sampleNm) / lambdaNm, sampleRad));
  const [re, im] = project(m, rad(t.polariserDeg), rad(t.analyserDeg));
  return re * re + im * im;
}

/**
 * The transmission as a quadratic form in v = (1, cos 2 theta, sin 2 theta): since W_s = cos(delta/2) I -
 * i sin(delta/2) (cos 2theta K_z + sin 2theta K_x) with K_z = diag(1, -1), K_x = [[0, 1], [1, 0]], the
 * amplitude is A0 + A1 cos 2theta + A2 sin 2theta and |amplitude|^2 = sum_jk Re(A_j conj A_k) v_j v_k.
 * Returns the six coefficients of 1, c, s, c^2, s^2, c s (c = cos 2theta, s = sin 2theta).
 */
export function transmissionForm(t: OpticalTrain, sampleNm: number, lambdaNm: number): Float64Array {
  const wp = compensatorJones(t, lambdaNm);
  const p = rad(t.polariserDeg), a = rad(t.analyserDeg);
  const h = (Math.PI * sampleNm) / lambdaNm, cs = Math.cos(h), ss = Math.sin(h);
  const [b0r, b0i] = project(wp, p, a);
  const [b1r, b1i] = project(jmul(wp, Float64Array.of(1, 0, 0, 0, 0, 0, -1, 0)), p, a);
  const [b2r, b2i] = project(jmul(wp, Float64Array.of(0, 0, 1, 0, 1, 0, 0, 0)), p, a);
  // A0 = cs B0; A1 = -i ss B1 = ss (B1i, -B1r); A2 = ss (B2i, -B2r).
  const A = [[cs * b0r, cs * b0i], [ss * b1i, -ss * b1r], [ss * b2i, -ss * b2r]];
  const re = (j: number, k: number) => A[j][0] * A[k][0] + A[j][1] * A[k][1];
  return Float64Array.of(re(0, 0), 2 * re(0, 1), 2 * re(0, 2), re(1, 1), re(2, 2), 2 * re(1, 2));
}

/**
 * Turns (train, sample retardance, sample angle) into white-balanced linear camera RGB. Each channel is
 * linear in the spectral transmission, so the six coefficients of the quadratic form integrate to six per
 * channel (`coefficients`), exact in theta.
 */
export class ColourRenderer {
  /** Per-wavelength weight of each channel: gain_c * (M cmf)_c S dlambda / sum S ybar dlambda. */
  private readonly weights: Float64Array[];
  private readonly cache = new Map<number, Float64Array>();
  /** White-balance gains (1 / open-beam linear sRGB). */
  readonly gains: [number, number, number];

  constructor(readonly train: OpticalTrain) {
    const n = WAVELENGTHS_NM.length;
    const lamp = Array.from(WAVELENGTHS_NM, (l) => planckRelative(l, train.lampK));
    let ySum = 0;
    const cmf = Array.from(WAVELENGTHS_NM, (l) => cmfWyman(l));
    for (let i = 0; i < n; i++) ySum += lamp[i] * cmf[i][1] * D_LAMBDA_NM;
    const rgbPerLambda = cmf.map((c, i) => XYZ_TO_LINEAR_SRGB.map((row) => ((row[0] * c[0] + row[1] * c[1] + row[2] * c[2]) * lamp[i] * D_LAMBDA_NM) / ySum));
    const white = [0, 1, 2].map((c) => rgbPerLambda.reduce((s, v) => s + v[c], 0));
    this.gains = [1 / white[0], 1 / white[1], 1 / white[2]];
    this.weights = [0, 1, 2].map((c) => Float64Array.from(rgbPerLambda, (v) => v[c] * this.gains[c]));
  }

  /** 18 coefficients (channel-major: R's six, G's six, B's six) for a sample retardance in nm. */
  coefficients(sampleNm: number): Float64Array {
    const key = Math.round(sampleNm * 1000) / 1000;
    const hit = this.cache.get(key);
    if (hit) return hit;
    const out = new Float64Array(18);
    for (let i = 0; i < WAVELENGTHS_NM.length; i++) {
      const q = transmissionForm(this.train, key, WAVELENGTHS_NM[i]);
      for (let c = 0; c < 3; c++) for (let j = 0; j < 6; j++) out[c * 6 + j] += this.weights[c][i] * q[j];
    }
    this.cache.set(key, out);
    return out;
  }

  /** White-balanced linear RGB of a sample (retardance nm, slow axis rad); the open beam is (1, 1, 1). */
  linearRgb(sampleNm: number, thetaRad: number): [number, number, number] {
    return evalForm(this.coefficients(sampleNm), Math.cos(2 * thetaRad), Math.sin(2 * thetaRad));
  }

  /** The same by summing the Jones-matrix transmission over the spectrum (slow; for checks). */
  linearRgbBySpectrum(sampleNm: number, thetaRad: number): [number, number, number] {
    const out: [number, number, number] = [0, 0, 0];
    for (let i = 0; i < WAVELENGTHS_NM.length; i++) {
      const T = jonesTransmission(this.train, sampleNm, thetaRad, WAVELENGTHS_NM[i]);
      for (let c = 0; c < 3; c++) out[c] += this.weights[c][i] * T;
    }
    return out;
  }
}

/** Evaluates 18 coefficients at c = cos 2 theta, s = sin 2 theta. */
export function evalForm(k: Float64Array, c: number, s: number): [number, number, number] {
  const v = [1, c, s, c * c, s * s, c * s];
  const out: [number, number, number] = [0, 0, 0];
  for (let ch = 0; ch < 3; ch++) {
    let sum = 0;
    for (let j = 0; j < 6; j++) sum += k[ch * 6 + j] * v[j];
    out[ch] = sum;
  }
  return out;
}

/** The default train: polariser 0 deg, analyser 90 deg, 550 nm compensator at +45 deg, 3200 K lamp. */
export function crossedWithCompensator(compensatorNm = 550, lampK = 3200): OpticalTrain {
  return { polariserDeg: 0, analyserDeg: 90, compensator: { retardanceNm: compensatorNm, axisDeg: 45 }, lampK };
}

/** The same train with the polariser, compensator and analyser assembly turned by `turnDeg` (the second image of a pair). */
export function turnedTrain(t: OpticalTrain, turnDeg: number): OpticalTrain {
  return {
    ...t, polariserDeg: t.polariserDeg + turnDeg, analyserDeg: t.analyserDeg + turnDeg,
    compensator: t.compensator && { ...t.compensator, axisDeg: t.compensator.axisDeg + turnDeg },
  };
}
