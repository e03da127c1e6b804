/**
 * The grid of a stage micrometer's ticks, measured from the ticks themselves (docs/methods.md,
 * "Micrometer calibration"):
 *
 * 1. Ruler axes modulo 90 deg from the edges (rulerAxes: tick edges, baseline, tick ends and upright
 *    numbers all agree in the quadrupled angle, however the tick lengths are mixed).
 * 2. Along both axes, strip profiles across the candidate ticks (stripProfiles); the strip with the
 *    most lines on a regular grid (profileGrid) seeds the grid: its period P1, a line, the lines'
 *    prominence and width. The axis whose grid gathers the most line prominence is across the ticks.
 * 3. Every strip's lines are put on that grid: the grid's phase in each strip (circular mean of the
 *    line positions modulo P1) is unwrapped along the ticks and fitted by a straight line, so each
 *    line gets the index of its tick whatever the ticks' lengths; its centre is the symmetric-window
 *    centroid (measureLine), corrected for the lamp's gradient across it (lamp.ts). Each point is
 *    (s, t, m): across, along, tick index.
 * 4. Points off the grid or off their tick's line (printed numbers beside a tick, dirt) are left out;
 *    the tick slope beta = ds/dt is the within-tick least-squares slope. If fainter ticks show between
 *    the found ones (finerTicks: short ticks too faint to find one by one), the grid is refined to them.
 * 5. The strips are cut again along the normal turned by -atan(beta), sampled at a step that is no
 *    whole fraction of the period, and steps 3-4 repeated, so the period is measured along the true normal.
 * 6. Each tick's position p_m is the weighted mean of s - beta t over its points (weight: line area
 *    squared); p_m = c0 + P m is fitted with each tick weighted by its own precision (never better
 *    than the position floor, MICROMETER_LIMITS) plus a common extra variance (gridFit.ts), giving the
 *    period, its standard error (n - 2 degrees of freedom) and the residual.
 */
import type { Plane } from '../common/index.ts';
import { median } from '../common/index.ts';
import { InputError } from '../common/index.ts';
import { rulerAxes } from './tickDirection.ts';
import { stripProfiles, type StripProfiles } from './strips.ts';
import { measureLine } from './lineCentre.ts';
import { lampGradient } from './lamp.ts';
import { centreWindowPx, detrendedMoments, lineFit, profileGrid, profilePeaks, smooth1d, strongPeaks, type ProfilePeak } from './period.ts';
import { MICROMETER_LIMITS } from './limits.ts';
import { pauleMandelLine, weightedLine } from './gridFit.ts';

export interface TickGridOptions {
  polarity?: 'auto' | 'dark' | 'bright';
}

/** One tick as fitted: its index, its position along the normal at t = 0 and how it was measured. */
export interface FittedTick {
  index: number;
  /** Position across the ticks at t = 0, px from the image centre along the normal. */
  positionPx: number;
  /** Mean position along the tick of its points, px. */
  tMeanPx: number;
  /** Strips (points) that measured it. */
  points: number;
  /** Extent of those strips along the tick, px (the tick's visible length). */
  lengthPx: number;
  /** Residual from the fitted grid, px (NaN for a tick left out). */
  residualPx: number;
  used: boolean;
}

export interface TickGrid {
  /** Normal across the ticks, radians in image coordinates (x right, y down). */
  normalRad: number;
  /** Standard uncertainty of the normal's direction, radians. */
  normalStdErrRad: number;
  /** Period along the normal, px. */
  periodPx: number;
  /** Standard error of the period from the tick-position fit, px; `dof` = ticks used - 2. */
  periodStdErrPx: number;
  dof: number;
  /** Standard uncertainty of the period from the direction's uncertainty (propagated), px, and its degrees of freedom. */
  directionStdErrPx: number;
  directionDof: number;
  ticks: FittedTick[];
  /** Ticks used in the fit. */
  lines: number;
  /** Divisions spanned by the ticks used. */
  divisions: number;
  rmsResidualPx: number;
  /** Ticks found but left out as off the grid. */
  rejectedLines: number;
  /** Tick indices inside the span used with no tick found. */
  missingLines: number;
  /** Robust SD of single points about their tick's line, px. */
  pointScatterPx: number;
  points: number;
  stripWidthPx: number;
  polarity: 'dark' | 'bright';
  /** The shortest ticks were too faint to find one by one; the finer pitch was confirmed by folding (finerTicks). */
  countedFromLongerTicks: boolean;
  /** Share of the lines found (as wide as the ticks) that did not end up on the fitted grid: another scale, a grid, dirt. */
  offGridFraction: number;
}

