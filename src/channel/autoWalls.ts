import { clampedBilinear } from '../common/sampling.ts';
import { InputError } from '../common/errors.ts';
import type { Plane } from '../common/plane.ts';
import { loadCv, cvError } from '../cv/opencv.ts';
import type { Channel, Segment } from './geometry.ts';

export interface AutoWallOptions {
  /** Smallest wall separation as a fraction of the shorter image side. Default 0.08. */
  minSeparation?: number;
  /** Largest angle between the two walls, degrees (tapered channels). Default 15. */
  maxTaperDeg?: number;
}

export interface FoundWalls {
  channel: Channel;
  /** Each wall's mean gradient along it relative to the strongest wall (1 = as strong). */
  strength: [number, number];
}

/** Side of the working copy: walls are long features, so a coarse image finds them as well and fast. */
const WORK_SIDE = 512;

/**
 * The channel's walls as the two strongest long straight step edges. The image is reduced to about
 * 512 px and smoothed wider than the texture inside the channel, then every pixel votes with its
 * squared gradient magnitude (so steps outvote what is left of the texture) for the lines through it whose normal is near its gradient direction (a
 * gradient-weighted Hough transform). The strongest line is the first wall; the strongest line within
 * the taper limit and far enough from it is the second. Each wall is cut to where its edge is present.
 */
export async function findWalls(plane: Plane, options: AutoWallOptions = {}): Promise<FoundWalls> {
  const maxTaper = ((options.maxTaperDeg ?? 15) * Math.PI) / 180;
  const g = await smoothedGradient(plane);
  const { w, h, gx, gy, scale } = g;
  const minSep = (options.minSeparation ?? 0.08) * Math.min(w, h);

  // Accumulator over normal angle phi in [0, pi) (0.5 deg steps) and signed offset rho (1 px steps).
  const nPhi = 360, dPhi = Math.PI / nPhi;
  const rhoMax = Math.ceil(Math.hypot(w, h));
  const nRho = 2 * rhoMax + 1;
  const acc = new Float32Array(nPhi * nRho);
  const cosT = Float64Array.from({ length: nPhi }, (_, k) => Math.cos(k * dPhi));
  const sinT = Float64Array.from({ length: nPhi }, (_, k) => Math.sin(k * dPhi));
  let gMax = 0;
  for (let i = 0; i < gx.length; i++) gMax = Math.max(gMax, Math.hypot(gx[i], gy[i]));
  if (!(gMax > 1e-6)) throw new InputError('the image is flat: no channel walls can be found', 'Give the walls by hand');
  const spread = 4; // votes within +-2 deg of the gradient direction
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const i = y * w + x;
      const m = Math.hypot(gx[i], gy[i]);
      if (m < 0.05 * gMax) continue;
      let phi = Math.atan2(gy[i], gx[i]);
      if (phi < 0) phi += Math.PI;
      const k0 = Math.round(phi / dPhi);
      for (let dk = -spread; dk <= spread; dk++) {
        const k = (((k0 + dk) % nPhi) + nPhi) % nPhi;
        // Wrapping past pi flips the normal, so rho changes sign there.
        const flip = k0 + dk >= nPhi || k0 + dk < 0 ? -1 : 1;
        const rho = flip * (x * cosT[k] + y * sinT[k]);
        acc[k * nRho + Math.round(rho) + rhoMax] += m * m;
      }
    }
  }
  const best = argmax(acc, () => true);
  const k1 = Math.floor(best / nRho), r1 = (best % nRho) - rhoMax;
  const second = argmax(acc, (j) => {
    const k = Math.floor(j / nRho), r = (j % nRho) - rhoMax;
    let dk = Math.abs(k - k1);
    const wraps = dk > nPhi / 2;
    if (wraps) dk = nPhi - dk;
    if (dk * dPhi > maxTaper) return false;
    const rr = wraps ? -r : r;
    return Math.abs(rr - r1) >= minSep;
  });
  if (second < 0 || !(acc[second] > 0.15 * acc[best])) {
    throw new InputError('no second wall roughly parallel to the strongest edge was found', 'Give the walls by hand, or crop the image to the channel');
  }
  const k2 = Math.floor(second / nRho), r2 = (second % nRho) - rhoMax;
  const lineA = { phi: k1 * dPhi, rho: r1 }, lineB = { phi: k2 * dPhi, rho: r2 };
  const a = edgeStretch(lineA, g), b = edgeStretch(lineB, g);
  // Pixel centres: full = (work + 0.5) * scale - 0.5 for an area-averaged reduction, per axis.
  const fx = (v: number) => (v + 0.5) * scale - 0.5, fy = (v: number) => (v + 0.5) * g.scaleY - 0.5;
  const toFull = (s: Segment): Segment => ({ x1: fx(s.x1), y1: fy(s.y1), x2: fx(s.x2), y2: fy(s.y2) });
  // The heavy smoothing that silences texture also pulls the edge towards the darker side: refine each
  // wall on the full-resolution image, lightly smoothed, within a few coarse smoothing widths.
  const reach = 3 * g.smooth * scale;
  const walls = orderWalls(refineWall(plane, toFull(a.seg), reach), refineWall(plane, toFull(b.seg), reach));
  const top = Math.max(a.strength, b.strength);
  return { channel: { walls }, strength: [a.strength / top, b.strength / top] };
}

