/**
 * Independent renderer of fibre images for validation: blurred bars whose width is known by
 * construction. It shares no code with the measuring side (not even the error function) nor with
 * tests/fibre/render.ts: its own normal CDF, its own random numbers, its own pixel integration.
 *
 * Image formation, in this order:
 * 1. Object: each fibre is the region between two straight edge lines (parallel, or converging for a
 *    taper); it changes the transmitted level by `contrast` (negative: darker than the background).
 * 2. Blur: a Gaussian PSF of standard deviation `psfSigmaPx`. A half-plane blurred by a Gaussian is
 *    Phi(d / sigma), d the signed distance to its edge line, so a strip (intersection of two half-planes
 *    with opposite normals) blurs to Phi(d1 / sigma) + Phi(d2 / sigma) - 1 exactly. For a taper this is
 *    exact on the near side of the edge lines' crossing point (kept far outside the image).
 * 3. Background: level `base` plus a linear slope (`slopePerPx` = (dI/dx, dI/dy) per px), times a smooth
 *    lamp field (`lamp`, multiplicative, 1 = even).
 * 4. Pixels: the value of each pixel is the mean over its 1 x 1 px square (pixel centres at integer
 *    coordinates), by 5 x 5 Gauss-Legendre quadrature (the blurred image is smooth, so this is exact to
 *    far below the noise).
 * 5. Camera: photon noise (Gaussian, SD `shotNoise` x sqrt(level), level and SD as fractions of the full
 *    scale) and read noise (SD `readNoise`), then rounded and clipped to 8 or 16 bits and divided by the
 *    largest code (255 or 65535), as an image decoder gives it.
 *
 * Truth: `trueWidthPx(fibre, x, y)` is the geometric width across the fibre's axis at the axis point
 * nearest to (x, y), by construction.
 */
import type { Plane } from '../../../src/common/plane.ts';

export interface ValidationFibre {
  /** A point on the axis, px. */
  cxPx: number;
  cyPx: number;
  /** Axis direction, degrees counter-clockwise on screen from +x. */
  angleDeg: number;
  /** Width at (cxPx, cyPx) across the axis, px. */
  widthPx: number;
  /** Width change per px along +axis (taper), px/px; 0 for a parallel fibre. */
  taperPerPx?: number;
  /** Level change inside the fibre, in units of the background level (e.g. -0.35: 35 % darker). */
  contrast: number;
}

export interface ValidationScene {
  width: number;
  height: number;
  fibres: ValidationFibre[];
  /** Gaussian PSF standard deviation, px. */
  psfSigmaPx: number;
  /** Background level as a fraction of the full scale. Default 0.6. */
  base?: number;
  /** Additive background slope, fraction of full scale per px, (d/dx, d/dy). Default none. */
  slopePerPx?: [number, number];
  /** Multiplicative lamp field: relative brightness at (x, y). Default even. */
  lamp?: (x: number, y: number) => number;
  /** Read noise SD, fraction of full scale. Default 0. */
  readNoise?: number;
  /** Photon noise: SD at full scale as a fraction of full scale (SD scales with sqrt(level)). Default 0. */
  shotNoise?: number;
  bits: 8 | 16;
  seed: number;
}

// ---- Normal CDF, own implementation: Phi(z) = 1/2 + integral_0^z phi(t) dt by Gauss-Legendre on a
// table of 1/512 spacing, then cubic Hermite interpolation with the exact derivative phi. ----

/** 8-point Gauss-Legendre nodes and weights on [-1, 1] (Abramowitz & Stegun, Table 25.4). */
const GL8_X = [-0.9602898564975363, -0.7966664774136267, -0.5255324099163290, -0.1834346424956498,
  0.1834346424956498, 0.5255324099163290, 0.7966664774136267, 0.9602898564975363];
const GL8_W = [0.1012285362903763, 0.2223810344533745, 0.3137066458778873, 0.3626837833783620,
  0.3626837833783620, 0.3137066458778873, 0.2223810344533745, 0.1012285362903763];