interface Point { s: number; t: number; m: number; area: number; lampShiftPx2: number }

interface StripLines {
  q: Float64Array;
  peaks: ProfilePeak[];
  /** Noise SD of a strip's profile (median over the strips). */
  noiseSd: number;
  /** Least prominence of a line, profile units. */
  floor: number;
}

/**
 * Each strip's profile with lines as peaks, its peaks, and the least prominence a line must have:
 * 6 noise SDs (noise alone reaches about 4.5 in a strip's profile; the SD is the median over the
 * strips of their own estimates, as a strip crossed by ticks at a slight tilt overstates its own), and
 * at least a tenth of the strongest strip's typical line (the median of its 5 most prominent peaks),
 * which keeps pixel-level ripples out of noise-free images.
 */
function stripLines(sp: StripProfiles, sign: number, smoothSamples: number): StripLines[] {
  const noiseSd = median(sp.strips.map((st) => st.noiseSd).filter(Number.isFinite));
  const all = sp.strips.map((st) => {
    const q = sign < 0 ? st.values.map((v) => -v) : st.values;
    return { q, peaks: profilePeaks(smooth1d(q, smoothSamples)) };
  });
  let strongest = 0;
  for (const l of all) {
    const top = l.peaks.map((p) => p.prominence).sort((a, b) => b - a).slice(0, 5);
    if (top.length > 0) strongest = Math.max(strongest, median(top));
  }
  const floor = Math.max(Number.isFinite(noiseSd) ? 6 * noiseSd : 0, 0.1 * strongest);
  return all.map((l) => ({ ...l, noiseSd, floor }));
}

/** Polarity from the pooled third moment of the detrended strip profiles (negative: dark lines). */
function polarityOf(sp: StripProfiles): 'dark' | 'bright' {
  let m3 = 0;
  for (const st of sp.strips) {
    const d = detrendedMoments(st.values, Math.max(64, st.values.length / 8));
    if (d.n > 0) m3 += d.n * d.m3;
  }
  return m3 < 0 ? 'dark' : 'bright';
}


/** Where the grid is in one strip: its period, the position of one of its lines, the lines' prominence and width. */
interface GridSeed {
  strip: number;
  periodPx: number;
  /** s of a line of the grid in that strip, px. */
  linePx: number;
  amplitude: number;
  lineWidthPx: number;
  /** Lines on the grid in that strip. */
  count: number;
  /** How many strips' lines agree with the period (see reference). */
  support: number;
}

/**
 * The grid seed. Every strip whose strong lines sit on a regular grid (profileGrid, residual below the
 * strip fraction) proposes its period; a period's support is sum over all strips of n_k R_k^2, n_k
 * the strip's strong lines and R_k = |sum exp(2 pi i s / P)| / n_k how well they agree on one phase
 * modulo P. Ticks agree in every strip they cross, printed numbers only in a few strips, and a grid of
 * every 5th tick not in the strips that cross them all, so the best-supported period is the ticks'
 * (of periods within 10 % of the best support, the longest: a half period is supported as well). The
 * seed is that period's strip with the most lines on the grid.
 */
function reference(sp: StripProfiles, lines: StripLines[], polarity: 'dark' | 'bright'): GridSeed | null {
  const strong = lines.map((l) => strongPeaks(l.peaks, l.floor, 0.3));
  const seeds: GridSeed[] = [];
  lines.forEach((l, j) => {
    if (strong[j].length < MICROMETER_LIMITS.minLines) return;
    const fit = profileGrid(l.q, strong[j], sp.step, polarity);
    if (!fit || fit.rmsResidualPx > MICROMETER_LIMITS.stripResidualFraction * fit.periodPx) return;
    seeds.push({
      strip: j, periodPx: fit.periodPx, linePx: sp.sStart + fit.offsetPx, amplitude: fit.amplitude, lineWidthPx: fit.lineWidthPx,
      count: fit.indices.length, support: 0,
    });
  });
  if (seeds.length === 0) return null;
  const support = (P: number) => {
    let total = 0;
    for (const pk of strong) {
      if (pk.length === 0) continue;
      let re = 0, im = 0;
      for (const p of pk) {
        const a = (2 * Math.PI * (sp.sStart + p.pos * sp.step)) / P;
        re += Math.cos(a); im += Math.sin(a);
      }
      total += (re * re + im * im) / pk.length;
    }
    return total;
  };
  const periods: number[] = [];
  for (const sd of seeds) if (!periods.some((P) => Math.abs(P / sd.periodPx - 1) < 0.01)) periods.push(sd.periodPx);
  const scored = periods.map((P) => ({ P, s: support(P) }));
  const top = Math.max(...scored.map((e) => e.s));
  const chosen = scored.filter((e) => e.s >= 0.9 * top).reduce((x, y) => (y.P > x.P ? y : x));
  const same = seeds.filter((sd) => Math.abs(sd.periodPx / chosen.P - 1) < 0.01);
  const best = same.reduce((x, y) => (y.count > x.count ? y : x));
  return { ...best, support: chosen.s };
}