interface Gradient { w: number; h: number; gx: Float32Array; gy: Float32Array; scale: number; scaleY: number; smooth: number }

async function smoothedGradient(plane: Plane): Promise<Gradient> {
  const cv = await loadCv();
  const mats: { delete(): void }[] = [];
  const keep = <T extends { delete(): void }>(m: T): T => (mats.push(m), m);
  try {
    // Big images are first block-averaged in plain JS, so the WASM heap never holds a full-size copy.
    const pre = blockAverage(plane, Math.max(1, Math.floor(Math.max(plane.width, plane.height) / (2 * WORK_SIDE))));
    const src = keep(new cv.Mat(pre.height, pre.width, cv.CV_32F));
    src.data32F.set(pre.data);
    const scale = Math.max(1, Math.max(plane.width, plane.height) / WORK_SIDE);
    const w = Math.max(8, Math.round(plane.width / scale)), h = Math.max(8, Math.round(plane.height / scale));
    const small = keep(new cv.Mat());
    cv.resize(src, small, new cv.Size(w, h), 0, 0, cv.INTER_AREA);
    const smooth = Math.max(3, Math.min(w, h) / 60);
    cv.GaussianBlur(small, small, new cv.Size(0, 0), smooth, smooth, cv.BORDER_REFLECT);
    const gx = keep(new cv.Mat()), gy = keep(new cv.Mat());
    cv.Sobel(small, gx, cv.CV_32F, 1, 0, 3, 1, 0, cv.BORDER_REFLECT);
    cv.Sobel(small, gy, cv.CV_32F, 0, 1, 3, 1, 0, cv.BORDER_REFLECT);
    // Step from the working grid back to full-resolution pixels (centres line up to within a pixel).
    return { w, h, gx: gx.data32F.slice(), gy: gy.data32F.slice(), scale: plane.width / w, scaleY: plane.height / h, smooth };
  } catch (e) {
    throw cvError(cv, e);
  } finally {
    for (const m of mats) m.delete();
  }
}

/** Mean of k x k blocks (the last partial blocks averaged over what they hold). */
function blockAverage(p: Plane, k: number): Plane {
  if (k <= 1) return p;
  const w = Math.ceil(p.width / k), h = Math.ceil(p.height / k);
  const sum = new Float64Array(w * h), cnt = new Uint32Array(w * h);
  for (let y = 0; y < p.height; y++) {
    const row = ((y / k) | 0) * w;
    for (let x = 0; x < p.width; x++) { const j = row + ((x / k) | 0); sum[j] += p.data[y * p.width + x]; cnt[j]++; }
  }
  return { width: w, height: h, data: Float32Array.from(sum, (v, j) => v / cnt[j]) };
}

