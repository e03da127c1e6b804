/**
 * Independent renderer of stage-micrometer images for validation. It shares no code with `src/`: the
 * geometry is drawn in the ruler's own frame in micrometres and mapped to pixels, so the truth is the
 * construction itself: the pixel size `umPerPx` and the division spacing `divisionUm` that were drawn
 * (the rendered period is divisionUm / umPerPx px).
 *
 * Ruler frame: u runs along the ruler (across the ticks), v along the ticks, in um. Tick m is a
 * rectangle |u - (m D + jitter_m)| <= lineWidth/2, v in [v0, v0 + L_m], with L_m long every 10th tick,
 * medium every 5th, short otherwise; an optional baseline joins the tick feet (v in [-baseWidth, 0]);
 * optional numbers (seven-segment digits built from rectangles) stand beside or above every 10th
 * tick. No two rectangles overlap, so the drawing's coverage is a sum of rectangles.
 *
 * Imaging: the coverage is blurred by an isotropic Gaussian PSF of `psfSigmaUm`, which for a rectangle
 * is the product of two differences of normal CDFs in (u, v) (separable because the Gaussian is
 * isotropic); each pixel is the mean of sub x sub point samples (area sampling). Intensity: dark lines
 * on a bright field, I = lamp (1 - contrast coverage); bright on dark, I = lamp (dark + contrast coverage).
 * Lamp: 1 + gradient (x - cx)/width - vignette (r / rMax)^2. Noise: Gaussian with variance
 * readSd^2 + shotGain I, then quantised to 8 or 16 bits.
 */

export interface RulerScene {
  width: number;
  height: number;
  /** Pixel size that the image is drawn at, um/px (the truth). */
  umPerPx: number;
  /** Spacing of the drawn divisions, um (what the graticule really has). */
  divisionUm: number;
  /** Tick direction on screen, degrees counter-clockwise from +x (the ruler runs at angleDeg - 90). */
  angleDeg: number;
  /** Where the foot of tick 0 is drawn, px (default: image centre). */
  originPx?: { x: number; y: number };
  /** Ticks drawn: indices first..last (default: enough to cross the whole image). */
  firstTick?: number;
  lastTick?: number;
  /** Width of a tick line, um. */
  lineWidthUm: number;
  /** Tick lengths, um: every 10th long, every 5th medium, the others short. */
  shortUm: number;
  mediumUm?: number;
  longUm?: number;
  /** Baseline joining the tick feet, its width in um (0 or absent: none; ticks then start at v = 0). */
  baselineUm?: number;
  /** Numbers beside every 10th tick: 'beside' (right of the tick, above the short ticks) or 'above' its top. */
  numbers?: 'beside' | 'above' | null;
  /** Digit height, um (default 0.6 x the long tick). */
  digitUm?: number;
  /** Gaussian PSF sigma, um. */
  psfSigmaUm: number;
  polarity: 'dark' | 'bright';
  /** Line contrast (fraction of the lamp). */
  contrast: number;
  /** Field level for bright lines on dark (default 0.08). */
  darkLevel?: number;
  /** Overall brightness scale (default 0.8). */
  exposure?: number;
  lampGradient?: number;
  lampVignette?: number;
  readSd?: number;
  shotGain?: number;
  bits: 8 | 16;
  /** SD of each tick's placement error on the graticule, um (0: perfect graticule). */
  lineJitterUm?: number;
  seed: number;
  /** Point samples per pixel side (default 4). */
  sub?: number;
}

export interface RenderedRuler {
  width: number;
  height: number;
  data: Float32Array;
  /** The rendered period along the ruler, px: divisionUm / umPerPx. */
  periodPx: number;
  umPerPx: number;
}