/** Grid phase of one strip's peaks for period P: angle of sum prominence exp(2 pi i (s - origin) / P), its concentration and weight. */
function stripPhase(sp: StripProfiles, peaks: ProfilePeak[], P: number, origin: number): { a: number; r: number; w: number } {
  let re = 0;
  let im = 0;
  let w = 0;
  for (const p of peaks) {
    const a = (2 * Math.PI * (sp.sStart + p.pos * sp.step - origin)) / P;
    re += p.prominence * Math.cos(a);
    im += p.prominence * Math.sin(a);
    w += p.prominence;
  }
  return { a: Math.atan2(im, re), r: w > 0 ? Math.hypot(re, im) / w : 0, w };
}

/**
 * The grid seed for a known period (second pass): the strip whose strong lines agree best on one phase
 * (largest |sum prominence exp(2 pi i s / P)|), a line at that phase, and the median prominence and
 * width of its lines within a quarter period of the grid.
 */
function seedForPeriod(sp: StripProfiles, lines: StripLines[], P: number): GridSeed | null {
  let best: GridSeed | null = null;
  let bestScore = 0;
  lines.forEach((l, j) => {
    const cands = strongPeaks(l.peaks, l.floor, 0.3);
    if (cands.length < 2) return;
    const ph = stripPhase(sp, cands, P, 0);
    const score = ph.w * ph.r;
    if (score <= bestScore) return;
    const linePx = (ph.a / (2 * Math.PI)) * P;
    const on = cands.filter((p) => {
      const d = (sp.sStart + p.pos * sp.step - linePx) / P;
      return Math.abs(d - Math.round(d)) < 0.25;
    });
    if (on.length < 2) return;
    bestScore = score;
    best = {
      strip: j, periodPx: P, linePx, amplitude: median(on.map((p) => p.prominence)),
      lineWidthPx: median(on.map((p) => p.width)) * sp.step, count: on.length, support: 0,
    };
  });
  return best;
}

const wrapPi = (a: number) => a - 2 * Math.PI * Math.round(a / (2 * Math.PI));

/**
 * Points (s, t, m) of every strip's lines on the seed's grid (period P, a line at s = linePx in the
 * seed strip), the grid's phase followed from strip to strip along the ticks.
 */
