/**
 * Test images of fibres with a known width. Each fibre is the region between two straight edge lines
 * (parallel, or converging for a taper); the image is that region blurred by a Gaussian PSF of
 * `sigmaPx` (so each edge is the analytic edge-spread profile Phi(distance / sigma)) and area-sampled
 * over each pixel (4 x 4 sub-samples). The geometric width is therefore a fact of the rendering.
 */
// The fast table form of Phi (within 1e-14 of the series, tests/fibre/erf.test.ts): the renderer calls it millions of times.
import { normalCdfFast as normalCdf } from '../../src/common/distributions.ts';
import type { Plane } from '../../src/common/plane.ts';

export interface RenderedFibre {
  /** A point on the axis, px. */
  cx: number;
  cy: number;
  /** Axis angle, degrees CCW on screen from +x. */
  angleDeg: number;
  /** Width at the axis point (cx, cy), px. */
  widthPx: number;
  /** Width change per px along the axis direction (taper), px/px. */
  taper?: number;
  /** Added to the base level inside the fibre (negative = dark fibre). */
  contrast: number;
  sigmaPx?: number;
}

/** A round blob (dust, a defect), blurred like the fibres. */
export interface RenderedBlob {
  cx: number;
  cy: number;
  radiusPx: number;
  contrast: number;
  sigmaPx?: number;
}

export interface RenderOptions {
  width: number;
  height: number;
  fibres: RenderedFibre[];
  blobs?: RenderedBlob[];
  base?: number;
  /** Multiplicative illumination, 1 = even. */
  illumination?: (x: number, y: number) => number;
  noiseSd?: number;
  seed?: number;
}

/** Deterministic Gaussian noise (mulberry32 + Box-Muller). */
export function gaussianNoise(seed: number): () => number {
  let a = seed >>> 0;
  const uniform = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return () => {
    const u = Math.max(uniform(), 1e-12);
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * uniform());
  };
}

/** Coverage (0..1) of one blurred fibre at (x, y). */
export function fibreCoverage(f: RenderedFibre, x: number, y: number): number {
  const a = (f.angleDeg * Math.PI) / 180;
  const ux = Math.cos(a);
  const uy = -Math.sin(a); // y points down on screen
  const dx = x - f.cx;
  const dy = y - f.cy;
  const t = dx * ux + dy * uy;
  const d = -dx * uy + dy * ux;
  const k = f.taper ?? 0;
  const norm = Math.sqrt(1 + (k * k) / 4);
  const halfW = f.widthPx / 2 + (k / 2) * t;
  const s = f.sigmaPx ?? 1.2;
  return normalCdf((halfW - d) / norm / s) + normalCdf((halfW + d) / norm / s) - 1;
}

/** Geometric width of a rendered fibre at the point of its axis nearest to (x, y). */
export function trueWidthAt(f: RenderedFibre, x: number, y: number): number {
  const a = (f.angleDeg * Math.PI) / 180;
  const t = (x - f.cx) * Math.cos(a) + (y - f.cy) * -Math.sin(a);
  return f.widthPx + (f.taper ?? 0) * t;
}

export function renderFibres(o: RenderOptions): Plane {
  const { width, height } = o;
  const base = o.base ?? 0.7;
  const data = new Float32Array(width * height);
  const noise = gaussianNoise(o.seed ?? 1);
  const sub = 4;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let acc = 0;
      for (let sy = 0; sy < sub; sy++) {
        for (let sx = 0; sx < sub; sx++) {
          const px = x + (sx + 0.5) / sub - 0.5;
          const py = y + (sy + 0.5) / sub - 0.5;
          let v = base;
          for (const f of o.fibres) v += f.contrast * fibreCoverage(f, px, py);
          for (const b of o.blobs ?? []) {
            v += b.contrast * normalCdf((b.radiusPx - Math.hypot(px - b.cx, py - b.cy)) / (b.sigmaPx ?? 1.2));
          }
          acc += v;
        }
      }
      const illum = o.illumination ? o.illumination(x, y) : 1;
      data[y * width + x] = illum * (acc / (sub * sub)) + (o.noiseSd ? o.noiseSd * noise() : 0);
    }
  }
  return { width, height, data };
}
