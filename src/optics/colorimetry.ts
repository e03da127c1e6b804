/**
 * Colorimetry: XYZ <-> linear sRGB (IEC 61966-2-1, 4-digit matrices, D65, Y_white = 1), the sRGB transfer
 * curve, CIELAB (CIE 15 / ISO 11664-4) and Bradford chromatic adaptation.
 */
export type Vec3 = [number, number, number];
export type Mat3 = readonly [number, number, number, number, number, number, number, number, number];

/** XYZ -> linear sRGB, IEC 61966-2-1 (4-digit form). */
export const XYZ_TO_SRGB: Mat3 = [3.2406, -1.5372, -0.4986, -0.9689, 1.8758, 0.0415, 0.0557, -0.2040, 1.0570];
/** Linear sRGB -> XYZ, IEC 61966-2-1 (4-digit form). */
export const SRGB_TO_XYZ: Mat3 = [0.4124, 0.3576, 0.1805, 0.2126, 0.7152, 0.0722, 0.0193, 0.1192, 0.9505];
/** D65 white of the sRGB standard, Y = 1. */
export const D65_WHITE: Vec3 = [0.95047, 1, 1.08883];
/** Bradford cone-response matrix (Lam 1985, as used in CIECAM97s). */
export const BRADFORD: Mat3 = [0.8951, 0.2664, -0.1614, -0.7502, 1.7135, 0.0367, 0.0389, -0.0685, 1.0296];

export function mulMat3(m: Mat3, v: Vec3): Vec3 {
  return [m[0] * v[0] + m[1] * v[1] + m[2] * v[2], m[3] * v[0] + m[4] * v[1] + m[5] * v[2], m[6] * v[0] + m[7] * v[1] + m[8] * v[2]];
}

export function matMul3(a: Mat3, b: Mat3): Mat3 {
  const r: number[] = [];
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) r.push(a[3 * i] * b[j] + a[3 * i + 1] * b[3 + j] + a[3 * i + 2] * b[6 + j]);
  return r as unknown as Mat3;
}

export function invertMat3(m: Mat3): Mat3 {
  const [a, b, c, d, e, f, g, h, i] = m;
  const A = e * i - f * h, B = -(d * i - f * g), C = d * h - e * g;
  const det = a * A + b * B + c * C;
  return [A / det, -(b * i - c * h) / det, (b * f - c * e) / det, B / det, (a * i - c * g) / det, -(a * f - c * d) / det,
    C / det, -(a * h - b * g) / det, (a * e - b * d) / det];
}

export const xyzToLinearSrgb = (xyz: Vec3): Vec3 => mulMat3(XYZ_TO_SRGB, xyz);
export const linearSrgbToXyz = (rgb: Vec3): Vec3 => mulMat3(SRGB_TO_XYZ, rgb);

/** sRGB encoding: V = 12.92 L for L <= 0.0031308, else 1.055 L^(1/2.4) - 0.055 (IEC 61966-2-1). */
export function srgbEncode(linear: number): number {
  return linear <= 0.0031308 ? 12.92 * linear : 1.055 * Math.pow(linear, 1 / 2.4) - 0.055;
}

/** sRGB decoding: L = V / 12.92 for V <= 0.04045, else ((V + 0.055) / 1.055)^2.4 (IEC 61966-2-1). */
export function srgbDecode(encoded: number): number {
  return encoded <= 0.04045 ? encoded / 12.92 : Math.pow((encoded + 0.055) / 1.055, 2.4);
}

/** Linear sRGB clipped to [0, 1], encoded, rounded to 8 bits. The chart's out-of-gamut policy is this clip. */
export function linearSrgbTo8bit(rgb: Vec3): Vec3 {
  return rgb.map((v) => Math.round(255 * srgbEncode(Math.min(1, Math.max(0, v))))) as Vec3;
}

const LAB_E = (6 / 29) ** 3;
const labF = (t: number) => (t > LAB_E ? Math.cbrt(t) : t / (3 * (6 / 29) ** 2) + 4 / 29);
const labFInv = (f: number) => (f > 6 / 29 ? f * f * f : 3 * (6 / 29) ** 2 * (f - 4 / 29));

/**
 * CIELAB: f(t) = t^(1/3) for t > (6/29)^3 else t / (3 (6/29)^2) + 4/29;
 * L* = 116 f(Y/Yn) - 16, a* = 500 (f(X/Xn) - f(Y/Yn)), b* = 200 (f(Y/Yn) - f(Z/Zn)).
 */
export function xyzToLab(xyz: Vec3, white: Vec3 = D65_WHITE): Vec3 {
  const out: Vec3 = [0, 0, 0];
  xyzToLabInto(xyz[0], xyz[1], xyz[2], white, out, 0);
  return out;
}

/** xyzToLab of (x, y, z) written to out[o], out[o + 1], out[o + 2] (no new array, for loops over many colours). */
export function xyzToLabInto(x: number, y: number, z: number, white: Vec3, out: Vec3 | Float64Array | Float32Array, o: number): void {
  const fx = labF(x / white[0]), fy = labF(y / white[1]), fz = labF(z / white[2]);
  out[o] = 116 * fy - 16; out[o + 1] = 500 * (fx - fy); out[o + 2] = 200 * (fy - fz);
}

export function labToXyz(lab: Vec3, white: Vec3 = D65_WHITE): Vec3 {
  const fy = (lab[0] + 16) / 116;
  const fx = fy + lab[1] / 500, fz = fy - lab[2] / 200;
  return [white[0] * labFInv(fx), white[1] * labFInv(fy), white[2] * labFInv(fz)];
}

/** 8-bit (or any [0,1]) sRGB to CIELAB under D65. */
export function srgbToLab(rgb: Vec3): Vec3 {
  return xyzToLab(linearSrgbToXyz([srgbDecode(rgb[0]), srgbDecode(rgb[1]), srgbDecode(rgb[2])]));
}

/** Chromaticity (x, y) of an XYZ triple. */
export function chromaticity(xyz: Vec3): [number, number] {
  const s = xyz[0] + xyz[1] + xyz[2];
  return [xyz[0] / s, xyz[1] / s];
}

/**
 * Bradford chromatic adaptation matrix from one white to another (von Kries scaling in the Bradford cone
 * space, linear form): M = B^-1 diag(B w_dst / B w_src) B.
 */
export function bradfordMatrix(fromWhite: Vec3, toWhite: Vec3): Mat3 {
  const s = mulMat3(BRADFORD, fromWhite), d = mulMat3(BRADFORD, toWhite);
  const diag: Mat3 = [d[0] / s[0], 0, 0, 0, d[1] / s[1], 0, 0, 0, d[2] / s[2]];
  return matMul3(invertMat3(BRADFORD), matMul3(diag, BRADFORD));
}
