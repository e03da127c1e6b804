/**
 * Per-bin truth of a rendering for a bins x stations layout, computed from the construction: for the
 * pixels whose centre lies between the two wall segments (transverse coordinate s in [-1, 1], along-axis
 * coordinate within the stretch both segments cover), bin k holds s in [-1 + 2k/bins, -1 + 2(k+1)/bins)
 * (s = 1 in the last bin). Two truths per bin:
 * - realised: the mean of cos 2(theta - axis) over the bin's pixels, theta = the rendered director;
 * - ensemble: the mean over the same pixels of E[cos 2(theta - axis)] = cos 2(mean - axis) S(s), what the
 *   material's order is, of which this rendering is one draw. Intervals that account for the spatial
 *   correlation of the pixels are statements about this value, so coverage is counted against it.
 * Core |s| < coreMax, skin |s| > skinMin; the core/skin ratio of either truth is the ratio of the means.
 */
import { transverseS, wallFrame, type Segment } from './geometry.ts';
import type { SceneTruth } from './scene.ts';

export interface TruthValue { realised: number; ensemble: number; n: number }

export interface BandTruth {
  bins: (TruthValue & { sLow: number; sHigh: number })[];
  core: TruthValue;
  skin: TruthValue;
  ratio: { realised: number; ensemble: number };
}

export interface ProfileTruth extends BandTruth {
  axisDeg: number;
  stations: BandTruth[];
}

export interface Layout { bins: number; stations?: number; coreMax?: number; skinMin?: number; axisDeg?: number }

class Acc {
  r = 0; e = 0; n = 0;
  add(r: number, e: number) { this.r += r; this.e += e; this.n++; }
  value(): TruthValue { return { realised: this.n ? this.r / this.n : NaN, ensemble: this.n ? this.e / this.n : NaN, n: this.n }; }
}

function band(bins: Acc[], core: Acc, skin: Acc): BandTruth {
  const c = core.value(), s = skin.value();
  return {
    bins: bins.map((b, k) => ({ ...b.value(), sLow: -1 + (2 * k) / bins.length, sHigh: -1 + (2 * (k + 1)) / bins.length })),
    core: c, skin: s, ratio: { realised: c.realised / s.realised, ensemble: c.ensemble / s.ensemble },
  };
}

/** Truth of a channel profile between `walls` (default: the true visible walls). */
export function profileTruth(t: SceneTruth, width: number, layout: Layout, walls: [Segment, Segment] | null = t.walls): ProfileTruth {
  if (!walls) throw new Error('profile truth needs two walls');
  const f = wallFrame(walls);
  const axisDeg = layout.axisDeg ?? f.axisDeg;
  const ref = (axisDeg * Math.PI) / 180;
  const nb = layout.bins, ns = layout.stations ?? 1, coreMax = layout.coreMax ?? 0.5, skinMin = layout.skinMin ?? 0.8;
  const mk = (k: number) => Array.from({ length: k }, () => new Acc());
  const bins = mk(nb * ns), cores = mk(ns), skins = mk(ns), pooledBins = mk(nb), core = new Acc(), skin = new Acc();
  const span = f.alongMax - f.alongMin;
  const height = t.thetaRad.length / width;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const { s, along } = transverseS(f, x, y);
      if (!(s >= -1 && s <= 1) || along < f.alongMin || along > f.alongMax) continue;
      const i = y * width + x;
      const r = Math.cos(2 * (t.thetaRad[i] - ref));
      const e = Math.cos(2 * (t.meanRad[i] - ref)) * t.orderS[i];
      const st = Math.min(ns - 1, Math.floor(((along - f.alongMin) / span) * ns));
      const b = Math.min(nb - 1, Math.floor(((s + 1) * nb) / 2));
      bins[st * nb + b].add(r, e); pooledBins[b].add(r, e);
      const a = Math.abs(s);
      if (a < coreMax) { cores[st].add(r, e); core.add(r, e); } else if (a > skinMin) { skins[st].add(r, e); skin.add(r, e); }
    }
  }
  return {
    axisDeg, ...band(pooledBins, core, skin),
    stations: Array.from({ length: ns }, (_, st) => band(bins.slice(st * nb, st * nb + nb), cores[st], skins[st])),
  };
}

/** Truth of whole-image order: free S_2D = |<exp 2i theta>| and S_axis about `axisDeg`, realised and ensemble. */
export function wholeImageTruth(t: SceneTruth, axisDeg: number): { order2D: TruthValue; axisOrder: TruthValue } {
  let rc = 0, rs = 0, ec = 0, es = 0;
  const n = t.thetaRad.length;
  for (let i = 0; i < n; i++) {
    rc += Math.cos(2 * t.thetaRad[i]); rs += Math.sin(2 * t.thetaRad[i]);
    ec += Math.cos(2 * t.meanRad[i]) * t.orderS[i]; es += Math.sin(2 * t.meanRad[i]) * t.orderS[i];
  }
  const a = (axisDeg * Math.PI) / 180, c2 = Math.cos(2 * a), s2 = Math.sin(2 * a);
  return {
    order2D: { realised: Math.hypot(rc, rs) / n, ensemble: Math.hypot(ec, es) / n, n },
    axisOrder: { realised: (rc * c2 + rs * s2) / n, ensemble: (ec * c2 + es * s2) / n, n },
  };
}

/**
 * The truth a reading known only modulo 90 deg determines when every rod is taken within 45 deg of `axisDeg`
 * (crossed polarisers alone cannot tell an axis from the one at 90 deg to it): each director folded into
 * (axis - 45, axis + 45] deg, so cos 2(folded - axis) = |cos 2(theta - axis)|. Realised: the rendered directors
 * folded. Ensemble: E|cos 2(m + sigma z)| over a standard normal z (m = mean director - axis, sigma from the
 * pixel's S by exp(-2 sigma^2) = S, as the scene draws it), by the midpoint rule on z in [-8, 8] (400 steps;
 * the tails beyond hold < 1e-15). Returned as a SceneTruth whose mean director is the axis and whose S is that
 * expectation, so profileTruth reads both truths of the folded field.
 */
export function mod90Truth(t: SceneTruth, axisDeg: number): SceneTruth {
  const ref = (axisDeg * Math.PI) / 180, n = t.thetaRad.length, q = Math.PI / 4;
  const thetaRad = new Float32Array(n), meanRad = new Float32Array(n).fill(ref), orderS = new Float32Array(n);
  const cache = new Map<string, number>();
  const STEPS = 400, Z = 8, dz = (2 * Z) / STEPS;
  const expectation = (m: number, S: number) => {
    const key = `${m.toFixed(5)} ${S.toFixed(6)}`;
    const hit = cache.get(key);
    if (hit !== undefined) return hit;
    const sigma = Math.sqrt(-Math.log(Math.max(S, 1e-12)) / 2);
    let sum = 0, wsum = 0;
    for (let k = 0; k < STEPS; k++) {
      const z = -Z + (k + 0.5) * dz, w = Math.exp(-0.5 * z * z);
      sum += w * Math.abs(Math.cos(2 * (m + sigma * z))); wsum += w;
    }
    cache.set(key, sum / wsum);
    return sum / wsum;
  };
  for (let i = 0; i < n; i++) {
    let d = t.thetaRad[i] - ref;
    d -= (Math.PI / 2) * Math.round(d / (Math.PI / 2));
    if (d <= -q) d += Math.PI / 2;
    thetaRad[i] = ref + d;
    orderS[i] = expectation(t.meanRad[i] - ref, t.orderS[i]);
  }
  return { ...t, thetaRad, meanRad, orderS };
}
