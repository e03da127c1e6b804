import { giveBack, InputError, takeInt32 } from '../common/index.ts';
import { AXIS_DEG_LIMIT, checkLimit, type Limit } from '../common/index.ts';
import { degToRad, radToDeg, wrapAxialDeg } from '../common/index.ts';
import { combineUncertainties } from '../common/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import { foldEdgeMap, foldMod90, FOLD_EDGE_DEG, FOLD_EDGE_MAX_SHARE } from '../orientation/index.ts';
import { angleNoiseFactor } from '../optics/index.ts';
import {
  accumulateBlocks, axisOrderStat, blockCorrelation, checkWeighting, concatBlocks, defaultBlockPx, defaultWeighting, fiellerInterval, totalMoments, BLOCK_PX_LIMIT,
  type BlockCorrelation, type BlockSums, type OrderStat, type Weighting,
} from '../order/index.ts';
import { channelFrame, transverse, transverseLinear, type Channel, type ChannelFrame } from './geometry.ts';

export interface ProfileOptions {
  /** Bins across the width, s from -1 to 1. Default 20. */
  bins?: number;
  /** Stations along the channel axis (equal lengths). Default 1. */
  stations?: number;
  /** Reference axis for S_axis in degrees; default the channel axis (wall bisector). */
  axisDeg?: number;
  /** Core band |s| < coreMax. Default 0.5. */
  coreMax?: number;
  /** Skin band |s| > skinMin. Default 0.8. */
  skinMin?: number;
  weighting?: Weighting;
  blockPx?: number;
}

/** Defaults and ranges of the profile's options (docs/methods.md §10.3-10.4). */
export const PROFILE_LIMITS = {
  bins: { what: 'bins', min: 2, max: 200, default: 20, integer: true },
  stations: { what: 'stations', min: 1, max: 100, default: 1, integer: true },
  coreMax: { what: 'core band limit', min: 0.05, max: 1, default: 0.5 },
  skinMin: { what: 'skin band limit', min: 0, max: 0.99, default: 0.8 },
} as const satisfies Record<string, Limit>;

export const PROFILE_DEFAULTS = {
  bins: PROFILE_LIMITS.bins.default, stations: PROFILE_LIMITS.stations.default, coreMax: PROFILE_LIMITS.coreMax.default, skinMin: PROFILE_LIMITS.skinMin.default,
};

/**
 * Largest share of a bin's or band's pixels that may be clipped (an input image at full scale) for its S to
 * be given. Which pixels clip depends on their angle (a colour at full scale belongs to some angles and not
 * others), so leaving them out biases S; on the independent validation renderings, two-image readings with 6 %
 * and 22 % of the channel clipped missed S by 0.11 and 0.06 in the worst bin, and met 0.03 without clipping.
 */
export const CLIPPED_SHARE_LIMIT = 0.01;

/**
 * Largest loss of S from an angle series' angle noise for a bin's or band's S to be given: 1 - the mean over its
 * usable pixels of angleNoiseFactor (src/optics/fourAngle.ts), the share by which noise shrinks cos 2(theta - axis),
 * so S read low by at most this for any S up to 1 (the channel goal, 0.03). On the independent validation renderings
 * at 30 nm sample retardance (amplitude about 3 % of full scale) the mean factor was 0.96 and bins read up to 0.064
 * low; at 60 nm it is above 0.99.
 */
export const ANGLE_NOISE_MAX_LOSS = 0.03;

/** What would give S where an angle series' angle noise withholds it (bins, bands and the whole image alike). */
export const ANGLE_NOISE_REMEDY = 'average more frames per polariser angle or expose longer (below full scale), or read a sample of higher retardance';
/**
 * What would give S where an angle series' 90-deg choice is unsettled near the fold's boundary. Only an angle series
 * with a compensator image and its sample-free area gets that far (without either it gives no S at all), so the
 * remedy is a reading whose colours settle the slow axis everywhere.
 */
export const FOLD_EDGE_REMEDY = 'read the sample with two compensator images (plate-pair), whose colours settle the slow axis at every angle';

export interface ProfileBin extends OrderStat {
  /** Bin centre and edges in s. */
  s: number;
  sLow: number;
  sHigh: number;
  /** Free 2D order and director in the bin (no reference axis). */
  order2D: number;
  directorDeg: number;
}