function trackPoints(sp: StripProfiles, lines: StripLines[], ref: GridSeed): { points: Point[]; lineLike: number } {
  const P = ref.periodPx;
  const c1 = ref.linePx;
  const strong = lines.map((l) => l.peaks.filter((pk) => pk.prominence >= Math.max(l.floor, 0.3 * ref.amplitude)));
  // Phase of the grid in each strip, and its concentration R.
  const phase = strong.map((pk) => stripPhase(sp, pk, P, c1));
  const unwrapped = new Float64Array(sp.strips.length).fill(NaN);
  unwrapped[ref.strip] = phase[ref.strip].a;
  for (const dir of [1, -1]) {
    let prev = phase[ref.strip].a;
    for (let j = ref.strip + dir; j >= 0 && j < sp.strips.length; j += dir) {
      if (phase[j].w === 0 || phase[j].r < 0.5) continue;
      unwrapped[j] = prev + wrapPi(phase[j].a - prev);
      prev = unwrapped[j];
    }
  }
  // Straight line phase(t) = a + b t, weighted by w R, strips more than 0.15 cycles off left out.
  let use = sp.strips.map((_, j) => j).filter((j) => Number.isFinite(unwrapped[j]));
  let a = unwrapped[ref.strip];
  let b = 0;
  for (let round = 0; round < 5 && use.length >= 2; round++) {
    let sw = 0, st = 0, sy = 0, stt = 0, sty = 0;
    for (const j of use) {
      const w = phase[j].w * phase[j].r;
      const t = sp.strips[j].t;
      sw += w; st += w * t; sy += w * unwrapped[j]; stt += w * t * t; sty += w * t * unwrapped[j];
    }
    const det = sw * stt - st * st;
    if (!(det > 1e-12 * sw * stt)) { a = sy / sw; b = 0; } else { b = (sw * sty - st * sy) / det; a = (sy - b * st) / sw; }
    const next = use.filter((j) => Math.abs(unwrapped[j] - (a + b * sp.strips[j].t)) < 0.15 * 2 * Math.PI);
    if (next.length === use.length) break;
    use = next;
  }
  const hw = centreWindowPx(ref.lineWidthPx, P) / sp.step;
  const points: Point[] = [];
  let lineLike = 0;
  strong.forEach((pk, j) => {
    const t = sp.strips[j].t;
    const off = c1 + (P * (a + b * t)) / (2 * Math.PI);
    const byIndex = new Map<number, Point & { r: number }>();
    for (const p of pk) {
      const widthPx = p.width * sp.step;
      if (widthPx < 0.5 * ref.lineWidthPx || widthPx > 2 * ref.lineWidthPx) continue;
      lineLike++;
      const s0 = sp.sStart + p.pos * sp.step;
      const m = Math.round((s0 - off) / P);
      if (Math.abs(s0 - off - m * P) > 0.25 * P) continue;
      const line = measureLine(lines[j].q, p.pos, hw, P / sp.step - hw);
      if (!Number.isFinite(line.centre)) continue;
      const s = sp.sStart + line.centre * sp.step;
      const r = Math.abs(s - off - m * P);
      if (r > 0.25 * P) continue;
      const prev = byIndex.get(m);
      if (!prev || r < prev.r) byIndex.set(m, { s, t, m, r, area: line.area, lampShiftPx2: line.lampShift * sp.step * sp.step });
    }
    for (const e of byIndex.values()) points.push({ s: e.s, t, m: e.m, area: e.area, lampShiftPx2: e.lampShiftPx2 });
  });
  // Centres corrected for the lamp's gradient across each line (lamp.ts).
  const kappa = lampGradient(points);
  return { points: points.map((p, i) => ({ ...p, s: p.s - kappa[i] * p.lampShiftPx2 })), lineLike };
}

interface GridFit {
  beta: number;
  betaStdErr: number;
  betaDof: number;
  ticks: FittedTick[];
  fit: { p: number; c0: number; se: number; rms: number };
  /** Slope of the ticks' mean t against their index, px per division (sensitivity of P to beta, with a minus sign). */
  tSlope: number;
  pointScatterPx: number;
  points: number;
}

/** Within-tick weighted least-squares slope ds/dt over points grouped by tick, and its S_tt. */
function withinSlope(groups: Point[][], weight: (p: Point) => number = () => 1): { beta: number; stt: number } {
  let stt = 0;
  let sts = 0;
  for (const g of groups) {
    if (g.length < 2) continue;
    const W = g.reduce((x, p) => x + weight(p), 0);
    const tb = g.reduce((x, p) => x + weight(p) * p.t, 0) / W;
    const sb = g.reduce((x, p) => x + weight(p) * p.s, 0) / W;
    for (const p of g) {
      stt += weight(p) * (p.t - tb) ** 2;
      sts += weight(p) * (p.t - tb) * (p.s - sb);
    }
  }
  return { beta: stt > 0 ? sts / stt : 0, stt };
}