/**
 * Moves a coarse wall onto the full-resolution edge: at points every 2 px along it, the profile across
 * it (averaged over 5 px along the wall and smoothed across by sigma 1.5 px, enough to steady the
 * gradient and too little to move an edge), its steepest step within +-reach px (same polarity as the
 * wall's side-to-side contrast), sub-pixel by a parabola; then a total-least-squares line through them.
 */
function refineWall(p: Plane, seg: Segment, reach: number): Segment {
  const len = Math.hypot(seg.x2 - seg.x1, seg.y2 - seg.y1);
  const ux = (seg.x2 - seg.x1) / len, uy = (seg.y2 - seg.y1) / len, nx = -uy, ny = ux;
  const step = 0.5, m = Math.ceil(reach / step);
  const xs: number[] = [], ys: number[] = [];
  const prof = new Float64Array(2 * m + 1), der = new Float64Array(2 * m + 1), raw = new Float64Array(2 * m + 1);
  // Gaussian of sigma 1.5 px in steps of 0.5 px (3 samples), truncated at 2 sigma.
  const gk = Float64Array.from({ length: 13 }, (_, i) => Math.exp(-0.5 * ((i - 6) / 3) ** 2));
  // Polarity of the wall: which side is brighter, from wide samples either side of the coarse line.
  let side = 0;
  for (let t = 0; t <= len; t += 8) {
    const cx = seg.x1 + t * ux, cy = seg.y1 + t * uy;
    side += clampedBilinear(p, cx + reach * nx, cy + reach * ny) - clampedBilinear(p, cx - reach * nx, cy - reach * ny);
  }
  const sign = side >= 0 ? 1 : -1;
  for (let t = 0; t <= len; t += 2) {
    const cx = seg.x1 + t * ux, cy = seg.y1 + t * uy;
    for (let k = -m; k <= m; k++) {
      let v = 0;
      for (let j = -2; j <= 2; j++) v += clampedBilinear(p, cx + k * step * nx + j * ux, cy + k * step * ny + j * uy);
      raw[k + m] = v / 5;
    }
    for (let k = 0; k <= 2 * m; k++) {
      let v = 0, ws = 0;
      for (let j = -6; j <= 6; j++) {
        const q = k + j;
        if (q < 0 || q > 2 * m) continue;
        const w = gk[j + 6];
        v += w * raw[q]; ws += w;
      }
      prof[k] = v / ws;
    }
    let best = -1, bestV = 0;
    for (let k = 1; k < 2 * m; k++) {
      der[k] = (sign * (prof[k + 1] - prof[k - 1])) / (2 * step);
      if (der[k] > bestV) { bestV = der[k]; best = k; }
    }
    if (best < 2 || best > 2 * m - 2) continue;
    const den = der[best - 1] - 2 * der[best] + der[best + 1];
    const off = den < 0 ? (0.5 * (der[best - 1] - der[best + 1])) / den : 0;
    const d = (best + off - m) * step;
    xs.push(cx + d * nx); ys.push(cy + d * ny);
  }
  return fitSegment(xs, ys) ?? seg;
}

function argmax(a: Float32Array, ok: (i: number) => boolean): number {
  let best = -1, v = -Infinity;
  for (let i = 0; i < a.length; i++) if (a[i] > v && ok(i)) { v = a[i]; best = i; }
  return best;
}

/**
 * Walks along the line and keeps the stretch where the gradient across it stays above a third of its
 * median over the line's strong part.
 */