const phi = (t: number) => Math.exp(-0.5 * t * t) / Math.sqrt(2 * Math.PI);
const TABLE_STEP = 1 / 512;
const TABLE_MAX = 9;
const PHI_TABLE = (() => {
  const n = Math.round(TABLE_MAX / TABLE_STEP);
  const t = new Float64Array(n + 1);
  t[0] = 0.5;
  for (let k = 0; k < n; k++) {
    const a = k * TABLE_STEP;
    let s = 0;
    for (let g = 0; g < 8; g++) s += GL8_W[g] * phi(a + 0.5 * TABLE_STEP * (GL8_X[g] + 1));
    t[k + 1] = t[k] + 0.5 * TABLE_STEP * s;
  }
  return t;
})();

/** Standard normal CDF to about 1e-15 (table of exact integrals, cubic Hermite between nodes). */
export function normalCdfIndependent(z: number): number {
  const a = Math.abs(z);
  if (a >= TABLE_MAX) return z > 0 ? 1 : 0;
  const u = a / TABLE_STEP;
  const k = Math.floor(u);
  const s = u - k;
  const x0 = k * TABLE_STEP;
  const y0 = PHI_TABLE[k];
  const y1 = PHI_TABLE[k + 1];
  const d0 = phi(x0) * TABLE_STEP;
  const d1 = phi(x0 + TABLE_STEP) * TABLE_STEP;
  const s2 = s * s;
  const s3 = s2 * s;
  const v = (2 * s3 - 3 * s2 + 1) * y0 + (s3 - 2 * s2 + s) * d0 + (-2 * s3 + 3 * s2) * y1 + (s3 - s2) * d1;
  return z >= 0 ? v : 1 - v;
}

// ---- Random numbers, own implementation: splitmix32 and the Marsaglia polar method. ----

export function splitmix32(seed: number): () => number {
  let state = (seed * 0x9e3779b9) >>> 0;
  return () => {
    state = (state + 0x9e3779b9) >>> 0;
    let z = state;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
    z = (z ^ (z >>> 16)) >>> 0;
    return (z + 0.5) / 4294967296;
  };
}

export function normalStream(seed: number): () => number {
  const u = splitmix32(seed);
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const v = spare;
      spare = null;
      return v;
    }
    for (;;) {
      const a = 2 * u() - 1;
      const b = 2 * u() - 1;
      const s = a * a + b * b;
      if (s > 0 && s < 1) {
        const f = Math.sqrt((-2 * Math.log(s)) / s);
        spare = b * f;
        return a * f;
      }
    }
  };
}

// ---- Geometry ----

interface EdgeLines {
  /** Unit axis (screen: y down) and normal. */
  ax: number;
  ay: number;
  nx: number;
  ny: number;
  /** Unit normals of the two edge lines (pointing into the fibre) and their offsets: d_i = n_i . p + c_i. */
  n1x: number;
  n1y: number;
  c1: number;
  n2x: number;
  n2y: number;
  c2: number;
}

function edgeLines(f: ValidationFibre): EdgeLines {
  const a = (f.angleDeg * Math.PI) / 180;
  const ax = Math.cos(a);
  const ay = -Math.sin(a);
  const nx = -ay;
  const ny = ax;
  const k = f.taperPerPx ?? 0;
  // Edge line i: points with normal offset +-(w/2 + k t/2) at axis coordinate t. Its direction is
  // a +- (k/2) n; its unit inward normal follows by rotating that direction.
  const make = (side: 1 | -1) => {
    const dx = ax + side * (k / 2) * nx;
    const dy = ay + side * (k / 2) * ny;
    const len = Math.hypot(dx, dy);
    // Inward normal: towards the axis, i.e. -side * n rotated with the line.
    let mx = -dy / len;
    let my = dx / len;
    if (mx * nx + my * ny > 0 === (side > 0)) {
      mx = -mx;
      my = -my;
    }
    // The line passes through (cx, cy) + side * (w/2) n.
    const px = f.cxPx + side * (f.widthPx / 2) * nx;
    const py = f.cyPx + side * (f.widthPx / 2) * ny;
    return { mx, my, c: -(mx * px + my * py) };
  };
  const e1 = make(1);
  const e2 = make(-1);
  return { ax, ay, nx, ny, n1x: e1.mx, n1y: e1.my, c1: e1.c, n2x: e2.mx, n2y: e2.my, c2: e2.c };
}

