/**
 * Seeded renderings of spinneret-channel images with their truth by construction, for the validation
 * suite (tests/validation/channel.ts). Independent of the project's demo and optics code: its own random
 * numbers, geometry, streak texture and spectral maths (./spectral.ts).
 *
 * A scene: a channel (two straight inner walls, possibly tapering, cut by the frame) whose ordered interior
 * has the director theta(x, y) = local axis + delta(x, y); delta = sigma(s) g(x, y), with g a stationary
 * unit-variance Gaussian field of correlation length L (./filters.ts) and sigma(s) set by the wanted order
 * profile S(s) through E[cos 2 delta] = exp(-2 sigma^2) (the characteristic function of a normal deviate).
 * Outside each wall: an optional bright edge, a band, then the background. Grey ("texture") images show
 * streaks along theta; colour images are the compensator colours of a linear retarder of retardance Gamma
 * and slow axis theta. Imaging: Gaussian PSF, smooth uneven illumination, shot and read noise, 8 or 16 bits.
 */
import type { Image } from '../../../src/image/types.ts';
import { Rng, streamSeed } from './rng.ts';
import { correlatedField, gaussBlur } from './filters.ts';
import { lineIntegralConvolution } from './texture.ts';
import { channelGeometry, clipLine, outsideDistance, transverseS, wallFrame, type Segment } from './geometry.ts';
import { ColourRenderer, crossedWithCompensator, srgbEncode, turnedTrain, type OpticalTrain } from './spectral.ts';

/** What lies just outside one inner wall. Grey images: levels are brightnesses in [0, 1]. Colour images:
 * `level` multiplies the sample-free compensator colour and `edgeLevel` is a grey (white light) level. */
export interface WallStyle {
  /** 'band': a band of `level`; 'bright-edge': `edgePx` of `edgeLevel`, then the band; 'none': straight into the background. */
  kind: 'band' | 'bright-edge' | 'none';
  thicknessPx: number;
  level: number;
  edgePx: number;
  edgeLevel: number;
}

/** Order profile S(s) = <cos 2 delta>: `core` for |s| <= 0.5, `skin` for |s| >= 0.8 (on the s < 0 side
 * `skinFirst` when given), linear in |s| between. Values in (0, 1]; 0 is taken as 1e-6 (isotropic). */
export interface OrderProfile { core: number; skin: number; skinFirst?: number }

export interface ChannelShape {
  /** Channel axis, degrees CCW on screen. */
  axisDeg: number;
  /** Interior width along the normal through the centre point, px. */
  widthPx: number;
  /** Full angle between the walls, degrees. */
  taperDeg: number;
  /** Centre point moved from the image centre along the normal towards the first wall, px. */
  offsetPx: number;
}