export interface BandStats {
  bins: ProfileBin[];
  core: OrderStat;
  skin: OrderStat;
  /**
   * core.order / skin.order with its Fieller interval; NaN (null in JSON) when the skin's order is not
   * clearly away from 0, so that no ratio is determined.
   */
  coreSkinRatio: number;
  /** 95 % interval of the ratio (Fieller); NaN when the ratio is not determined. */
  coreSkinRatioCiLow: number;
  coreSkinRatioCiHigh: number;
}

export interface StationProfile extends BandStats {
  station: number;
  alongFromPx: number;
  alongToPx: number;
  /** Local channel width at the station centre, px. */
  widthPx: number;
}

/**
 * Per bin and per band (core, skin): pixels between the walls and how many of them are clipped; usable pixels and
 * how many of them a mod-90 fold leaves near its boundary (foldEdge).
 */
interface GroupCount { total: number; clipped: number; usable: number; foldEdge: number; noiseFactor: number }
interface ClipCounts { bins: GroupCount[]; core: GroupCount; skin: GroupCount }

export interface ChannelProfile extends BandStats {
  axisDeg: number;
  channelAxisDeg: number;
  taperDeg: number;
  stations: StationProfile[];
  options: { bins: number; stations: number; coreMax: number; skinMin: number; weighting: Weighting; blockPx: number; axisDeg: number };
  warnings: string[];
  /** Numbers withheld and why (here: groups with too many clipped pixels). */
  notDetermined?: Record<string, string>;
}

/**
 * Axis-referenced order S_axis = <cos 2(theta - axis)> in bins of the transverse coordinate s, at
 * stations along the channel, with core and skin bands and their ratio (docs/methods.md §10.3-10.4). Intervals
 * are 95 % intervals over blocks (defaultBlockPx, src/order/intervals.ts).
 */