/** Geometric width across the axis at the axis point nearest to (x, y), px (truth by construction). */
export function trueWidthPx(f: ValidationFibre, x: number, y: number): number {
  const a = (f.angleDeg * Math.PI) / 180;
  const t = (x - f.cxPx) * Math.cos(a) - (y - f.cyPx) * Math.sin(a);
  return f.widthPx + (f.taperPerPx ?? 0) * t;
}

// 5-point Gauss-Legendre on [-1/2, 1/2] (A&S Table 25.4), for the pixel-square mean.
const GL5_X = [-0.9061798459386640, -0.5384693101056831, 0, 0.5384693101056831, 0.9061798459386640].map((v) => v / 2);
const GL5_W = [0.2369268850561891, 0.4786286704993665, 0.5688888888888889, 0.4786286704993665, 0.2369268850561891].map((v) => v / 2);

/** The noise-free, unquantised image in fractions of full scale (mean over each pixel's square). */
export function idealImage(scene: ValidationScene): Float64Array {
  const { width, height, psfSigmaPx: s } = scene;
  const base = scene.base ?? 0.6;
  const [gx, gy] = scene.slopePerPx ?? [0, 0];
  const lines = scene.fibres.map(edgeLines);
  const out = new Float64Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let acc = 0;
      for (let j = 0; j < 5; j++) {
        const py = y + GL5_X[j];
        for (let i = 0; i < 5; i++) {
          const px = x + GL5_X[i];
          let v = 1;
          for (let k = 0; k < lines.length; k++) {
            const e = lines[k];
            const d1 = e.n1x * px + e.n1y * py + e.c1;
            const d2 = e.n2x * px + e.n2y * py + e.c2;
            v += scene.fibres[k].contrast * (normalCdfIndependent(d1 / s) + normalCdfIndependent(d2 / s) - 1);
          }
          acc += GL5_W[i] * GL5_W[j] * v;
        }
      }
      const background = base + gx * (x - width / 2) + gy * (y - height / 2);
      out[y * width + x] = (scene.lamp ? scene.lamp(x, y) : 1) * background * acc;
    }
  }
  return out;
}

/** The camera's integer codes (8 or 16 bit), row-major: what an image file of this scene holds. */
export function renderCodes(scene: ValidationScene): Uint8Array | Uint16Array {
  const ideal = idealImage(scene);
  const maxCode = scene.bits === 8 ? 255 : 65535;
  const gauss = normalStream(scene.seed);
  const read = scene.readNoise ?? 0;
  const shot = scene.shotNoise ?? 0;
  const codes = scene.bits === 8 ? new Uint8Array(ideal.length) : new Uint16Array(ideal.length);
  for (let i = 0; i < ideal.length; i++) {
    const level = ideal[i];
    const sd = Math.sqrt(read * read + shot * shot * Math.max(level, 0));
    codes[i] = Math.min(maxCode, Math.max(0, Math.round((level + sd * gauss()) * maxCode)));
  }
  return codes;
}

/** The image as a decoder gives it: codes / largest code (255 or 65535). */
export function renderScene(scene: ValidationScene): Plane {
  const codes = renderCodes(scene);
  const maxCode = scene.bits === 8 ? 255 : 65535;
  return { width: scene.width, height: scene.height, data: Float32Array.from(codes, (c) => c / maxCode) };
}