export interface SceneSpec {
  name: string;
  seed: number;
  /**
   * Seed of the random streak pattern (grain) and of the camera noise; the seed's own when absent. Renderings
   * that share `seed` and differ here show one director field through different streak patterns, which
   * separates what a texture reading gets wrong on average from the scatter of one pattern.
   */
  patternSeed?: number;
  width: number;
  height: number;
  /** null: the whole frame is interior (no walls), with the mean director at `directorDeg`. */
  channel: ChannelShape | null;
  directorDeg: number;
  walls: [WallStyle, WallStyle];
  background: {
    /**
     * Grey: isotropic streak texture or flat. Colour: isotropic birefringent texture, flat grey, or the
     * sample-free colour. 'interior': the ordered material simply continues (no visible wall at all).
     */
    kind: 'texture' | 'flat' | 'sample-free' | 'interior';
    /** Grey: mean brightness. Colour 'flat': grey level. */
    level: number;
    /** Grey texture: standard deviation of the brightness. */
    contrast: number;
    /** Colour texture: retardance of the isotropic material, nm. */
    retardanceNm: number;
  };
  order: OrderProfile;
  /** Correlation length of delta: corr(r) = exp(-r^2 / (2 L^2)), px. */
  corrLengthPx: number;
  source: 'texture' | 'colour';
  /** Grey interior: mean, standard deviation, streak half-length (LIC), grain (noise blur sigma) in px. */
  texture: { mean: number; contrast: number; streakHalfLengthPx: number; grainPx: number };
  optics: {
    /** Sample retardance Gamma, nm, and its relative smooth spread (0 = uniform). */
    retardanceNm: number;
    retardanceSpread: number;
    compensatorNm: number;
    lampK: number;
    /**
     * Camera exposure: the white-balanced open beam reads this (linear). Default 0.8: a half-wave colour (the
     * brightest a crossed pair passes) then stays below full scale, as a careful user sets it; 1 clips 4-26 %
     * of a channel at 165-300 nm.
     */
    exposure: number;
    /** Relative brightness modulation by the streak texture (0 = none). */
    streakContrast: number;
    /** Also render the second image of a pair, the polariser-compensator-analyser assembly turned by this (deg); null = none. */
    turnDeg: number | null;
    /**
     * Also render an angle series: one image per angle (deg) between crossed polarisers with no compensator,
     * polariser at the angle and analyser at the angle + 90 (turned together); null = none. Image A (the
     * compensator image) is then the series' compensator image.
     */
    seriesDeg: number[] | null;
  };
  imaging: {
    psfSigmaPx: number;
    /** Read noise, standard deviation in units of full scale (linear). */
    noiseSigma: number;
    /** Shot noise: electrons at full scale (0 = none). */
    fullWellElectrons: number;
    /** Illumination 1 + gx (x - xc)/w + gy (y - yc)/h ... */
    gradient: [number, number];
    /** ... times 1 - v r^2 / r_corner^2 (vignetting). */
    vignetting: number;
    bitDepth: 8 | 16;
  };
  /** False when the two walls cannot be told apart in the image (a refusal is then the right answer). */
  wallsDistinct: boolean;
}

export const BAND_WALL: WallStyle = { kind: 'band', thicknessPx: 20, level: 0.12, edgePx: 0, edgeLevel: 0 };

/** Defaults of every parameter; a case states what it changes. */
export const SCENE_DEFAULTS: SceneSpec = {
  name: 'default', seed: 1, width: 480, height: 360,
  channel: { axisDeg: 0, widthPx: 160, taperDeg: 0, offsetPx: 0 }, directorDeg: 0,
  walls: [BAND_WALL, BAND_WALL],
  background: { kind: 'texture', level: 0.55, contrast: 0.1, retardanceNm: 150 },
  order: { core: 0.8, skin: 0.5 },
  corrLengthPx: 16,
  source: 'texture',
  texture: { mean: 0.5, contrast: 0.12, streakHalfLengthPx: 30, grainPx: 0.6 },
  optics: { retardanceNm: 250, retardanceSpread: 0, compensatorNm: 550, lampK: 3200, exposure: 0.8, streakContrast: 0, turnDeg: null, seriesDeg: null },
  imaging: { psfSigmaPx: 0.8, noiseSigma: 0.01, fullWellElectrons: 0, gradient: [0, 0], vignetting: 0, bitDepth: 8 },
  wallsDistinct: true,
};

type DeepPartial<T> = { [K in keyof T]?: T[K] extends (infer U)[] ? Partial<U>[] : T[K] extends object | null ? DeepPartial<T[K]> | null : T[K] };

/** The defaults with the given changes (objects merged one level deep; `channel: null` kept). */
export function scene(changes: DeepPartial<SceneSpec>): SceneSpec {
  const d = SCENE_DEFAULTS;
  const c = changes as Partial<SceneSpec>;
  return {
    ...d, ...c,
    channel: c.channel === null ? null : { ...d.channel!, ...(c.channel ?? {}) },
    walls: (c.walls ?? d.walls).map((w) => ({ ...BAND_WALL, ...w })) as [WallStyle, WallStyle],
    background: { ...d.background, ...(c.background ?? {}) },
    order: { ...d.order, ...(c.order ?? {}) } as OrderProfile,
    texture: { ...d.texture, ...(c.texture ?? {}) },
    optics: { ...d.optics, ...(c.optics ?? {}) },
    imaging: { ...d.imaging, ...(c.imaging ?? {}) },
  };
}