export function channelProfile(field: OrientationField, ch: Channel, options: ProfileOptions = {}): ChannelProfile {
  const bins = checkLimit(PROFILE_LIMITS.bins, options.bins);
  const stations = checkLimit(PROFILE_LIMITS.stations, options.stations);
  const coreMax = checkLimit(PROFILE_LIMITS.coreMax, options.coreMax);
  const skinMin = checkLimit(PROFILE_LIMITS.skinMin, options.skinMin);
  if (skinMin < coreMax) throw new InputError(`skin band (|s| > ${skinMin}) overlaps the core band (|s| < ${coreMax})`, 'Set the skin limit at or above the core limit');
  const weighting = checkWeighting(options.weighting ?? defaultWeighting(field));
  const blockPx = checkLimit(BLOCK_PX_LIMIT, options.blockPx ?? defaultBlockPx(field));
  const frame = channelFrame(ch);
  const axisDeg = options.axisDeg !== undefined ? wrapAxialDeg(checkLimit(AXIS_DEG_LIMIT, options.axisDeg)) : frame.axisDeg;
  // A field known only modulo 90 deg is read under the assumption that rods lie within 45 deg of the axis.
  const f = foldMod90(field, axisDeg);

  const { width, height } = f;
  // Pooled (a 12 MP image's two tables are 96 MB of fresh pages otherwise), handed back once summed.
  const binGroups = takeInt32(width * height, false).fill(-1);
  const bandGroups = takeInt32(width * height, false).fill(-1);
  const span = frame.alongMax - frame.alongMin;
  const L = transverseLinear(frame, ch);
  const sBins = bins / 2, sStations = stations / span;
  const clippedMap = field.clipped ?? null;
  // Pixels a mod-90 fold may have put on the wrong side of the axis (foldEdgeMap): too many of them in a group and
  // its S is not determined.
  const edgeMap = foldEdgeMap(f);
  // An angle series' angle noise (angleNoiseFactor): summed over each group's usable pixels.
  const noiseGain = (f.options as { angleNoiseGain?: number | null }).angleNoiseGain;
  const gain = f.method === 'angle-series' && typeof noiseGain === 'number' ? noiseGain : null;
  const counted = clippedMap !== null || edgeMap !== null || gain !== null;
  const zero = (): GroupCount => ({ total: 0, clipped: 0, usable: 0, foldEdge: 0, noiseFactor: 0 });
  const newCounts = (): ClipCounts => ({ bins: Array.from({ length: bins }, zero), core: zero(), skin: zero() });
  const clipCounts = Array.from({ length: stations }, newCounts);
  for (let y = 0; y < height; y++) {
    let t0 = L.t0.c + L.t0.cy * y, t1 = L.t1.c + L.t1.cy * y, al = L.along.c + L.along.cy * y;
    for (let x = 0; x < width; x++, t0 += L.t0.cx, t1 += L.t1.cx, al += L.along.cx) {
      const i = y * width + x;
      const s = -1 - (2 * t0) / (t1 - t0);
      if (!(s >= -1 && s <= 1) || al < frame.alongMin || al > frame.alongMax) continue;
      const st = Math.min(stations - 1, Math.floor((al - frame.alongMin) * sStations));
      const b = Math.min(bins - 1, Math.floor((s + 1) * sBins));
      const a = Math.abs(s);
      const band = a < coreMax ? 0 : a > skinMin ? 1 : -1;
      if (counted) {
        const c = clipCounts[st], hit = clippedMap ? clippedMap[i] : 0, live = f.mask[i] ? 1 : 0, edge = edgeMap ? edgeMap[i] : 0;
        const kept = live && gain !== null ? angleNoiseFactor(f.confidence[i], gain) : live;
        tally(c.bins[b], hit, live, edge, kept);
        if (band === 0) tally(c.core, hit, live, edge, kept); else if (band === 1) tally(c.skin, hit, live, edge, kept);
      }
      if (!f.mask[i]) continue;
      binGroups[i] = st * bins + b;
      bandGroups[i] = band < 0 ? -1 : st * 2 + band;
    }
  }
  const refRad = degToRad(axisDeg);
  const binSums = accumulateBlocks(f, { groups: binGroups, groupCount: stations * bins, refRad, blockPx, weighting });
  const bandSums = accumulateBlocks(f, { groups: bandGroups, groupCount: stations * 2, refRad, blockPx, weighting }).map((b) => withStrata(b, L, blockPx, bins));
  giveBack(binGroups, bandGroups);
  // One correlation of the block errors for the whole profile, from every bin's blocks (docs/methods.md §9.3).
  const rho = blockCorrelation(binSums.map((b) => ({ ys: [b.wc], b })));

  const stationList: StationProfile[] = [];
  const withheld: Withheld = { clipped: [], foldEdge: [], noise: [] };
  for (let st = 0; st < stations; st++) {
    const from = frame.alongMin + (span * st) / stations, to = frame.alongMin + (span * (st + 1)) / stations;
    const mid = (from + to) / 2;
    const w = transverse(frame, ch, frame.ox + mid * frame.ux, frame.oy + mid * frame.uy).width;
    stationList.push({
      station: st, alongFromPx: from, alongToPx: to, widthPx: w,
      ...bandStats(binSums.slice(st * bins, st * bins + bins), bandSums[st * 2], bandSums[st * 2 + 1], bins, axisDeg, counted ? clipCounts[st] : null, stations > 1 ? `station ${st} ` : '', withheld, rho),
    });
  }
  // One station is the whole channel: its numbers are the profile's. Several are pooled bin by bin and band by band.
  const only = stations === 1 ? stationList[0] : null;
  const across = (pick: (st: number) => BlockSums) => concatBlocks(Array.from({ length: stations }, (_, st) => pick(st)));
  const pooled: BandStats = only
    ? { bins: only.bins, core: only.core, skin: only.skin, coreSkinRatio: only.coreSkinRatio, coreSkinRatioCiLow: only.coreSkinRatioCiLow, coreSkinRatioCiHigh: only.coreSkinRatioCiHigh }
    : bandStats(Array.from({ length: bins }, (_, b) => across((st) => binSums[st * bins + b])), across((st) => bandSums[st * 2]), across((st) => bandSums[st * 2 + 1]),
      bins, axisDeg, counted ? pooledCounts(clipCounts) : null, '', withheld, rho);
  if (pooled.core.n === 0 && pooled.skin.n === 0 && pooled.bins.every((b) => b.n === 0)) {
    throw new InputError('no usable pixel lies between the walls', 'Check that the walls are inside the image and that the channel has texture or colour to read');
  }
  const warnings = [...f.warnings];
  if (pooled.core.n === 0) warnings.push('no usable pixels in the core band: check the walls and the mask');
  if (pooled.skin.n === 0) warnings.push('no usable pixels in the skin band: check the walls and the mask');
  if (Math.abs(wrapAxialDeg(axisDeg - frame.axisDeg)) > 1e-9 && options.axisDeg !== undefined) {
    warnings.push(`S is referenced to ${axisDeg.toFixed(1)} deg, not to the channel axis at ${frame.axisDeg.toFixed(1)} deg`);
  }
  return {
    ...pooled, axisDeg, channelAxisDeg: frame.axisDeg, taperDeg: frame.taperDeg, stations: stationList,
    options: { bins, stations, coreMax, skinMin, weighting, blockPx, axisDeg }, warnings,
    ...(withheld.clipped.length || withheld.foldEdge.length || withheld.noise.length ? {
      notDetermined: {
        ...(withheld.clipped.length ? { clipped: clippedReason(withheld.clipped) } : {}),
        ...(withheld.foldEdge.length ? { mod90: foldEdgeReason(withheld.foldEdge, axisDeg) } : {}),
        ...(withheld.noise.length ? { angleNoise: angleNoiseReason(withheld.noise) } : {}),
      },
    } : {}),
  };
}