function edgeStretch(l: { phi: number; rho: number }, g: Gradient): { seg: Segment; strength: number } {
  const c = Math.cos(l.phi), s = Math.sin(l.phi);
  const x0 = c * l.rho, y0 = s * l.rho, dx = -s, dy = c;
  const reach = Math.hypot(g.w, g.h);
  const ts: number[] = [], ms: number[] = [];
  for (let t = -reach; t <= reach; t += 1) {
    const x = x0 + t * dx, y = y0 + t * dy;
    const xi = Math.round(x), yi = Math.round(y);
    if (xi < 1 || yi < 1 || xi > g.w - 2 || yi > g.h - 2) continue;
    let m = 0;
    for (let o = -2; o <= 2; o++) {
      const xa = Math.round(x + o * c), ya = Math.round(y + o * s);
      if (xa < 0 || ya < 0 || xa >= g.w || ya >= g.h) continue;
      const j = ya * g.w + xa;
      m = Math.max(m, Math.abs(g.gx[j] * c + g.gy[j] * s));
    }
    ts.push(t); ms.push(m);
  }
  if (ts.length < 4) throw new InputError('a wall line runs outside the image', 'Give the walls by hand');
  const sorted = [...ms].sort((p, q) => p - q);
  const ref = sorted[Math.floor(0.75 * (sorted.length - 1))];
  const keepIdx = ms.map((m, i) => (m >= ref / 3 ? i : -1)).filter((i) => i >= 0);
  const i0 = keepIdx[0], i1 = keepIdx[keepIdx.length - 1];
  let sum = 0;
  for (let i = i0; i <= i1; i++) sum += ms[i];
  // Refine: the sub-pixel peak of |gradient across the line| at each step, then a total-least-squares line.
  const px: number[] = [], py: number[] = [];
  const across = (x: number, y: number) => {
    const xa = Math.round(x), ya = Math.round(y);
    if (xa < 0 || ya < 0 || xa >= g.w || ya >= g.h) return 0;
    const j = ya * g.w + xa;
    return Math.abs(g.gx[j] * c + g.gy[j] * s);
  };
  for (let i = i0; i <= i1; i++) {
    const bx = x0 + ts[i] * dx, by = y0 + ts[i] * dy;
    let bestO = 0, bestM = -1;
    for (let o = -3; o <= 3; o++) {
      const m = across(bx + o * c, by + o * s);
      if (m > bestM) { bestM = m; bestO = o; }
    }
    const mL = across(bx + (bestO - 1) * c, by + (bestO - 1) * s), mR = across(bx + (bestO + 1) * c, by + (bestO + 1) * s);
    const den = mL - 2 * bestM + mR;
    const off = bestO + (den < 0 ? (0.5 * (mL - mR)) / den : 0);
    px.push(bx + off * c); py.push(by + off * s);
  }
  const seg = fitSegment(px, py) ?? { x1: x0 + ts[i0] * dx, y1: y0 + ts[i0] * dy, x2: x0 + ts[i1] * dx, y2: y0 + ts[i1] * dy };
  return { seg, strength: sum / (i1 - i0 + 1) };
}

/** Total-least-squares line through the points, cut at the extreme projections. */
function fitSegment(xs: number[], ys: number[]): Segment | null {
  const n = xs.length;
  if (n < 3) return null;
  const mx = xs.reduce((a, b) => a + b, 0) / n, my = ys.reduce((a, b) => a + b, 0) / n;
  let sxx = 0, sxy = 0, syy = 0;
  for (let i = 0; i < n; i++) {
    const u = xs[i] - mx, v = ys[i] - my;
    sxx += u * u; sxy += u * v; syy += v * v;
  }
  const phi = 0.5 * Math.atan2(2 * sxy, sxx - syy); // direction of largest spread
  const ux = Math.cos(phi), uy = Math.sin(phi);
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < n; i++) {
    const t = (xs[i] - mx) * ux + (ys[i] - my) * uy;
    lo = Math.min(lo, t); hi = Math.max(hi, t);
  }
  return { x1: mx + lo * ux, y1: my + lo * uy, x2: mx + hi * ux, y2: my + hi * uy };
}

/** Walls in reading order: the upper wall first for a horizontal channel, the left one for a vertical one. */
function orderWalls(a: Segment, b: Segment): [Segment, Segment] {
  let ux = a.x2 - a.x1, uy = a.y2 - a.y1;
  const l = Math.hypot(ux, uy);
  ux /= l; uy /= l;
  let nx = -uy, ny = ux;
  if (ny < 0 || (ny === 0 && nx < 0)) { nx = -nx; ny = -ny; }
  const key = (s: Segment) => ((s.x1 + s.x2) / 2) * nx + ((s.y1 + s.y2) / 2) * ny;
  return key(a) <= key(b) ? [a, b] : [b, a];
}