/** mulberry32 uniform generator and Box-Muller normal deviates (seeded, so every run draws the same pixels). */
export function seededUniform(seed: number): () => number {
  let a = (seed * 2654435761) >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function seededNormal(seed: number): () => number {
  const u = seededUniform(seed);
  return () => Math.sqrt(-2 * Math.log(Math.max(u(), 1e-300))) * Math.cos(2 * Math.PI * u());
}

/** Standard normal CDF from erf by Abramowitz & Stegun 7.1.26 (|error| <= 1.5e-7). */
function phi(z: number): number {
  const x = Math.abs(z) / Math.SQRT2;
  const t = 1 / (1 + 0.3275911 * x);
  const y = 1 - ((((1.061405429 * t - 1.453152027) * t + 1.421413741) * t - 0.284496736) * t + 0.254829592) * t * Math.exp(-x * x);
  return z >= 0 ? 0.5 * (1 + y) : 0.5 * (1 - y);
}

interface Rect { u0: number; u1: number; v0: number; v1: number }

/** Seven-segment digit (segments a..g) as non-overlapping rectangles in a box [0, w] x [0, h], v up. */
function digitRects(d: number, u: number, v: number, w: number, h: number, s: number): Rect[] {
  const segs = ['abcdef', 'bc', 'abged', 'abgcd', 'fgbc', 'afgcd', 'afgedc', 'abc', 'abcdefg', 'abcdfg'][d];
  const r: Rect[] = [];
  const add = (u0: number, u1: number, v0: number, v1: number) => r.push({ u0: u + u0, u1: u + u1, v0: v + v0, v1: v + v1 });
  for (const c of segs) {
    if (c === 'a') add(s, w - s, h - s, h);
    if (c === 'g') add(s, w - s, h / 2 - s / 2, h / 2 + s / 2);
    if (c === 'd') add(s, w - s, 0, s);
    if (c === 'f') add(0, s, h / 2, h);
    if (c === 'e') add(0, s, 0, h / 2);
    if (c === 'b') add(w - s, w, h / 2, h);
    if (c === 'c') add(w - s, w, 0, h / 2);
  }
  return r;
}

function tickLength(m: number, o: RulerScene): number {
  if (m % 10 === 0) return o.longUm ?? o.shortUm;
  if (m % 5 === 0) return o.mediumUm ?? o.shortUm;
  return o.shortUm;
}

/** Renders the scene; values in [0, 1] after quantisation. */
export function renderRulerScene(o: RulerScene): RenderedRuler {
  const { width, height, umPerPx } = o;
  const D = o.divisionUm;
  const a = (o.angleDeg * Math.PI) / 180;
  // Screen (x right, y down): the tick direction is (cos a, -sin a); u is perpendicular to it.
  const evx = Math.cos(a), evy = -Math.sin(a);
  const eux = Math.sin(a), euy = Math.cos(a);
  const ox = o.originPx?.x ?? (width - 1) / 2;
  const oy = o.originPx?.y ?? (height - 1) / 2;
  const diagUm = Math.hypot(width, height) * umPerPx;
  const first = o.firstTick ?? -Math.ceil(diagUm / D) - 1;
  const last = o.lastTick ?? Math.ceil(diagUm / D) + 1;
  const jitter = seededNormal(o.seed * 7 + 1);
  const centres = new Float64Array(last - first + 1);
  for (let m = first; m <= last; m++) centres[m - first] = m * D + (o.lineJitterUm ? o.lineJitterUm * jitter() : 0);
  const centre = (m: number) => centres[m - first];
  const hw = o.lineWidthUm / 2;
  const base = o.baselineUm ?? 0;
  const sig = o.psfSigmaUm;
  const reach = hw + 6 * sig + 4 * (o.lineJitterUm ?? 0);
  // Extra rectangles in groups with a bounding box: the baseline, and each number.
  const groups: { box: Rect; rects: Rect[] }[] = [];
  const group = (rects: Rect[]) => groups.push({ rects, box: {
    u0: Math.min(...rects.map((r) => r.u0)), u1: Math.max(...rects.map((r) => r.u1)),
    v0: Math.min(...rects.map((r) => r.v0)), v1: Math.max(...rects.map((r) => r.v1)) } });
  if (base > 0) group([{ u0: centre(first) - hw, u1: centre(last) + hw, v0: -base, v1: 0 }]);
  if (o.numbers) {
    const long = o.longUm ?? o.shortUm;
    const h = o.digitUm ?? 0.6 * long;
    const w = 0.6 * h;
    const s = Math.max(o.lineWidthUm, 0.1 * h);
    for (let m = Math.ceil(first / 10) * 10; m <= last; m += 10) {
      const text = String(Math.abs(m / 10) % 100);
      const wordW = text.length * w + (text.length - 1) * 0.4 * w;
      const c = centre(m);
      const u = o.numbers === 'beside' ? c + hw + 0.35 * D : c - wordW / 2;
      const v = o.numbers === 'beside' ? (o.shortUm + long) / 2 - h / 2 : long + 0.3 * h;
      group([...text].flatMap((ch, k) => digitRects(Number(ch), u + k * 1.4 * w, v, w, h, s)));
    }
  }
  const margin = 6 * sig;
  /** Blurred indicator of [lo, hi] at x: 1 well inside, 0 well outside, else the difference of normal CDFs. */
  const blurred = (x: number, lo: number, hi: number) => {
    if (x < lo - margin || x > hi + margin) return 0;
    if (x > lo + margin && x < hi - margin) return 1;
    return phi((x - lo) / sig) - phi((x - hi) / sig);
  };
  const coverage = (u: number, v: number) => {
    let acc = 0;
    const mLo = Math.max(first, Math.floor((u - reach) / D)), mHi = Math.min(last, Math.ceil((u + reach) / D));
    for (let m = mLo; m <= mHi; m++) {
      const c = centres[m - first];
      if (Math.abs(u - c) > reach || v < -margin) continue;
      const L = tickLength(m, o);
      if (v > L + margin) continue;
      acc += blurred(u, c - hw, c + hw) * blurred(v, 0, L);
    }
    for (const g of groups) {
      const b = g.box;
      if (u < b.u0 - margin || u > b.u1 + margin || v < b.v0 - margin || v > b.v1 + margin) continue;
      for (const r of g.rects) {
        const fu = blurred(u, r.u0, r.u1);
        if (fu !== 0) acc += fu * blurred(v, r.v0, r.v1);
      }
    }
    return acc;
  };
  const sub = o.sub ?? 4;
  const noise = seededNormal(o.seed * 7 + 2);
  const exposure = o.exposure ?? 0.8;
  const dark = o.darkLevel ?? 0.08;
  const levels = o.bits === 8 ? 255 : 65535;
  const rMax = Math.hypot(width / 2, height / 2);
  const data = new Float32Array(width * height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let cov = 0;
      for (let sy = 0; sy < sub; sy++) {
        for (let sx = 0; sx < sub; sx++) {
          const dx = x + (sx + 0.5) / sub - 0.5 - ox;
          const dy = y + (sy + 0.5) / sub - 0.5 - oy;
          cov += coverage(umPerPx * (dx * eux + dy * euy), umPerPx * (dx * evx + dy * evy));
        }
      }
      cov /= sub * sub;
      const lamp = exposure * (1 + (o.lampGradient ?? 0) * (x - width / 2) / width
        - (o.lampVignette ?? 0) * (Math.hypot(x - width / 2, y - height / 2) / rMax) ** 2);
      const clean = o.polarity === 'dark' ? lamp * (1 - o.contrast * cov) : lamp * (dark + o.contrast * cov);
      const sd = Math.sqrt((o.readSd ?? 0) ** 2 + (o.shotGain ?? 0) * Math.max(0, clean));
      const v = clean + sd * noise();
      data[y * width + x] = Math.round(Math.min(1, Math.max(0, v)) * levels) / levels;
    }
  }
  return { width, height, data, periodPx: D / umPerPx, umPerPx };
}