/** Steps 4 and 5 of the method on the points of one pass. */
function gridFromPoints(points: Point[], stripWidthPx: number): GridFit | null {
  const byTick = new Map<number, Point[]>();
  for (const p of points) {
    const g = byTick.get(p.m);
    if (g) g.push(p);
    else byTick.set(p.m, [p]);
  }
  const all = [...byTick.entries()].sort((x, y) => x[0] - y[0]);
  // Points off the grid (5 robust SDs of all points about it) or off their tick's line (4 robust SDs
  // about the tick's median), such as a printed number's stroke beside or on a tick, are left out.
  let kept = all.map(([, g]) => g);
  let beta = withinSlope(kept).beta;
  let scatter = 0;
  const robustSd = (v: number[]) => (v.length > 0 ? 1.4826 * median(v.map(Math.abs)) : 0);
  for (let round = 0; round < 4; round++) {
    const centres = kept.map((g) => (g.length > 0 ? median(g.map((p) => p.s - beta * p.t)) : NaN));
    const ok = all.map(([m], k) => ({ c: centres[k], m })).filter((e) => Number.isFinite(e.c));
    if (ok.length < MICROMETER_LIMITS.minLines) return null;
    let grid = lineFit(ok);
    const tickSd = robustSd(ok.map((e) => e.c - grid.c0 - grid.p * e.m));
    grid = lineFit(ok.filter((e) => Math.abs(e.c - grid.c0 - grid.p * e.m) <= Math.max(5 * tickSd, 0.01)));
    const offGrid = (p: Point) => p.s - beta * p.t - grid.c0 - grid.p * p.m;
    const gridSd = robustSd(points.map(offGrid));
    const onGrid = all.map(([, g]) => g.filter((p) => Math.abs(offGrid(p)) <= Math.max(5 * gridSd, 0.02)));
    const mid = onGrid.map((g) => (g.length > 0 ? median(g.map((p) => p.s - beta * p.t)) : NaN));
    const devs: number[] = [];
    onGrid.forEach((g, k) => { if (g.length > 1) for (const p of g) devs.push(p.s - beta * p.t - mid[k]); });
    scatter = robustSd(devs);
    const limit = Math.max(4 * scatter, 0.01);
    kept = onGrid.map((g, k) => g.filter((p) => Math.abs(p.s - beta * p.t - mid[k]) <= limit));
    beta = withinSlope(kept).beta;
  }
  // Each point weighs as its line's area squared (a centre's error scales as noise / area); the
  // direction from the weighted within-tick slope, each tick's position the weighted mean of its points.
  const areaRef = median(kept.flat().map((p) => p.area).filter((v) => v > 0)) || 1;
  const wt = (p: Point) => Math.max(1e-6, p.area / areaRef) ** 2;
  const slope = withinSlope(kept, wt);
  beta = slope.beta;
  let ssw = 0;
  let nw = 0;
  const ticks: (FittedTick & { weight: number })[] = [];
  all.forEach(([m], k) => {
    const g = kept[k];
    if (g.length === 0) return;
    const W = g.reduce((x, p) => x + wt(p), 0);
    const tb = g.reduce((x, p) => x + wt(p) * p.t, 0) / W;
    const pos = g.reduce((x, p) => x + wt(p) * (p.s - beta * p.t), 0) / W;
    for (const p of g) ssw += wt(p) * (p.s - beta * p.t - pos) ** 2;
    nw += g.length;
    const ts = g.map((p) => p.t);
    ticks.push({
      index: m, positionPx: pos, tMeanPx: tb, points: g.length, lengthPx: Math.max(...ts) - Math.min(...ts) + stripWidthPx,
      residualPx: NaN, used: true, weight: W,
    });
  });
  if (ticks.length < MICROMETER_LIMITS.minLines) return null;
  // Pooled variance of a unit-weight point about its tick (N - ticks - 1 degrees of freedom).
  const withinDof = nw - ticks.length - 1;
  const sigma0sq = withinDof > 0 ? ssw / withinDof : 0;
  // Ticks off the grid by more than 5 robust SDs (at least 5 x the position floor) are left out, refitting in between.
  let fit = lineFit(ticks.map((t) => ({ c: t.positionPx, m: t.index })));
  for (let round = 0; round < 3; round++) {
    const res = ticks.map((t) => t.positionPx - (fit.c0 + fit.p * t.index));
    const sd = 1.4826 * median(res.filter((_, k) => ticks[k].used).map(Math.abs));
    const limit = 5 * Math.max(sd, MICROMETER_LIMITS.tickPositionFloorPx);
    ticks.forEach((t, k) => { t.used = Math.abs(res[k]) <= limit; });
    const used = ticks.filter((t) => t.used);
    if (used.length < MICROMETER_LIMITS.minLines) return null;
    fit = lineFit(used.map((t) => ({ c: t.positionPx, m: t.index })));
  }
  const used = ticks.filter((t) => t.used);
  const floor2 = MICROMETER_LIMITS.tickPositionFloorPx ** 2;
  const line = pauleMandelLine(used.map((t) => ({ m: t.index, c: t.positionPx, a: sigma0sq / t.weight + floor2 })));
  let ss = 0;
  for (const t of ticks) t.residualPx = t.positionPx - (line.c0 + line.p * t.index);
  for (const t of used) ss += t.residualPx ** 2;
  const tSlope = weightedLine(used.map((t) => ({ m: t.index, c: t.tMeanPx })), line.weights).p;
  const betaDof = Math.max(1, withinDof);
  return {
    beta, betaStdErr: slope.stt > 0 && withinDof > 0 ? Math.sqrt(sigma0sq / slope.stt) : Infinity, betaDof,
    ticks: ticks.map(({ weight: _w, ...t }) => t), fit: { p: line.p, c0: line.c0, se: line.se, rms: Math.sqrt(ss / used.length) },
    tSlope, pointScatterPx: scatter, points: nw,
  };
}