/** Truth of a rendering, by construction. */
export interface SceneTruth {
  /** Visible inner walls (s = -1 at walls[0]), clipped to [0, w-1] x [0, h-1]; null without a channel or when a wall is out of frame. */
  walls: [Segment, Segment] | null;
  /** Director per pixel, radians CCW on screen. */
  thetaRad: Float32Array;
  /** Mean director per pixel (the local axis), radians, and the ensemble order S = E[cos 2 delta] there. */
  meanRad: Float32Array;
  orderS: Float32Array;
  /** 1 where the pixel centre lies in the ordered interior. */
  interior: Uint8Array;
  /** Channel axis (wall bisector) in degrees, or the director of a wall-free scene. */
  axisDeg: number;
  /** A sample-free rectangle for --sample-free (colour images), or null. */
  backgroundRect: { x: number; y: number; width: number; height: number } | null;
  /** Sample retardance per pixel, nm (colour scenes). */
  retardanceNm: Float32Array | null;
}

export interface Rendering {
  spec: SceneSpec;
  image: Image;
  /** Second image of a pair (assembly turned by spec.optics.turnDeg), or null. */
  imageB: Image | null;
  /** The angle series' crossed-polariser images, one per spec.optics.seriesDeg angle, or null. */
  series: Image[] | null;
  truth: SceneTruth;
}

const SMALL_ORDER = 1e-6;

/** S(s) of the profile. */
export function orderAt(p: OrderProfile, s: number): number {
  const a = Math.abs(s);
  const skin = s < 0 && p.skinFirst !== undefined ? p.skinFirst : p.skin;
  const v = a <= 0.5 ? p.core : a >= 0.8 ? skin : p.core + ((a - 0.5) / 0.3) * (skin - p.core);
  return Math.min(1, Math.max(SMALL_ORDER, v));
}

/** sigma of a normal delta with E[cos 2 delta] = S: exp(-2 sigma^2) = S. */
export const sigmaForOrder = (S: number) => Math.sqrt(-Math.log(S) / 2);

/** Outside one wall: [start, end) slabs and their values (the last slab is the background, to infinity). */
function slabs(w: WallStyle): { edges: number[]; kinds: ('edge' | 'band' | 'bg')[] } {
  if (w.kind === 'none') return { edges: [0], kinds: ['bg'] };
  if (w.kind === 'band') return { edges: [0, w.thicknessPx], kinds: ['band', 'bg'] };
  return { edges: [0, w.edgePx, w.edgePx + w.thicknessPx], kinds: ['edge', 'band', 'bg'] };
}

/** Overlap of [lo, hi) with the pixel's extent [d - 0.5, d + 0.5] along the wall normal (box-filter antialiasing). */
const overlap = (lo: number, hi: number, d: number) => Math.max(0, Math.min(hi, d + 0.5) - Math.max(lo, d - 0.5));