/** Adds one pixel between the walls to a group's counts (no array per pixel: this runs for every pixel of the channel). */
function tally(g: GroupCount, clipped: number, usable: number, foldEdge: number, noiseFactor: number): void {
  g.total++; g.clipped += clipped; g.usable += usable; g.foldEdge += foldEdge; g.noiseFactor += noiseFactor;
}

/** Groups whose S is withheld, with their shares, by cause. */
interface Withheld { clipped: string[]; foldEdge: string[]; noise: string[] }

const someOf = (list: string[]) => (list.length > 6 ? `${list.slice(0, 6).join(', ')} and ${list.length - 6} more` : list.join(', '));

/** Why clipped groups have no S, naming them (the first few) with their clipped shares. */
function clippedReason(withheld: string[]): string {
  return `S not given where more than ${100 * CLIPPED_SHARE_LIMIT} % of the pixels are at full scale in an image (${someOf(withheld)} clipped): which pixels clip depends on their angle, so the rest would give a biased S. Lower the exposure or the lamp so that no colour reaches full scale, and take the images again`;
}

/** Why groups of a mod-90 field have no S, naming them (the first few) with their shares near the fold's boundary. */
function foldEdgeReason(withheld: string[], axisDeg: number): string {
  return `S not given where more than ${100 * FOLD_EDGE_MAX_SHARE} % of the usable pixels, still undecided between a slow axis and the one at 90 deg to it, lie within ${FOLD_EDGE_DEG} deg of 45 deg from the axis (${axisDeg.toFixed(1)} deg) (${someOf(withheld)}): some of them lie beyond it and are read on the wrong side, so S would read high. To decide them, ${FOLD_EDGE_REMEDY}`;
}

/** Why groups of an angle series have no S, naming them (the first few) with the share of S their angle noise takes. */
function angleNoiseReason(withheld: string[]): string {
  return `S not given where the angle series' angle noise (the images' noise against the amplitude of their modulation) reads S low by more than ${ANGLE_NOISE_MAX_LOSS} (${someOf(withheld)} of S lost): the sample's retardance gives too little modulation for this noise. To read it, ${ANGLE_NOISE_REMEDY}`;
}

function pooledCounts(list: ClipCounts[]): ClipCounts {
  const add = (a: GroupCount, b: GroupCount): GroupCount => ({ total: a.total + b.total, clipped: a.clipped + b.clipped, usable: a.usable + b.usable, foldEdge: a.foldEdge + b.foldEdge, noiseFactor: a.noiseFactor + b.noiseFactor });
  return list.reduce((p, c) => ({ bins: p.bins.map((b, k) => add(b, c.bins[k])), core: add(p.core, c.core), skin: add(p.skin, c.skin) }));
}

/**
 * A statistic withheld (order and interval NaN) when more than CLIPPED_SHARE_LIMIT of its pixels are clipped, more
 * than FOLD_EDGE_MAX_SHARE of its usable pixels lie near a mod-90 fold's boundary, or an angle series' angle noise takes
 * more than ANGLE_NOISE_MAX_LOSS of S; the group's name and share go to `withheld` under the cause.
 */