/**
 * Evidence for fainter ticks between the found ones at P / d. Each strip's profile is cut into the
 * cells of the found grid (phase x in [0, 1) of a period, the found tick at 0). Finer ticks put a bump
 * at every x = j / d (j = 1 .. d - 1) of every cell: a cell's height is the mean over j of the profile
 * within +-0.04 of j / d less the mean of the midpoints between them. For runs of 1, 2 or 4
 * neighbouring strips (each cell averaged over the run), at least 4 cells' heights must average more
 * than 5 of their standard errors (so a number printed in one cell does not pass) and a fifth of the
 * found ticks' prominence, and the run's mean cell profile must be at least as high at each j / d as a
 * quarter of the finer period to either side (so ticks at another pitch do not pass). Returns the
 * largest such mean height in standard errors (0 when no run shows it). Profiles are lines-as-peaks.
 */
function finerTicks(sp: StripProfiles, lines: StripLines[], c0: number, P: number, beta: number, d: number, amplitude: number): number {
  const half = 0.04;
  const slots = 4 * d;
  // Slots are quarter steps of the finer period: bumps at 4i, midpoints at 4i +- 2, quarter points at 4i +- 1.
  const perStrip = sp.strips.map((st, j) => {
    const q = lines[j].q;
    const cells = new Map<number, { sum: Float64Array; n: Float64Array }>();
    for (let k = 0; k < q.length; k++) {
      if (!Number.isFinite(q[k])) continue;
      const g = (sp.sStart + k * sp.step - c0 - beta * st.t) / P;
      const cell = Math.floor(g);
      const x = (g - cell) * slots;
      const slot = Math.round(x);
      if (Math.abs(x - slot) > half * slots) continue;
      let e = cells.get(cell);
      if (!e) cells.set(cell, (e = { sum: new Float64Array(slots + 1), n: new Float64Array(slots + 1) }));
      e.sum[slot] += q[k];
      e.n[slot]++;
    }
    const profiles = new Map<number, Float64Array>();
    for (const [cell, e] of cells) {
      if (e.n.some((v, i) => v === 0 && i > 0 && i < slots)) continue;
      profiles.set(cell, e.sum.map((v, i) => (e.n[i] > 0 ? v / e.n[i] : NaN)));
    }
    return profiles;
  });
  let best = 0;
  for (const run of [1, 2, 4]) {
    for (let j0 = 0; j0 + run <= perStrip.length; j0++) {
      const heights: number[] = [];
      const mean = new Float64Array(slots + 1);
      for (const cell of perStrip[j0].keys()) {
        const prof = new Float64Array(slots + 1);
        let ok = true;
        for (let j = j0; j < j0 + run && ok; j++) {
          const p = perStrip[j].get(cell);
          if (!p) ok = false;
          else for (let i = 1; i < slots; i++) prof[i] += p[i] / run;
        }
        if (!ok) continue;
        let h = 0;
        for (let i = 1; i < d; i++) h += prof[4 * i] - 0.5 * (prof[4 * i - 2] + prof[4 * i + 2]);
        heights.push(h / (d - 1));
        for (let i = 1; i < slots; i++) mean[i] += prof[i];
      }
      if (heights.length < 4) continue;
      let shaped = true;
      for (let i = 1; i < d; i++) if (!(mean[4 * i] >= mean[4 * i - 1] && mean[4 * i] >= mean[4 * i + 1])) shaped = false;
      if (!shaped) continue;
      const H = heights.reduce((x, y) => x + y, 0) / heights.length;
      const se = Math.sqrt(heights.reduce((x, y) => x + (y - H) ** 2, 0) / (heights.length - 1) / heights.length);
      if (H > 5 * se && H > 0.2 * amplitude) best = Math.max(best, H / Math.max(se, 1e-300));
    }
  }
  return best;
}

/**
 * The finest grid the ticks support: the found period divided by 2 or 5 (whichever finerTicks finds
 * more clearly) for as long as finer ticks show between the found ones.
 */