/** Renders a scene: image(s) and truth. Deterministic in spec.seed. */
export function renderScene(spec: SceneSpec): Rendering {
  const { width: w, height: h } = spec;
  const n = w * h;
  const PATTERN = new Set(['grain', 'background grain', 'noise A', 'noise B']);
  const rng = (label: string) => new Rng(streamSeed(PATTERN.has(label) || label.startsWith('noise series') ? spec.patternSeed ?? spec.seed : spec.seed, label));
  const ch = spec.channel;
  const geo = ch ? channelGeometry(w, h, ch.axisDeg, ch.widthPx, ch.taperDeg, ch.offsetPx) : null;

  // Director field: theta = local axis + sigma(s) g.
  const g = correlatedField(rng('delta'), w, h, spec.corrLengthPx);
  const thetaRad = new Float32Array(n), meanRad = new Float32Array(n), orderS = new Float32Array(n), interior = new Uint8Array(n);
  const dist: [Float32Array, Float32Array] | null = geo ? [new Float32Array(n), new Float32Array(n)] : null;
  const frame = geo ? wallFrame(geo.walls.map((l) => ({ x1: l.px - 4000 * l.dx, y1: l.py - 4000 * l.dy, x2: l.px + 4000 * l.dx, y2: l.py + 4000 * l.dy })) as [Segment, Segment]) : null;
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const i = y * w + x;
      let mean: number, S: number;
      if (geo && frame && dist) {
        const s = transverseS(frame, x, y).s;
        mean = geo.axisRad - (s * geo.taperRad) / 2;
        S = orderAt(spec.order, s);
        dist[0][i] = outsideDistance(geo, 0, x, y);
        dist[1][i] = outsideDistance(geo, 1, x, y);
        interior[i] = dist[0][i] <= 0 && dist[1][i] <= 0 ? 1 : 0;
      } else {
        mean = (spec.directorDeg * Math.PI) / 180;
        S = orderAt(spec.order, 0);
        interior[i] = 1;
      }
      meanRad[i] = mean; orderS[i] = S;
      thetaRad[i] = mean + sigmaForOrder(S) * g[i];
    }
  }

  // Isotropic background director: a wrapped normal of sigma 3 rad (E[cos 2 delta] = exp(-18), i.e. 0).
  const needBgTexture = geo !== null && spec.background.kind === 'texture';
  let bgTheta: Float32Array | null = null;
  if (needBgTexture) {
    const gb = correlatedField(rng('background'), w, h, spec.corrLengthPx);
    bgTheta = Float32Array.from(gb, (v) => 3 * v);
  }

  const planes = spec.source === 'texture' ? [greyScene(spec, rng, thetaRad, bgTheta, dist)] : null;
  let colour: { a: Float32Array[]; b: Float32Array[] | null; series: Float32Array[][] | null; retardance: Float32Array } | null = null;
  if (spec.source === 'colour') colour = colourScenes(spec, rng, thetaRad, bgTheta, dist);

  const image = capture(spec, planes ?? colour!.a, rng('noise A'), `${spec.name}#${spec.seed}`);
  const imageB = colour?.b ? capture(spec, colour.b, rng('noise B'), `${spec.name}#${spec.seed}-B`) : null;
  // Each series image its own noise stream (the streams of A and B are untouched, so their images are the same as without a series).
  const series = colour?.series ? colour.series.map((planes, k) => capture(spec, planes, rng(`noise series ${k}`), `${spec.name}#${spec.seed}-series${k}`)) : null;

  let walls: [Segment, Segment] | null = null;
  if (geo) {
    const a = clipLine(geo.walls[0], w, h), b = clipLine(geo.walls[1], w, h);
    walls = a && b ? [a, b] : null;
  }
  const backgroundRect = spec.source === 'colour' && geo && spec.background.kind === 'sample-free' ? sampleFreeRect(spec, dist!) : null;
  return {
    spec, image, imageB, series,
    truth: {
      walls, thetaRad, meanRad, orderS, interior, axisDeg: geo ? frame!.axisDeg : spec.directorDeg, backgroundRect,
      retardanceNm: colour ? colour.retardance : null,
    },
  };
}

/** Value of the region mix at one pixel: interior share and each wall's slabs. */
function mixWeights(spec: SceneSpec, d0: number, d1: number): { inside: number; parts: { wall: 0 | 1; kind: 'edge' | 'band' | 'bg'; weight: number }[] } {
  const inside = Math.min(1, Math.max(0, 0.5 - d0)) * Math.min(1, Math.max(0, 0.5 - d1));
  const parts: { wall: 0 | 1; kind: 'edge' | 'band' | 'bg'; weight: number }[] = [];
  for (const k of [0, 1] as const) {
    const d = k === 0 ? d0 : d1;
    if (d < -0.5) continue;
    const sl = slabs(spec.walls[k]);
    for (let j = 0; j < sl.edges.length; j++) {
      const wgt = overlap(sl.edges[j], j + 1 < sl.edges.length ? sl.edges[j + 1] : Infinity, d);
      if (wgt > 0) parts.push({ wall: k, kind: sl.kinds[j], weight: wgt });
    }
  }
  return { inside, parts };
}