function unlessUnread<T extends OrderStat>(stat: T, count: GroupCount | undefined, name: string, withheld: Withheld): T {
  if (!count) return stat;
  const clipped = count.total > 0 && count.clipped > CLIPPED_SHARE_LIMIT * count.total;
  const edge = count.usable > 0 && count.foldEdge > FOLD_EDGE_MAX_SHARE * count.usable;
  const loss = count.usable > 0 ? 1 - count.noiseFactor / count.usable : 0, noisy = loss > ANGLE_NOISE_MAX_LOSS;
  if (clipped) withheld.clipped.push(`${name} ${((100 * count.clipped) / count.total).toFixed(0)} %`);
  if (edge) withheld.foldEdge.push(`${name} ${((100 * count.foldEdge) / count.usable).toFixed(0)} %`);
  if (noisy) withheld.noise.push(`${name} ${(100 * loss).toFixed(1)} %`);
  return clipped || edge || noisy ? { ...stat, order: NaN, ciLow: NaN, ciHigh: NaN } : stat;
}

function bandStats(binSums: BlockSums[], core: BlockSums, skin: BlockSums, bins: number, axisDeg: number, clip: ClipCounts | null, where: string, withheld: Withheld, rho: BlockCorrelation): BandStats {
  const list: ProfileBin[] = binSums.map((b, k) => {
    const m = totalMoments(b);
    const sLow = -1 + (2 * k) / bins, sHigh = -1 + (2 * (k + 1)) / bins;
    const stat = unlessUnread(axisOrderStat(b, rho), clip?.bins[k], `${where}bin ${k}`, withheld);
    const given = Number.isFinite(stat.order) && m.w > 0;
    return {
      s: (sLow + sHigh) / 2, sLow, sHigh, ...stat,
      order2D: given ? Math.hypot(m.wc, m.ws) / m.w : NaN,
      directorDeg: given ? wrapAxialDeg(axisDeg + radToDeg(0.5 * Math.atan2(m.ws, m.wc))) : NaN,
    };
  });
  const c = unlessUnread(axisOrderStat(core, rho), clip?.core, `${where}core`, withheld);
  const s = unlessUnread(axisOrderStat(skin, rho), clip?.skin, `${where}skin`, withheld);
  // Core and skin are different pixels, blocks apart: their estimates are taken as independent. The
  // degrees of freedom of a - R b at the estimated ratio by Welch-Satterthwaite (GUM G.4.1).
  const ratio = c.order / s.order;
  const { dof } = combineUncertainties([{ u: c.se, dof: c.dof }, { u: Math.abs(ratio) * s.se, dof: s.dof }]);
  const ratioCi = fiellerInterval(c.order, c.se, s.order, s.se, dof);
  return {
    bins: list, core: c, skin: s,
    coreSkinRatio: ratioCi ? ratio : NaN,
    coreSkinRatioCiLow: ratioCi ? ratioCi[0] : NaN, coreSkinRatioCiHigh: ratioCi ? ratioCi[1] : NaN,
  };
}

/** Most strata a band's variance keeps apart (neighbouring bins share one beyond that): its cost grows as their square. */
const MAX_STRATA = 16;

/**
 * A band's blocks with their strata: each block in the bin of its cell's centre, so that
 * the band's variance takes residuals about each bin's own ratio and does not count the order's change across the
 * band as noise (src/order/intervals.ts); neighbouring bins share a stratum beyond MAX_STRATA.
 */
function withStrata(b: BlockSums, L: ReturnType<typeof transverseLinear>, blockPx: number, bins: number): BlockSums {
  const m = b.n.length, binOf = new Int32Array(m);
  for (let k = 0; k < m; k++) {
    const x = (b.bx[k] + 0.5) * blockPx - 0.5, y = (b.by[k] + 0.5) * blockPx - 0.5;
    const t0 = L.t0.c + L.t0.cx * x + L.t0.cy * y, t1 = L.t1.c + L.t1.cx * x + L.t1.cy * y;
    const s = -1 - (2 * t0) / (t1 - t0);
    binOf[k] = Math.max(0, Math.min(bins - 1, Math.floor(((s + 1) * bins) / 2)));
  }
  // The strata are the bins the band's cell centres fall in, numbered in order across the channel.
  const used = new Uint8Array(bins);
  for (let k = 0; k < m; k++) if (b.n[k] > 0) used[binOf[k]] = 1;
  const rank = new Int32Array(bins);
  let count = 0;
  for (let i = 0; i < bins; i++) { rank[i] = count; count += used[i]; }
  const H = Math.min(MAX_STRATA, Math.max(1, count));
  const strata = Int32Array.from(binOf, (bin) => Math.floor((rank[bin] * H) / Math.max(1, count)));
  return { ...b, strata };
}

export type { ChannelFrame };