function finestDivisor(sp: StripProfiles, lines: StripLines[], fit: GridFit, seed: GridSeed): number {
  let divisor = 1;
  for (;;) {
    const P = fit.fit.p / divisor;
    // Only lines narrow beside their spacing are surely lines (broad ones may be the gaps of lines
    // whose polarity was misjudged, with the real lines between them).
    if (seed.lineWidthPx > 0.3 * P) break;
    let bestD = 1;
    let bestScore = 0;
    for (const d of [2, 5]) {
      if (P / d < MICROMETER_LIMITS.minPeriodPx) continue;
      const score = finerTicks(sp, lines, fit.fit.c0, P, fit.beta, d, seed.amplitude);
      if (score > bestScore) { bestScore = score; bestD = d; }
    }
    if (bestD === 1) break;
    divisor *= bestD;
  }
  return divisor;
}

/**
 * Whether the ticks found alternate in length, every second one longer, as the 5th and 10th ticks of
 * a micrometer do when the division ticks between them were not found: with 2 or more ticks at even
 * and at odd index, the longer group's mean is 30 % above the other's, and either every tick of it is
 * longer than every tick of the other by 15 % or (with 3 or more in each) the means differ by more
 * than 4 standard errors (Welch).
 */
function alternatingLengths(ticks: FittedTick[]): boolean {
  const even = ticks.filter((t) => t.used && t.index % 2 === 0).map((t) => t.lengthPx);
  const odd = ticks.filter((t) => t.used && t.index % 2 !== 0).map((t) => t.lengthPx);
  if (even.length < 2 || odd.length < 2) return false;
  const stat = (v: number[]) => {
    const m = v.reduce((a, b) => a + b, 0) / v.length;
    return { m, v: v.length > 1 ? v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1) / v.length : Infinity };
  };
  const a = stat(even), b = stat(odd);
  const [long, short] = a.m >= b.m ? [even, odd] : [odd, even];
  const lo = Math.min(a.m, b.m), hi = Math.max(a.m, b.m);
  if (!(hi > 1.3 * lo)) return false;
  const separated = Math.min(...long) > 1.15 * Math.max(...short);
  const welch = even.length >= 3 && odd.length >= 3 && hi - lo > 4 * Math.sqrt(a.v + b.v);
  return separated || welch;
}

interface Candidate { normalRad: number; sp: StripProfiles; lines: StripLines[]; seed: GridSeed; polarity: 'dark' | 'bright' }

/** First pass along one candidate normal: strips, polarity, and the reference strip's grid. */
function firstPass(p: Plane, normalRad: number, widthPx: number, polarityOption: 'auto' | 'dark' | 'bright'): Candidate | null {
  const sp = stripProfiles(p, normalRad, widthPx, 0.5);
  const polarity = polarityOption === 'auto' ? polarityOf(sp) : polarityOption;
  const lines = stripLines(sp, polarity === 'dark' ? -1 : 1, 1);
  const seed = reference(sp, lines, polarity);
  return seed ? { normalRad, sp, lines, seed, polarity } : null;
}

const noRuler = () => new InputError('no ruler found: no strip of the image shows 5 or more lines on a regular grid',
  'Image a stage micrometer with its ticks in focus and at least 5 divisions in view');

/** Median extent of the ticks along their length, px (from the strips that measured each tick). */
function medianTickLengthPx(points: Point[], stripWidthPx: number): number {
  const range = new Map<number, [number, number]>();
  for (const p of points) {
    const r = range.get(p.m);
    if (!r) range.set(p.m, [p.t, p.t]);
    else { r[0] = Math.min(r[0], p.t); r[1] = Math.max(r[1], p.t); }
  }
  return median([...range.values()].map(([lo, hi]) => hi - lo + stripWidthPx));
}

/**
 * Fits the tick grid of a stage-micrometer image (see the file's description).
 * @throws InputError when no regular ruler is found, or its period is below the resolvable limit.
 */
