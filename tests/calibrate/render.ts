/**
 * Test images of a stage micrometer: straight lines of period `periodPx` across the ruler, each a
 * Gaussian line profile (FWHM `lineFwhmPx`) of finite length with soft ends, area-sampled over each
 * pixel (4 x 4 sub-samples). The period is a fact of the rendering.
 */
import type { Plane } from '../../src/common/plane.ts';
import { gaussianNoise } from '../fibre/render.ts';

export interface RulerRender {
  width: number;
  height: number;
  periodPx: number;
  /** Direction of the lines (ticks), degrees CCW on screen from +x. */
  linesDeg: number;
  lineFwhmPx?: number;
  /** Line depth: negative = dark lines on a bright field. */
  contrast: number;
  /** Tick length, px (default: longer than the image). */
  lineLengthPx?: number;
  /** Every `longEvery`-th tick is twice as long (as on real micrometers). */
  longEvery?: number;
  base?: number;
  noiseSd?: number;
  seed?: number;
  /** Offset of line 0 from the image centre along the profile direction, px. */
  phasePx?: number;
}

export function renderRuler(o: RulerRender): Plane {
  const { width, height } = o;
  const data = new Float32Array(width * height);
  const a = (o.linesDeg * Math.PI) / 180;
  const lx = Math.cos(a);
  const ly = -Math.sin(a);
  // Across the lines.
  const ax = -ly;
  const ay = lx;
  const sigma = (o.lineFwhmPx ?? 3) / 2.354820045;
  const len = o.lineLengthPx ?? 10 * (width + height);
  const cx = (width - 1) / 2;
  const cy = (height - 1) / 2;
  const noise = gaussianNoise(o.seed ?? 3);
  const sub = 4;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let acc = 0;
      for (let sy = 0; sy < sub; sy++) {
        for (let sx = 0; sx < sub; sx++) {
          const px = x + (sx + 0.5) / sub - 0.5 - cx;
          const py = y + (sy + 0.5) / sub - 0.5 - cy;
          const s = px * ax + py * ay - (o.phasePx ?? 0.3);
          const t = px * lx + py * ly;
          const m = Math.round(s / o.periodPx);
          const d = s - m * o.periodPx;
          const tickLen = o.longEvery && m % o.longEvery === 0 ? 2 * len : len;
          const endFade = 1 / (1 + Math.exp((Math.abs(t) - tickLen / 2) / 1.0));
          acc += Math.exp(-0.5 * (d / sigma) ** 2) * endFade;
        }
      }
      data[y * width + x] = (o.base ?? 0.6) + o.contrast * (acc / (sub * sub)) + (o.noiseSd ? o.noiseSd * noise() : 0);
    }
  }
  return { width, height, data };
}