/** Grey scene, linear brightness before imaging. */
function greyScene(spec: SceneSpec, rng: (l: string) => Rng, thetaRad: Float32Array, bgTheta: Float32Array | null, dist: [Float32Array, Float32Array] | null): Float32Array {
  const { width: w, height: h } = spec;
  const t = spec.texture;
  const noise = gaussBlur(rng('grain').normals(w * h), w, h, t.grainPx);
  const lic = lineIntegralConvolution(noise, thetaRad, w, h, t.streakHalfLengthPx);
  const out = new Float32Array(w * h);
  if (!dist) {
    for (let i = 0; i < out.length; i++) out[i] = t.mean + t.contrast * lic[i];
    return out;
  }
  const bg = bgTheta
    ? lineIntegralConvolution(gaussBlur(rng('background grain').normals(w * h), w, h, t.grainPx), bgTheta, w, h, t.streakHalfLengthPx)
    : null;
  for (let i = 0; i < out.length; i++) {
    const m = mixWeights(spec, dist[0][i], dist[1][i]);
    let v = m.inside * (t.mean + t.contrast * lic[i]);
    for (const p of m.parts) {
      const ws = spec.walls[p.wall];
      const val = p.kind === 'edge' ? ws.edgeLevel : p.kind === 'band' ? ws.level
        : spec.background.kind === 'interior' ? t.mean + t.contrast * lic[i]
          : spec.background.level + (bg ? spec.background.contrast * bg[i] : 0);
      v += p.weight * val;
    }
    out[i] = v;
  }
  return out;
}

/** Colour scene(s): white-balanced linear RGB planes of image A (and B), before imaging. */
function colourScenes(spec: SceneSpec, rng: (l: string) => Rng, thetaRad: Float32Array, bgTheta: Float32Array | null, dist: [Float32Array, Float32Array] | null) {
  const { width: w, height: h } = spec;
  const o = spec.optics;
  const n = w * h;
  const retardance = new Float32Array(n).fill(o.retardanceNm);
  if (o.retardanceSpread > 0) {
    const gr = correlatedField(rng('retardance'), w, h, 3 * spec.corrLengthPx);
    for (let i = 0; i < n; i++) retardance[i] = Math.max(0, o.retardanceNm * (1 + o.retardanceSpread * gr[i]));
  }
  const streaks = o.streakContrast > 0
    ? lineIntegralConvolution(gaussBlur(rng('grain').normals(n), w, h, spec.texture.grainPx), thetaRad, w, h, spec.texture.streakHalfLengthPx)
    : null;
  const trainA = crossedWithCompensator(o.compensatorNm, o.lampK);
  const trains = [trainA, ...(o.turnDeg !== null ? [turnedTrain(trainA, o.turnDeg)] : [])];
  // The angle series: crossed polarisers at each angle, no compensator (sample-free areas and bands are then dark).
  const seriesTrains = (o.seriesDeg ?? []).map((a): OpticalTrain => ({ polariserDeg: a, analyserDeg: a + 90, compensator: null, lampK: o.lampK }));
  const result = [...trains, ...seriesTrains].map((train) => {
    const r = new ColourRenderer(train);
    const planes = [new Float32Array(n), new Float32Array(n), new Float32Array(n)];
    const free = r.linearRgb(0, 0);
    const rgbAt = (nm: number, th: number, out: number[]) => {
      const k = r.coefficients(Math.round(nm * 2) / 2); // 0.5 nm steps: colour change per step < 1e-3 of full scale
      const c = Math.cos(2 * th), s = Math.sin(2 * th);
      const v1 = c, v2 = s, v3 = c * c, v4 = s * s, v5 = c * s;
      for (let ch = 0; ch < 3; ch++) {
        const b = ch * 6;
        out[ch] = k[b] + k[b + 1] * v1 + k[b + 2] * v2 + k[b + 3] * v3 + k[b + 4] * v4 + k[b + 5] * v5;
      }
    };
    const inRgb = [0, 0, 0], bgRgb = [0, 0, 0];
    for (let i = 0; i < n; i++) {
      const m = dist ? mixWeights(spec, dist[0][i], dist[1][i]) : { inside: 1, parts: [] };
      const rgb = [0, 0, 0];
      if (spec.background.kind === 'interior') { m.inside = 1; m.parts = []; }
      if (m.inside > 0) {
        rgbAt(retardance[i], thetaRad[i], inRgb);
        const mod = streaks ? 1 + o.streakContrast * streaks[i] : 1;
        for (let c = 0; c < 3; c++) rgb[c] += m.inside * inRgb[c] * mod;
      }
      for (const p of m.parts) {
        const ws = spec.walls[p.wall];
        for (let c = 0; c < 3; c++) {
          let val: number;
          if (p.kind === 'edge') val = ws.edgeLevel;
          else if (p.kind === 'band') val = ws.level * free[c];
          else if (spec.background.kind === 'flat') val = spec.background.level;
          else if (spec.background.kind === 'sample-free' || !bgTheta) val = free[c];
          else { rgbAt(spec.background.retardanceNm, bgTheta[i], bgRgb); val = bgRgb[c]; }
          rgb[c] += p.weight * val;
        }
      }
      for (let c = 0; c < 3; c++) planes[c][i] = o.exposure * rgb[c];
    }
    return planes;
  });
  return { a: result[0], b: o.turnDeg !== null ? result[1] : null, series: o.seriesDeg ? result.slice(trains.length) : null, retardance };
}