export function fitTickGrid(p: Plane, options: TickGridOptions = {}): TickGrid {
  const polarityOption = options.polarity ?? 'auto';
  // Candidate normals: both axes of the edges.
  const axes = rulerAxes(p);
  const normals = [axes.axisRad, axes.axisRad + Math.PI / 2];
  let best: Candidate | null = null;
  for (const widthPx of [1, 2, 4].map((f) => f * MICROMETER_LIMITS.stripWidthPx)) {
    for (const normal of normals) {
      // The axis whose period is best supported by the strips (the ticks, not pixel-level ripples along them).
      const c = firstPass(p, normal, widthPx, polarityOption);
      if (c && (!best || c.seed.support > best.seed.support)) best = c;
    }
    if (best) break;
  }
  if (!best) throw noRuler();
  const P1 = best.seed.periodPx;
  if (P1 < MICROMETER_LIMITS.minPeriodPx) {
    throw new InputError(`the ruler's lines are only ${P1.toFixed(1)} px apart, too close to locate`,
      `Image the micrometer at a higher magnification (${MICROMETER_LIMITS.minPeriodPx} px or more per division)`);
  }
  let firstPoints = trackPoints(best.sp, best.lines, best.seed).points;
  let first = gridFromPoints(firstPoints, best.sp.widthPx);
  if (!first) throw noRuler();
  // Ticks too faint to find one by one (short ticks in a noisy image) may still show between the
  // longer ones: then the divisions are counted at the finer pitch.
  const divisor = finestDivisor(best.sp, best.lines, first, best.seed);
  if (divisor > 1) {
    best.seed = { ...best.seed, periodPx: best.seed.periodPx / divisor };
    firstPoints = trackPoints(best.sp, best.lines, best.seed).points;
    first = gridFromPoints(firstPoints, best.sp.widthPx);
    if (!first) throw noRuler();
  }
  // Second pass along the corrected normal with the period known: sampled finely enough for the
  // period, with strips wide enough that each sees the ticks at 30 times their noise but no longer
  // than half the typical tick.
  const normal = best.normalRad - Math.atan(first.beta);
  const P2 = first.fit.p / Math.sqrt(1 + first.beta * first.beta);
  const snr = best.seed.amplitude / Math.max(1e-12, best.lines[best.seed.strip].noiseSd);
  const longest = Math.max(best.sp.widthPx, 0.5 * medianTickLengthPx(firstPoints, best.sp.widthPx));
  const widthPx = Math.round(Math.min(32, longest, Math.max(best.sp.widthPx, best.sp.widthPx * (30 / snr) ** 2)));
  // Step: at most 0.5 px and a sixth of the line width, and never a whole fraction of the period (the
  // lines then sit at every sub-sample phase instead of all at one).
  const stepPx = P2 / (Math.ceil(P2 / Math.max(0.05, Math.min(0.5, best.seed.lineWidthPx / 6))) + 0.382);
  const sp = stripProfiles(p, normal, widthPx, stepPx);
  const lines = stripLines(sp, best.polarity === 'dark' ? -1 : 1, Math.max(1, (0.25 * best.seed.lineWidthPx) / stepPx));
  const seed = seedForPeriod(sp, lines, P2);
  const tracked = seed ? trackPoints(sp, lines, seed) : null;
  const g = (tracked && gridFromPoints(tracked.points, sp.widthPx)) || null;
  const [fit, fitNormal, fitSp] = g ? [g, normal, sp] : [first, best.normalRad, best.sp];
  if (!Number.isFinite(fit.betaStdErr)) {
    throw new InputError('the ticks\' direction cannot be measured: each tick was found in one strip only (ticks too short or too faint)',
      'Image the micrometer with more contrast or more pixels per division');
  }
  if (divisor === 1 && alternatingLengths(fit.ticks)) {
    throw new InputError('the ticks found alternate in length, like the 5th and 10th ticks of a micrometer: the division ticks ' +
      'between them were too faint or blurred to find, so the divisions cannot be counted',
    'Image the micrometer with more contrast, sharper focus or more pixels per division');
  }
  const finalNormal = fitNormal - Math.atan(fit.beta);
  const cosD = 1 / Math.sqrt(1 + fit.beta * fit.beta);
  const used = fit.ticks.filter((t) => t.used);
  const lo = used[0].index;
  const hi = used[used.length - 1].index;
  return {
    normalRad: finalNormal, normalStdErrRad: fit.betaStdErr, periodPx: fit.fit.p * cosD, periodStdErrPx: fit.fit.se * cosD,
    dof: used.length - 2, directionStdErrPx: Math.abs(fit.tSlope) * fit.betaStdErr * cosD, directionDof: fit.betaDof,
    ticks: fit.ticks, lines: used.length, divisions: hi - lo, rmsResidualPx: fit.fit.rms * cosD,
    rejectedLines: fit.ticks.filter((t) => !t.used).length,
    missingLines: hi - lo + 1 - fit.ticks.filter((t) => t.index >= lo && t.index <= hi).length,
    pointScatterPx: fit.pointScatterPx, points: fit.points, stripWidthPx: fitSp.widthPx, polarity: best.polarity,
    countedFromLongerTicks: divisor > 1, offGridFraction: g && tracked ? Math.max(0, 1 - g.points / Math.max(1, tracked.lineLike)) : 0,
  };
}