/**
 * Imaging: Gaussian PSF, illumination (gradient and vignetting), shot noise (Poisson in electrons) and read
 * noise, then quantisation. 8-bit output is sRGB-encoded for colour (linear for grey) and labelled 'srgb';
 * 16-bit output stays linear and is labelled 'linear', as the project's PNG reader labels 16-bit files.
 */
function capture(spec: SceneSpec, linear: Float32Array[], rng: Rng, name: string): Image {
  const { width: w, height: h } = spec;
  const im = spec.imaging;
  const xc = (w - 1) / 2, yc = (h - 1) / 2, rc2 = xc * xc + yc * yc;
  const max = im.bitDepth === 8 ? 255 : 65535;
  const colour = linear.length === 3;
  const planes = linear.map((p) => {
    const b = gaussBlur(p, w, h, im.psfSigmaPx);
    const out = new Float32Array(w * h);
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        const i = y * w + x;
        const light = (1 + (im.gradient[0] * (x - xc)) / w + (im.gradient[1] * (y - yc)) / h) * (1 - (im.vignetting * ((x - xc) ** 2 + (y - yc) ** 2)) / rc2);
        let v = Math.max(0, b[i] * light);
        if (im.fullWellElectrons > 0) v = rng.poisson(v * im.fullWellElectrons) / im.fullWellElectrons;
        v += im.noiseSigma * rng.normal();
        const stored = colour && im.bitDepth === 8 ? srgbEncode(v) : Math.min(1, Math.max(0, v));
        out[i] = Math.round(stored * max) / max;
      }
    }
    return out;
  });
  return {
    width: w, height: h, channels: colour ? 3 : 1, planes, bitDepth: im.bitDepth,
    encoding: im.bitDepth === 16 ? 'linear' : 'srgb', source: { name },
  };
}

/**
 * The largest square (side 16-64 px) of sample-free background: beyond each wall's band by 3 PSF sigmas
 * + 3 px, and 2 px inside the frame. Returned as x, y, width, height in whole pixels; null if none fits.
 */
function sampleFreeRect(spec: SceneSpec, dist: [Float32Array, Float32Array]): SceneTruth['backgroundRect'] {
  const { width: w, height: h } = spec;
  const margin = 3 * spec.imaging.psfSigmaPx + 3;
  const reach = spec.walls.map((s) => slabs(s).edges.at(-1)! + margin);
  const side = new Int32Array(w * h);
  let best = 0, bx = 0, by = 0;
  for (let y = 2; y < h - 2; y++) {
    for (let x = 2; x < w - 2; x++) {
      const i = y * w + x;
      const clean = dist[0][i] > reach[0] || dist[1][i] > reach[1];
      if (!clean) continue;
      side[i] = 1 + Math.min(side[i - 1], side[i - w], side[i - w - 1]);
      if (side[i] > best) { best = side[i]; bx = x; by = y; }
    }
  }
  if (best < 16) return null;
  const s = Math.min(best, 64);
  return { x: bx - s + 1, y: by - s + 1, width: s, height: s };
}
