import { bilinear, median as sharedMedian } from '../common/index.ts';
import { InputError } from '../common/index.ts';
import type { Plane } from '../common/index.ts';
import type { Image } from '../image/index.ts';
import type { Channel, Segment } from './geometry.ts';

export interface AutoWallOptions {
  /** Smallest distance between the two coarse wall lines, as a fraction of the shorter image side. Default 0.15. */
  minSeparation?: number;
  /** Largest angle between the two walls, degrees (tapered channels). Default 15. */
  maxTaperDeg?: number;
}

export const AUTO_WALL_DEFAULTS = { minSeparation: 0.15, maxTaperDeg: 15 } as const;

/** How well the points found along one wall lie on its line. */
export interface WallFit {
  /** Root-mean-square distance of the kept edge points from the fitted line, px. */
  residualPx: number;
  /** Edge points kept / strips that crossed this wall. */
  points: number;
  strips: number;
}

export interface FoundWalls {
  channel: Channel;
  /** Each wall's step contrast relative to the stronger one (1 = as strong). */
  strength: [number, number];
  fit: [WallFit, WallFit];
}

/** Side of the working copy for the coarse search: walls are long features, so a coarse image finds them. */
const WORK_SIDE = 512;
/** Length of a strip along the channel over which cross-profiles are averaged, px. */
const STRIP_PX = 64;
/** Most strips per image (spread evenly along the visible channel). */
const MAX_STRIPS = 48;
/** Half-width of the two-sided step window across the wall, px. */
const STEP_WINDOW_PX = 6;
/** A step counts as a wall when it is at least this fraction of the strongest step on its side. */
const STEP_FRACTION = 0.3;
/** ... and at least this many times the features' fluctuation inside the channel (norm over features). */
const MIN_STEP = 5;
/** The wall's peak in the rate of change must reach this fraction of the largest rate near the step. */
const RATE_FRACTION = 0.35;
/** ... and this many times the typical brightness change between the midline and the wall. */
const RATE_CLEAR = 6;
/** The inner side of a thin wall line must reach this fraction of the largest rate near the step ... */
const LINE_RATE_FRACTION = 0.15;
/** ... with the line's outer side (a change the other way) at most this far beyond it, px ... */
const LINE_MAX_PX = 6;
/** ... in at least this share of the strips that place the wall. */
const LINE_SHARE = 0.3;
/**
 * A side's points must lie this close to their line (RMS, px) for its strip length to be accepted: on our
 * renderings of every wall kind the kept points lie within 0.23 px; lines picked out of photographs with no
 * channel (text, coins, a chessboard) scatter by 0.3-0.7 px.
 */
const MAX_RESIDUAL_PX = 0.3;
/** ... and at least this share of the strips that cross the wall must place a point on it (a wall runs the whole way). */
const MIN_KEPT_SHARE = 0.2;
/**
 * A brightness step found more than this far beyond the end of the material's texture is the outer side of a
 * line along the wall, not the material's edge, px. On our renderings (validation area 'channel', measured
 * from the true walls) the texture's end (textureEnd) lies -0.65..+1.0 px from the inner edge (outward
 * positive; only an end inside the wall found moves it) and a band's brightness step within 0.45 px of it,
 * while the outer side of a line 1-4 px wide was placed 1.4-4.3 px beyond it.
 */
const TEXTURE_END_GAP_PX = 0.5;
/**
 * The material's texture (its variance about the wall's mean profile, textureAcross) must be at least this
 * many times the variance just outside each wall, for textureEnd to place anything and for the walls to be
 * kept at all. On our renderings of every wall kind (validation area 'channel', 95 renderings) the lesser
 * of a rendering's two walls was 15.7-45 for grey textures and 6.7-90 for compensator colours (the least
 * against a dark band of the sample-free colour, whose camera noise in three channels is a large part of
 * it); walls picked out of scikit-image's photographs with no channel were refused at 0.55-3.7 (phantom,
 * hubble_deep_field, bw_text, ihc, text, coins). 5 lies between, about as far from either in ratio.
 */
const TEXTURE_CONTRAST = 5;
/** How far from the consensus line a strip may place the wall, px. */
const NEAR_LINE_PX = 4;

/**
 * The channel's walls as the inner edges of the channel: the lines where the material inside the
 * channel ends, whatever the wall looks like beyond (dark band, bright edge line, step to background).
 *
 * 1. Coarse: the image is reduced to about 512 px; for every feature plane (each colour channel and the
 *    local texture strength log |grad I|^2, each scaled to its own range) pixels vote with their squared
 *    gradient for the lines whose normal is near the gradient direction (a gradient-weighted Hough
 *    transform). The strongest line gives the channel direction; the strongest line within the taper
 *    limit and at least minSeparation away gives the second; their midline is taken as inside the channel.
 * 2. Fine: the image is cut into strips 64 px long along that direction (doubled for a side whose points do
 *    not agree), and the features, averaged along each strip, give cross-profiles. On each side the wall's
 *    line is the innermost line, parallel to the strongest one, whose two-sided steps (window 6 px, in units
 *    of each feature's fluctuation inside the channel) averaged over all strips reach 30 % of the strongest
 *    and 5 (consensusLine): a streak's edge sits at a different place in each strip, the wall's on one line.
 *    Each strip then places the wall within 4 px of that line at the first clear peak of the brightness
 *    change walking out (so a thin bright wall line is placed at its inner side), sub-pixel by a parabola.
 * 3. Each wall is the total-least-squares line through the points most of them agree with (robustLine);
 *    the strips are cut again along the walls' bisector and the search repeated. Each wall's RMS residual is
 *    returned so the user can judge it.
 * 4. The material ends where its texture ends (textureAcross: the variance about the wall's mean profile,
 *    which a straight wall's own bands and lines do not add to). A wall found more than 0.5 px beyond that
 *    is a line's outer side, a line too thin or too faint for its inner side to show in the strips: it is
 *    moved to the texture's end, along the line through the strips' strongest changes.
 * 5. A wall whose inside has under TEXTURE_CONTRAST times the texture of its outside bounds no channel's
 *    material: refused.
 *
 * @throws InputError when the image is flat, no two walls can be told apart on either side, or the walls
 *   found do not bound textured material
 */
export async function findWalls(input: Image | Plane, options: AutoWallOptions = {}): Promise<FoundWalls> {
  const maxTaper = ((options.maxTaperDeg ?? AUTO_WALL_DEFAULTS.maxTaperDeg) * Math.PI) / 180;
  const { planes: features, intensities } = featurePlanes(input);
  const coarse = coarseLines(features, intensities, options.minSeparation ?? AUTO_WALL_DEFAULTS.minSeparation, maxTaper);
  const { width, height } = features[0];
  const cx = (width - 1) / 2, cy = (height - 1) / 2;
  // The midline between the coarse lines, as a point and a normal angle.
  const rhoMid = (coarse.rho1 + coarse.rho2) / 2 - (cx * Math.cos(coarse.phi) + cy * Math.sin(coarse.phi));
  const first = wallsAlong(features, intensities, coarse.phi, cx + rhoMid * Math.cos(coarse.phi), cy + rhoMid * Math.sin(coarse.phi), Math.abs(coarse.rho2 - coarse.rho1) / 2);
  let found = first;
  // The coarse direction can be a few degrees off (a faint wall, texture across the channel): cut the
  // strips again along the bisector of the walls just found, through their midline, and keep that.
  if (first[0] && first[1]) {
    const [a, b] = [first[0].fit.line, first[1].fit.line];
    const sg = a.ux * b.ux + a.uy * b.uy < 0 ? -1 : 1;
    const ax = a.ux + sg * b.ux, ay = a.uy + sg * b.uy;
    const phi = Math.atan2(ax, -ay); // normal of the bisector (along = (-sin phi, cos phi))
    const nx = Math.cos(phi), ny = Math.sin(phi);
    const ta = (a.px - cx) * nx + (a.py - cy) * ny, tb = (b.px - cx) * nx + (b.py - cy) * ny;
    const again = wallsAlong(features, intensities, phi, cx + ((ta + tb) / 2) * nx, cy + ((ta + tb) / 2) * ny, Math.abs(tb - ta) / 2);
    if (again[0] && again[1]) found = again;
  }
  const fits = found.map((f, i) => {
    if (!f) {
      throw new InputError(
        `the ${i === 0 ? 'first' : 'second'} channel wall could not be told apart from its surroundings`,
        'Give the walls by hand (draw them on the image, or --walls), or crop the image to the channel',
      );
    }
    return f.fit;
  });
  const sides = found as SideResult[];
  // The material ends where its texture ends. A wall whose brightness step lies more than TEXTURE_END_GAP_PX
  // beyond that is marked by a line (bright or dark) too thin or too faint for its inner side to be seen
  // in the strips: the wall goes to the texture's end, along the line through the strips' strongest changes
  // (the line's outer side, one sharp step in every strip) when it has one, else along the wall found.
  // Each wall's normal pointing away from the other wall (outward, as textureAcross takes it).
  const outward = (i: number) => {
    const line = fits[i].line, other = fits[1 - i].line;
    const nx = -line.uy, ny = line.ux;
    return (other.px - line.px) * nx + (other.py - line.py) * ny > 0 ? { nx: -nx, ny: -ny } : { nx, ny };
  };
  for (const i of [0, 1]) {
    const { nx, ny } = outward(i);
    const strong = sides[i].strongFit;
    for (const f of [strong && strong.rms <= MAX_RESIDUAL_PX ? strong : null, fits[i]]) {
      if (!f) continue;
      const end = textureEnd(features.slice(0, intensities), f.line, nx, ny);
      if (end === null || end >= -TEXTURE_END_GAP_PX) continue;
      fits[i] = { ...f, line: { ...f.line, px: f.line.px + end * nx, py: f.line.py + end * ny } };
      break;
    }
  }
  // A channel's walls bound its material: inside each wall the material's texture, beyond it none (glass,
  // a band, an empty background). Edges picked out of a photograph with no channel have as much texture on
  // both sides.
  for (const i of [0, 1]) {
    const { nx, ny } = outward(i);
    const across = textureAcross(features.slice(0, intensities), fits[i].line, nx, ny);
    if (across && !(across.contrast >= TEXTURE_CONTRAST)) {
      throw new InputError(
        `the material inside the ${i === 0 ? 'first' : 'second'} wall found has only ${across.contrast.toFixed(1)} times the texture of what lies beyond it (a channel's material has at least ${TEXTURE_CONTRAST} times): no channel could be told apart`,
        'Give the walls by hand (draw them on the image, or --walls), or crop the image to the channel',
      );
    }
  }
  const segs = fits.map((f) => clipLine(f.line, width, height));
  if (!segs[0] || !segs[1]) throw new InputError('a found wall lies outside the image', 'Give the walls by hand');
  // The coarse lines were at least minSeparation apart; walls that close in to much less than that have both
  // settled on one feature (an image with no channel in it, e.g. a repeating pattern).
  const [la, lb] = fits.map((f) => f.line);
  const apart = Math.abs((lb.px - la.px) * -la.uy + (lb.py - la.py) * la.ux);
  const minSep = (options.minSeparation ?? AUTO_WALL_DEFAULTS.minSeparation) * Math.min(width, height);
  if (apart < 0.5 * minSep) {
    throw new InputError(
      `the two walls found are only ${apart.toFixed(0)} px apart, much less than a channel's width here: no channel could be told apart`,
      'Give the walls by hand (draw them on the image, or --walls), or crop the image to the channel',
    );
  }
  const cont = sides.map((s) => median(s.contrast));
  const top = Math.max(cont[0], cont[1]);
  const walls = orderWalls(segs[0], segs[1]);
  const swapped = walls[0] !== segs[0];
  const fit = fits.map((f, i) => ({ residualPx: f.rms, points: f.kept, strips: sides[i].strips, stripPx: sides[i].stripPx }));
  const strength = [cont[0] / top, cont[1] / top];
  return {
    channel: { walls },
    strength: swapped ? [strength[1], strength[0]] : [strength[0], strength[1]],
    fit: swapped ? [fit[1], fit[0]] : [fit[0], fit[1]],
  };
}

/**
 * Each side's wall from strips cut along the direction whose normal angle is phi, walking out from the
 * point (ox, oy) on the midline. Short strips follow a taper and give many points; a faint wall needs
 * longer ones to rise above the texture: each side takes the shortest strip length at which its points
 * agree on a line.
 */
function wallsAlong(features: Plane[], intensities: number, phi: number, ox: number, oy: number, halfSep: number): (SideResult | null)[] {
  const { width, height } = features[0];
  const fr = { ox, oy, ux: -Math.sin(phi), uy: Math.cos(phi), nx: Math.cos(phi), ny: Math.sin(phi) };
  const corners = [[0, 0], [width - 1, 0], [0, height - 1], [width - 1, height - 1]].map(([x, y]) => (x - ox) * fr.ux + (y - oy) * fr.uy);
  const aMin = Math.min(...corners), aMax = Math.max(...corners);
  const found: (SideResult | null)[] = [null, null];
  for (let len = STRIP_PX; len <= Math.max(STRIP_PX, aMax - aMin) && (!found[0] || !found[1]); len *= 2) {
    const strips = cutStrips(features, intensities, fr, aMin, aMax, len, Math.hypot(width, height));
    // Steps are judged in units of each feature's own fluctuation inside the channel, near the midline.
    setInteriorNoise(strips, Math.max(STEP_WINDOW_PX + 2, halfSep / 2));
    for (const side of [0, 1] as const) {
      if (found[side]) continue;
      const r = sideWall(strips, side === 0 ? -1 : 1, fr);
      if (!r) continue;
      const agrees = (f: FitLine | null): f is FitLine => f !== null && f.rms <= MAX_RESIDUAL_PX && f.kept >= MIN_KEPT_SHARE * r.strips;
      if (agrees(r.fit)) found[side] = r;
      else if (agrees(r.strongFit)) {
        // Strips placing some points at a line's inner side and some at its outer side scatter; their
        // strongest changes (the line's outer side) lie on one line. Kept only when the material's texture
        // ends inside it, i.e. it is a line's outer side; findWalls then moves it to the texture's end.
        const sg = side === 0 ? -1 : 1;
        const end = textureEnd(features.slice(0, intensities), r.strongFit.line, sg * fr.nx, sg * fr.ny);
        if (end !== null && end < -TEXTURE_END_GAP_PX) found[side] = { ...r, fit: r.strongFit };
      }
    }
  }
  return found;
}

interface Frame { ox: number; oy: number; ux: number; uy: number; nx: number; ny: number }

/** Strips of `len` px along the channel, overlapping by half, over the image's along-axis extent. */
function cutStrips(features: Plane[], intensities: number, fr: Frame, aMin: number, aMax: number, len: number, reach: number): Strip[] {
  const count = Math.min(MAX_STRIPS, Math.max(1, Math.floor((2 * (aMax - aMin)) / len) - 1));
  const pitch = (aMax - aMin - len) / Math.max(1, count - 1);
  const strips: Strip[] = [];
  for (let k = 0; k < count; k++) {
    const a0 = count === 1 ? (aMin + aMax - len) / 2 : aMin + k * pitch;
    const strip = stripProfiles(features, intensities, fr, a0, len, reach);
    if (strip) strips.push(strip);
  }
  return strips;
}

interface FitLine { line: Line; rms: number; kept: number }

interface SideResult {
  fit: FitLine;
  /** The line through each strip's strongest change near the wall (a line's outer side where there is one). */
  strongFit: FitLine | null;
  contrast: number[];
  strips: number;
  stripPx: number;
}

/**
 * The wall on one side (dir = -1 or +1) from a set of strips. A step inside the channel (a streak's edge)
 * sits at a different place in each strip, the wall's step on one line through all of them: so the wall
 * is first sought as a line, d = d0 + slope (along - centre) in each strip's distance d from the midline,
 * whose steps summed over the strips it crosses are strong (consensusLine). Each strip then places the
 * wall within a few px of that line (placeEdge), and a robust line through those points is the wall.
 */
function sideWall(strips: Strip[], dir: -1 | 1, fr: Frame): SideResult | null {
  const steps = strips.map((st) => stepProfile(st, dir));
  const line = consensusLine(strips, steps);
  if (!line) return null;
  const pts: { x: number; y: number }[] = [], contrast: number[] = [];
  const edges: { along: number; edge: NonNullable<ReturnType<typeof placeEdge>> }[] = [];
  let crossed = 0;
  for (let k = 0; k < strips.length; k++) {
    const z = steps[k];
    if (!z) continue;
    crossed++;
    const predicted = line.d0 + line.slope * (strips[k].alongMid - line.centre);
    const edge = placeEdge(strips[k], z, dir, predicted);
    if (edge) edges.push({ along: strips[k].alongMid, edge });
  }
  // A thin wall line seen clearly in enough strips, with the same width (outer step to inner side) in
  // them, is the wall's mark everywhere: each strip then places the wall at the line's inner side where it
  // shows one (strips placing some at the line and some at its outer side would tilt the wall). Texture next
  // to a wall also changes the other way, but at scattered distances.
  const widths = edges.filter((e) => e.edge.line?.clear).map((e) => Math.abs(e.edge.t - e.edge.line!.t));
  const widthPx = widths.length ? median(widths) : NaN;
  const lineWall = widths.filter((w) => Math.abs(w - widthPx) <= 1).length >= Math.max(3, LINE_SHARE * edges.length);
  for (const { along, edge } of edges) {
    const t = lineWall ? edge.line?.t : edge.t;
    if (t === undefined) continue;
    pts.push({ x: fr.ox + along * fr.ux + t * fr.nx, y: fr.oy + along * fr.uy + t * fr.ny });
    contrast.push(edge.contrast);
  }
  if (pts.length < 3) {
    // Brightness does not mark this wall (texture meets a flat area of the same brightness, or too few strips
    // reach it): each strip's own two-sided step, its peak nearest the consensus line (sub-pixel), places it.
    pts.length = 0;
    for (let k = 0; k < strips.length; k++) {
      const z = steps[k];
      if (!z) continue;
      const along = strips[k].alongMid, predicted = line.d0 + line.slope * (along - line.centre);
      const d = stepPeakNear(z.z, predicted);
      if (d === null) continue;
      const t = dir * d;
      pts.push({ x: fr.ox + along * fr.ux + t * fr.nx, y: fr.oy + along * fr.uy + t * fr.ny });
    }
  }
  const fit = robustLine(pts);
  const strongFit = robustLine(edges.map(({ along, edge }) => ({ x: fr.ox + along * fr.ux + edge.strong * fr.nx, y: fr.oy + along * fr.uy + edge.strong * fr.ny })));
  return fit ? { fit, strongFit, contrast, strips: crossed, stripPx: strips[0]?.length ?? 0 } : null;
}

/** The largest two-sided step within NEAR_LINE_PX of `predicted`, sub-pixel by a parabola; null off the profile. */
function stepPeakNear(z: Float64Array, predicted: number): number | null {
  const lo = Math.max(1, Math.floor(predicted - NEAR_LINE_PX)), hi = Math.min(z.length - 2, Math.ceil(predicted + NEAR_LINE_PX));
  if (hi <= lo) return null;
  let best = lo;
  for (let d = lo; d <= hi; d++) if (z[d] > z[best]) best = d;
  if (!(z[best] > 0)) return null;
  const den = z[best - 1] - 2 * z[best] + z[best + 1];
  return best + (den < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (z[best - 1] - z[best + 1])) / den)) : 0);
}

/** Share of the strips on a side that must reach a line for consensusLine to weigh it. */
const MIN_SEEN_SHARE = 0.4;

/** Largest angle between a wall and the strips' direction that consensusLine considers, radians. */
const MAX_WALL_TILT = (8 * Math.PI) / 180;

/**
 * The wall's line in the strips' frame: d = d0 + slope (along - centre), d the distance from the midline.
 * A line's strength is its two-sided step averaged over the strips whose profile reaches it, when at least
 * MIN_SEEN_SHARE of the side's strips (and three) do, so that a wall cut by the frame counts at full strength
 * while a line through a corner's few strips cannot win. The strongest line over tilts
 * within MAX_WALL_TILT (0.1 deg steps) and d0 (0.5 px steps) fixes the wall's direction, since every edge
 * of one wall (a band's inner and outer edge, a bright line) runs the same way; along that direction the
 * innermost line that reaches STEP_FRACTION of the strongest and MIN_STEP is the wall's inner edge.
 */
function consensusLine(strips: Strip[], steps: (StepProfile | null)[]): { d0: number; slope: number; centre: number } | null {
  const live = strips.map((s, k) => ({ a: s.alongMid, z: steps[k] })).filter((s) => s.z !== null) as { a: number; z: StepProfile }[];
  if (live.length === 0) return null;
  const centre = live.reduce((t, s) => t + s.a, 0) / live.length;
  const nD = 2 * Math.max(...live.map((s) => s.z.rows.length));
  const strength = (d0: number, slope: number) => {
    let sum = 0, count = 0;
    for (const s of live) {
      const d = d0 + slope * (s.a - centre);
      const i = Math.floor(d);
      if (i < 0 || i + 1 >= s.z.rows.length) continue;
      const f = d - i;
      sum += s.z.z[i] * (1 - f) + s.z.z[i + 1] * f;
      count++;
    }
    // Averaged over the strips that reach the line (a wall cut by the frame is seen by only some), provided
    // enough of them do that a line through a corner's few strips cannot win.
    return count >= Math.max(3, MIN_SEEN_SHARE * live.length) ? sum / count : 0;
  };
  let top = 0, topSlope = 0;
  const step = (0.1 * Math.PI) / 180;
  for (let tilt = -MAX_WALL_TILT; tilt <= MAX_WALL_TILT + 1e-9; tilt += step) {
    const slope = Math.tan(tilt);
    for (let j = 0; j < nD; j++) {
      const v = strength(j / 2, slope);
      if (v > top) { top = v; topSlope = slope; }
    }
  }
  const floor = Math.max(MIN_STEP, STEP_FRACTION * top);
  // Along the wall's direction (allowing 0.3 deg either way), the innermost line that is strong enough.
  const along = new Float64Array(nD), alongSlope = new Float64Array(nD);
  for (let j = 0; j < nD; j++) {
    for (const dt of [-3, -2, -1, 0, 1, 2, 3]) {
      const slope = Math.tan(Math.atan(topSlope) + dt * step);
      const v = strength(j / 2, slope);
      if (v > along[j]) { along[j] = v; alongSlope[j] = slope; }
    }
  }
  for (let j = 1; j + 1 < nD; j++) {
    if (along[j] >= floor && along[j] >= along[j - 1] && along[j] >= along[j + 1]) return { d0: j / 2, slope: alongSlope[j], centre };
  }
  return null;
}

/**
 * The planes whose change marks a wall: each colour channel, then three gradient products of the grey
 * image (Jxx + Jyy, Jxx - Jyy, 2 Jxy, unsmoothed). Averaged over a neighbourhood and turned into
 * `derivedFeatures`, the products say how much texture there is and how well it is aligned: ordered
 * material, a flat wall and an isotropic background differ there even when their brightness does not.
 */
function featurePlanes(input: Image | Plane): { planes: Plane[]; intensities: number } {
  const planes: Plane[] = 'planes' in input
    ? input.planes.map((data) => ({ width: input.width, height: input.height, data }))
    : [input];
  const { width: w, height: h } = planes[0];
  if (planes.every((p) => !(robustRange(p.data) > 1e-6))) {
    throw new InputError('the image is flat: no channel walls can be found', 'Give the walls by hand');
  }
  // Grey for the texture: the mean of the channels is enough to see where texture stops.
  const grey = new Float32Array(w * h);
  for (const p of planes) for (let i = 0; i < grey.length; i++) grey[i] += p.data[i] / planes.length;
  const e = new Float32Array(w * h), a = new Float32Array(w * h), b = new Float32Array(w * h);
  for (let y = 0; y < h; y++) {
    const ym = Math.max(0, y - 1), yp = Math.min(h - 1, y + 1);
    for (let x = 0; x < w; x++) {
      const xm = Math.max(0, x - 1), xp = Math.min(w - 1, x + 1);
      const gx = grey[y * w + xp] - grey[y * w + xm], gy = grey[yp * w + x] - grey[ym * w + x];
      const i = y * w + x;
      e[i] = gx * gx + gy * gy; a[i] = gx * gx - gy * gy; b[i] = 2 * gx * gy;
    }
  }
  const plane = (data: Float32Array) => ({ width: w, height: h, data });
  return { planes: [...planes, plane(e), plane(a), plane(b)], intensities: planes.length };
}

/**
 * From neighbourhood means of the feature planes to the features compared across a wall: brightness as
 * it is, texture strength on a log scale (a weak texture next to a flat wall is as visible as a strong
 * one), and the two alignment components (Jxx - Jyy, 2 Jxy) / (Jxx + Jyy), which are near 0 for an
 * isotropic background and large for aligned material.
 */
function derivedFeatures(mean: ArrayLike<number>, intensities: number, out: Float64Array): void {
  for (let f = 0; f < intensities; f++) out[f] = mean[f];
  const e = mean[intensities], eps = 1e-6;
  out[intensities] = Math.log(e + eps);
  out[intensities + 1] = mean[intensities + 1] / (e + eps);
  out[intensities + 2] = mean[intensities + 2] / (e + eps);
}

interface Coarse { phi: number; rho1: number; rho2: number }

/**
 * Two coarse wall lines by a gradient-weighted Hough transform over all feature planes (normal angle phi
 * in 0.5 deg steps, offset rho in 1 px steps, both in full-resolution pixels).
 */
function coarseLines(features: Plane[], intensities: number, minSeparation: number, maxTaper: number): Coarse {
  const { width, height } = features[0];
  const k = Math.max(1, Math.ceil(Math.max(width, height) / WORK_SIDE));
  const w = Math.ceil(width / k), h = Math.ceil(height / k);
  const smooth = Math.max(2, Math.min(w, h) / 80);
  const nPhi = 360, dPhi = Math.PI / nPhi;
  const rhoMax = Math.ceil(Math.hypot(w, h));
  const nRho = 2 * rhoMax + 1;
  const acc = new Float32Array(nPhi * nRho);
  const cosT = Float64Array.from({ length: nPhi }, (_, i) => Math.cos(i * dPhi));
  const sinT = Float64Array.from({ length: nPhi }, (_, i) => Math.sin(i * dPhi));
  const smoothed = features.map((p) => gaussianBlur(blockAverage(p, k), smooth).data);
  const derived = Array.from({ length: intensities + 3 }, () => new Float32Array(w * h));
  const mean = new Float64Array(features.length), out = new Float64Array(intensities + 3);
  for (let i = 0; i < w * h; i++) {
    for (let f = 0; f < features.length; f++) mean[f] = smoothed[f][i];
    derivedFeatures(mean, intensities, out);
    for (let f = 0; f < out.length; f++) derived[f][i] = out[f];
  }
  const grads = derived.map((data) => {
    const range = robustRange(data);
    return range > 1e-9 ? { ...gradient({ width: w, height: h, data }), range } : null;
  });
  for (const g of grads) {
    if (!g) continue;
    const { gx, gy, range } = g;
    let gMax = 0;
    for (let i = 0; i < gx.length; i++) gMax = Math.max(gMax, Math.hypot(gx[i], gy[i]));
    if (!(gMax > 0)) continue;
    const spread = 4; // votes within +-2 deg of the gradient direction
    for (let y = 0; y < h; y++) {
      for (let x = 0; x < w; x++) {
        const i = y * w + x;
        const m = Math.hypot(gx[i], gy[i]);
        if (m < 0.05 * gMax) continue;
        const vote = (m / range) ** 2;
        let phi = Math.atan2(gy[i], gx[i]);
        if (phi < 0) phi += Math.PI;
        const k0 = Math.round(phi / dPhi);
        // Working-grid pixel centre in full-resolution pixels.
        const fx = (x + 0.5) * k - 0.5, fy = (y + 0.5) * k - 0.5;
        for (let dk = -spread; dk <= spread; dk++) {
          const kk = (((k0 + dk) % nPhi) + nPhi) % nPhi;
          // The offset is measured on the cell's own normal, so a vote that wraps past pi needs no sign change.
          const rho = (fx * cosT[kk] + fy * sinT[kk]) / k;
          acc[kk * nRho + Math.round(rho) + rhoMax] += vote;
        }
      }
    }
  }
  const best = argmax(acc, () => true);
  if (best < 0 || !(acc[best] > 0)) throw new InputError('the image is flat: no channel walls can be found', 'Give the walls by hand');
  const k1 = Math.floor(best / nRho), r1 = (best % nRho) - rhoMax;
  const minSep = (minSeparation * Math.min(width, height)) / k;
  const second = argmax(acc, (j) => {
    const kk = Math.floor(j / nRho), r = (j % nRho) - rhoMax;
    let dk = Math.abs(kk - k1);
    const wraps = dk > nPhi / 2;
    if (wraps) dk = nPhi - dk;
    if (dk * dPhi > maxTaper) return false;
    return Math.abs((wraps ? -r : r) - r1) >= minSep;
  });
  // A thin or faint second wall votes far less than a broad dark one (votes go with the squared gradient),
  // so the bar is low; the strips decide whether a wall is really there.
  if (second < 0 || !(acc[second] > 0.03 * acc[best])) {
    throw new InputError('no second wall roughly parallel to the strongest edge was found', 'Give the walls by hand, or crop the image to the channel');
  }
  // Line 2 as voted (normal phi2, offset r2 in working px); its point nearest the image centre,
  // projected on line 1's normal, gives the second offset in line 1's frame.
  const phi = k1 * dPhi, phi2 = Math.floor(second / nRho) * dPhi;
  const r2 = ((second % nRho) - rhoMax) * k;
  const cx = (width - 1) / 2, cy = (height - 1) / 2;
  const d = cx * Math.cos(phi2) + cy * Math.sin(phi2) - r2;
  const px = cx - d * Math.cos(phi2), py = cy - d * Math.sin(phi2);
  const rho2AtCentre = px * Math.cos(phi) + py * Math.sin(phi);
  return { phi, rho1: r1 * k, rho2: rho2AtCentre };
}

interface Strip {
  /** Offsets across (t, px) from -reach to reach in 1 px steps; values[f][j] is feature f at t = j - reach. */
  reach: number;
  values: Float64Array[];
  /** Each feature's fluctuation inside the channel (setInteriorNoise), the unit steps are measured in. */
  scale: number[];
  alongMid: number;
  /** The first `intensities` features are brightness. */
  intensities: number;
  /** Strip length along the channel, px. */
  length: number;
}

/**
 * Features averaged along a strip [a0, a0 + len) of the channel direction, at 1 px steps across. A row
 * with under half of its samples inside the image is NaN.
 */
function stripProfiles(
  features: Plane[], intensities: number, fr: { ox: number; oy: number; ux: number; uy: number; nx: number; ny: number },
  a0: number, len: number, reach: number,
): Strip | null {
  const R = Math.ceil(reach);
  const n = 2 * R + 1;
  const F = intensities + 3;
  const values = Array.from({ length: F }, () => new Float64Array(n).fill(NaN));
  const along = Math.max(2, Math.round(len));
  const sums = new Float64Array(features.length), out = new Float64Array(F);
  // Rows whose distance t from the midline lies beyond every corner of the image hold no sample inside it
  // (they stay NaN): only the rows between the corners' distances are walked.
  const { width, height } = features[0];
  const tc = [[0, 0], [width - 1, 0], [0, height - 1], [width - 1, height - 1]].map(([x, y]) => (x - fr.ox) * fr.nx + (y - fr.oy) * fr.ny);
  const jFrom = Math.max(0, Math.floor(Math.min(...tc)) + R), jTo = Math.min(n - 1, Math.ceil(Math.max(...tc)) + R);
  for (let j = jFrom; j <= jTo; j++) {
    const t = j - R;
    sums.fill(0);
    let inside = 0;
    for (let a = 0; a < along; a++) {
      const al = a0 + a + 0.5;
      const x = fr.ox + al * fr.ux + t * fr.nx, y = fr.oy + al * fr.uy + t * fr.ny;
      const v0 = bilinear(features[0], x, y);
      if (!Number.isFinite(v0)) continue;
      inside++;
      sums[0] += v0;
      for (let f = 1; f < features.length; f++) sums[f] += bilinear(features[f], x, y);
    }
    if (inside < 0.9 * along) continue;
    for (let f = 0; f < features.length; f++) sums[f] /= inside;
    derivedFeatures(sums, intensities, out);
    for (let f = 0; f < F; f++) values[f][j] = out[f];
  }
  if (!Number.isFinite(values[0][R])) return null;
  return { reach: R, values, scale: values.map(() => 1), alongMid: a0 + along / 2, intensities, length: along };
}

/**
 * Sets every strip's feature scale to the robust SD (1.4826 x median absolute value) of that feature's
 * two-sided steps over the rows within `halfPx` of the midline, pooled over all strips: the size of
 * step that the material inside the channel makes by itself. Floored at 1e-3 of the feature's range.
 */
function setInteriorNoise(strips: Strip[], halfPx: number): void {
  if (strips.length === 0) return;
  const F = strips[0].values.length, W = STEP_WINDOW_PX;
  const c = Math.max(0, Math.floor(halfPx) - W);
  for (let f = 0; f < F; f++) {
    const steps: number[] = [], all: number[] = [];
    for (const st of strips) {
      const v = st.values[f], R = st.reach;
      for (let j = 0; j < v.length; j += 4) if (Number.isFinite(v[j])) all.push(v[j]);
      for (let t = -c; t <= c; t++) {
        const j = R + t;
        let a = 0, b = 0, ok = true;
        for (let q = 0; q < W; q++) { a += v[j + q]; b += v[j - 1 - q]; }
        if (!Number.isFinite(a) || !Number.isFinite(b)) ok = false;
        if (ok) steps.push(Math.abs(a - b) / W);
      }
    }
    const noise = 1.4826 * median(steps);
    const floor = 1e-3 * Math.max(1e-6, robustRange(all));
    const scale = Number.isFinite(noise) ? Math.max(noise, floor) : floor;
    for (const st of strips) st.scale[f] = scale;
  }
}

interface StepProfile {
  /** Rows on this side inside the image, walking out from the midline (indices into the strip's values). */
  rows: number[];
  /** Two-sided step size at each row (0 where the window does not fit), in units of each feature's range. */
  z: Float64Array;
  steps: Float64Array[];
  max: number;
}

/**
 * Two-sided steps across one side of a strip (dir = -1 or +1): at each row d walking out from the
 * midline, the difference of the feature means over the 6 rows beyond and the 6 rows before, each
 * feature scaled by its range, as a vector norm. null when the strip holds too few rows on that side.
 */
function stepProfile(strip: Strip, dir: -1 | 1): StepProfile | null {
  const { reach: R, values, scale } = strip;
  const W = STEP_WINDOW_PX;
  const F = values.length;
  const rows: number[] = [];
  for (let d = 0; d <= R; d++) {
    const j = R + dir * d;
    if (!Number.isFinite(values[0][j])) break;
    rows.push(j);
  }
  if (rows.length < 3 * W) return null;
  const cum = values.map((v) => {
    const c = new Float64Array(rows.length + 1);
    for (let d = 0; d < rows.length; d++) c[d + 1] = c[d] + v[rows[d]];
    return c;
  });
  const z = new Float64Array(rows.length);
  const steps: Float64Array[] = [];
  let max = 0;
  for (let d = W; d + W <= rows.length; d++) {
    const step = new Float64Array(F);
    let s2 = 0;
    for (let f = 0; f < F; f++) {
      const c = cum[f];
      step[f] = ((c[d + W] - c[d]) - (c[d] - c[d - W])) / (W * scale[f]);
      s2 += step[f] * step[f];
    }
    z[d] = Math.sqrt(s2);
    steps[d] = step;
    max = Math.max(max, z[d]);
  }
  return { rows, z, steps, max };
}

/**
 * The wall in one strip: the first local maximum of the step size, walking out from the midline, that
 * reaches `threshold`, placed at the steepest point of the profile projected on that step's direction in
 * feature space (sub-pixel, parabola). Brightness alone sets the place when it carries the step, since
 * texture strength peaks on the edge itself rather than stepping at it. null when no step is clear enough.
 */
function placeEdge(strip: Strip, p: StepProfile, dir: -1 | 1, predicted: number): { t: number; contrast: number; line: { t: number; clear: boolean } | null; strong: number } | null {
  const { values, scale } = strip;
  const { rows, z } = p;
  const W = STEP_WINDOW_PX;
  const pick = Math.round(predicted);
  if (pick < W || pick + W >= rows.length) return null;
  const lo = Math.max(3, pick - NEAR_LINE_PX), hi = Math.min(rows.length - 4, pick + NEAR_LINE_PX);
  // Change across the wall at each row: central differences of the first `use` features, in units of
  // each feature's fluctuation.
  const change = (d: number, use: number) => {
    const v = new Float64Array(use);
    for (let f = 0; f < use; f++) v[f] = (values[f][rows[d + 1]] - values[f][rows[d - 1]]) / scale[f];
    return v;
  };
  const norm = (v: Float64Array) => Math.hypot(...v);
  const dot = (a: Float64Array, b: Float64Array) => a.reduce((s, x, i) => s + x * b[i], 0);
  // Brightness places the wall: the texture features change over the width of their own neighbourhood and
  // peak on an edge rather than step at it, which would put the wall a pixel or two off. A strip where the
  // brightness change is not clearly above its own fluctuation inside the channel (a streak along the wall
  // hides it) places nothing; sideWall falls back on the consensus line when no strip does.
  const use = strip.intensities;
  let rMax = 0;
  for (let d = lo; d <= hi; d++) rMax = Math.max(rMax, norm(change(d, use)));
  const D: Float64Array[] = [];
  for (let d = Math.max(1, lo - LINE_MAX_PX - 2); d <= hi + 2; d++) D[d] = change(d, use);
  // Clear = at least RATE_FRACTION of the largest rate near the line and RATE_CLEAR times the typical
  // rate between the midline and the line.
  const inside: number[] = [];
  for (let d = 3; d < pick - 2 * W; d++) inside.push(norm(change(d, use)));
  const floor = inside.length >= 4 ? RATE_CLEAR * median(inside) : 0;
  if (rMax < floor) return null;
  // The wall is the first clear peak walking out, so a thin bright wall line is placed at its inner side,
  // not its outer one. A peak is the largest change within 2 rows among the changes in the same
  // direction (the far side of a thin line changes the other way and does not count).
  const isPeak = (d: number) => {
    const r = norm(D[d]);
    for (const q of [d - 2, d - 1, d + 1, d + 2]) if (dot(D[q], D[d]) > 0 && norm(D[q]) > r) return false;
    return true;
  };
  let bestD = -1;
  for (let d = lo; d <= hi; d++) if (norm(D[d]) >= Math.max(RATE_FRACTION * rMax, floor) && isPeak(d)) { bestD = d; break; }
  if (bestD < 0) return null;
  // A thin wall line whose inner side changes far less than its outer side (a bright line only a little
  // brighter than the material): its inner side is a change the other way at most LINE_MAX_PX inside the
  // step just found. `clear` when it passes the same floor as a wall step and LINE_RATE_FRACTION of the
  // largest rate; sideWall decides from all strips whether the wall is such a line.
  let lineD = -1;
  for (let d = Math.max(lo - LINE_MAX_PX, 3); d <= bestD - 2; d++) {
    if (dot(D[d], D[bestD]) < 0 && isPeak(d) && (lineD < 0 || norm(D[d]) > norm(D[lineD]))) lineD = d;
  }
  const line = lineD < 0 ? null : { t: dir * subPixel(D, lineD), clear: norm(D[lineD]) >= Math.max(LINE_RATE_FRACTION * rMax, floor) };
  // The strongest change near the line (a thin line's outer side, where there is one), for sideWall's strongFit.
  let strongD = bestD;
  for (let d = lo; d <= hi; d++) if (norm(D[d]) > norm(D[strongD]) && isPeak(d)) strongD = d;
  return { t: dir * subPixel(D, bestD), contrast: z[pick], line, strong: dir * subPixel(D, strongD) };
}

/** Offsets across a wall over which textureEnd looks, px (outward positive), and its bin widths. */
const TEXTURE_END_FROM_PX = -16, TEXTURE_END_TO_PX = 4, PROFILE_BIN_PX = 0.1, VARIANCE_BIN_PX = 0.5;
/**
 * Least texture variance textureAcross counts, in squared units of full scale: 1e-12 is below the rounding of a
 * 16-bit camera (step^2 / 12 = 1.9e-11), so only images with no noise at all reach it.
 */
const TEXTURE_VARIANCE_FLOOR = 1e-12;
/** Length along the wall over which textureAcross takes the material's local mean, px. */
const TEXTURE_SEGMENT_PX = 64;

/**
 * Where the material's texture ends across a wall: the offset t (px along the outward normal (nx, ny) from
 * `line`) at which the texture's amplitude has fallen to half of the interior's.
 *
 * Every pixel within the wall's visible length and -16 <= t <= 4 is binned by its distance t from the line.
 * The mean profile across the wall, P(t) (bins of 0.1 px, linearly interpolated), is what the wall itself
 * looks like: for a straight wall, a pixel's value is a function of its distance alone, whatever the wall's
 * bands or lines and however the pixel grid cuts them. What is left, r = I - P(t_pixel) in each brightness
 * feature, is the texture (and the camera's noise); its variance V(t) is pooled over cells of a 0.5 px bin
 * by 64 px along the wall, each about its own least-squares straight line in the along-wall position, so a
 * brightness that changes slowly along the wall (uneven light, a line fading out) does not count:
 * V(t) = sum over cells and features of the residual sum of squares / sum (n_cell - 2). V_in is its median
 * at t <= -6, V_out its least value at t >= -2 (at least TEXTURE_VARIANCE_FLOOR), the amplitude
 * sqrt(V - V_out); walking in from the outside, the first crossing of half of sqrt(V_in - V_out), linearly
 * interpolated. For texture much finer across than the blur, the amplitude falls as the blurred share of
 * material, Phi(-t / sigma), which is half at the edge itself (derived). On our renderings, from the true
 * walls, this lies -0.35..+1.0 px from the inner edge for grey textures (within +0.4 but for one band) and
 * -0.65..+0.9 px for compensator colours.
 * Returns the end (null when V_in is not TEXTURE_CONTRAST times V_out: no texture to see, or as much on
 * both sides) and the texture contrast V_in / V_out; null when the wall's pixels do not fill the bins.
 */
function textureAcross(planes: Plane[], line: Line, nx: number, ny: number): { endPx: number | null; contrast: number } | null {
  const { width: w, height: h } = planes[0];
  const seg = clipLine(line, w, h);
  if (!seg) return null;
  const len = Math.hypot(seg.x2 - seg.x1, seg.y2 - seg.y1);
  const ux = (seg.x2 - seg.x1) / len, uy = (seg.y2 - seg.y1) / len;
  const T0 = TEXTURE_END_FROM_PX, T1 = TEXTURE_END_TO_PX, F = planes.length;
  const nFine = Math.round((T1 - T0) / PROFILE_BIN_PX) + 1, nBins = Math.round((T1 - T0) / VARIANCE_BIN_PX) + 1;
  const xs = [seg.x1 + T0 * nx, seg.x1 + T1 * nx, seg.x2 + T0 * nx, seg.x2 + T1 * nx];
  const ys = [seg.y1 + T0 * ny, seg.y1 + T1 * ny, seg.y2 + T0 * ny, seg.y2 + T1 * ny];
  const x0 = Math.max(0, Math.floor(Math.min(...xs))), x1 = Math.min(w - 1, Math.ceil(Math.max(...xs)));
  const y0 = Math.max(0, Math.floor(Math.min(...ys))), y1 = Math.min(h - 1, Math.ceil(Math.max(...ys)));
  /** Calls fn for every pixel near the wall's visible length, with its distance t from the line and along it a. */
  const eachPixel = (fn: (i: number, t: number, a: number) => void) => {
    for (let y = y0; y <= y1; y++) {
      for (let x = x0; x <= x1; x++) {
        const dx = x - seg.x1, dy = y - seg.y1, a = dx * ux + dy * uy, t = dx * nx + dy * ny;
        if (a >= 2 && a <= len - 2 && t >= T0 && t <= T1) fn(y * w + x, t, a);
      }
    }
  };
  const sums = new Float64Array(nFine * F), counts = new Float64Array(nFine);
  eachPixel((i, t) => {
    const k = Math.round((t - T0) / PROFILE_BIN_PX);
    counts[k]++;
    for (let f = 0; f < F; f++) sums[k * F + f] += planes[f].data[i];
  });
  // The mean profile; bins no pixel fell in (a wall along the pixel grid) interpolated from their neighbours.
  const filled: number[] = [];
  for (let k = 0; k < nFine; k++) if (counts[k] > 0) filled.push(k);
  if (filled.length < 2) return null;
  const profile = new Float64Array(nFine * F);
  for (let k = 0, j = 0; k < nFine; k++) {
    while (j + 1 < filled.length && filled[j + 1] <= k) j++;
    const lo = filled[j] <= k ? filled[j] : filled[0], hi = filled[Math.min(j + 1, filled.length - 1)];
    const r = hi > lo && k > lo ? Math.min(1, (k - lo) / (hi - lo)) : 0;
    for (let f = 0; f < F; f++) profile[k * F + f] = (sums[lo * F + f] / counts[lo]) * (1 - r) + (sums[hi * F + f] / counts[hi]) * r;
  }
  // The residuals' variance about a straight line in a (least squares) within cells of one 0.5 px bin by
  // TEXTURE_SEGMENT_PX along the wall, pooled: a brightness that changes slowly along the wall (uneven
  // light, a line fading out) is not texture.
  const nSeg = Math.max(1, Math.ceil(len / TEXTURE_SEGMENT_PX)), nCells = nSeg * nBins;
  const n = new Float64Array(nCells), sa = new Float64Array(nCells), saa = new Float64Array(nCells), srr = new Float64Array(nCells);
  const sr = new Float64Array(nCells * F), sar = new Float64Array(nCells * F);
  eachPixel((i, t, a) => {
    const u = (t - T0) / PROFILE_BIN_PX, k = Math.min(nFine - 2, Math.floor(u)), r = u - k;
    const g = Math.min(nSeg - 1, Math.floor(a / TEXTURE_SEGMENT_PX)), cell = g * nBins + Math.round((t - T0) / VARIANCE_BIN_PX);
    const al = a - g * TEXTURE_SEGMENT_PX;
    n[cell]++; sa[cell] += al; saa[cell] += al * al;
    for (let f = 0; f < F; f++) {
      const d = planes[f].data[i] - profile[k * F + f] * (1 - r) - profile[(k + 1) * F + f] * r;
      sr[cell * F + f] += d; sar[cell * F + f] += al * d; srr[cell] += d * d;
    }
  });
  const ts: number[] = [], V: number[] = [];
  for (let b = 0; b < nBins; b++) {
    let ss = 0, dof = 0;
    for (let g = 0; g < nSeg; g++) {
      const c = g * nBins + b, m = n[c];
      if (m < 3) continue;
      const aa = saa[c] - (sa[c] * sa[c]) / m;
      let rest = srr[c];
      for (let f = 0; f < F; f++) {
        const ar = sar[c * F + f] - (sa[c] * sr[c * F + f]) / m;
        rest -= (sr[c * F + f] ** 2) / m + (aa > 0 ? (ar * ar) / aa : 0);
      }
      ss += rest;
      dof += m - 2;
    }
    ts.push(T0 + b * VARIANCE_BIN_PX);
    V.push(dof >= 16 ? ss / dof : NaN);
  }
  const vIn = median(V.filter((_, j) => ts[j] <= -6));
  const near = V.filter((v, j) => ts[j] >= -2 && Number.isFinite(v));
  if (near.length < 3 || !Number.isFinite(vIn)) return null;
  // Variances below the floor are rounding, not light (an image with no noise at all).
  const vOut = Math.max(Math.min(...near), TEXTURE_VARIANCE_FLOOR);
  const contrast = vIn / vOut;
  if (!(contrast > TEXTURE_CONTRAST)) return { endPx: null, contrast };
  const half = 0.5 * Math.sqrt(vIn - vOut);
  const amp = V.map((v) => Math.sqrt(Math.max(0, v - vOut)));
  for (let j = ts.length - 1; j > 0; j--) {
    if (!(amp[j] < half)) continue;
    if (amp[j - 1] >= half) return { endPx: ts[j - 1] + ((ts[j] - ts[j - 1]) * (amp[j - 1] - half)) / (amp[j - 1] - amp[j]), contrast };
  }
  return { endPx: null, contrast };
}

/** textureAcross's end of the texture alone (null where it places none). */
function textureEnd(planes: Plane[], line: Line, nx: number, ny: number): number | null {
  return textureAcross(planes, line, nx, ny)?.endPx ?? null;
}

/** Sub-pixel place of a peak of change at row d: a parabola through the change along its own direction at d - 1, d, d + 1. */
function subPixel(D: Float64Array[], d: number): number {
  const n = Math.hypot(...D[d]);
  const along = (q: number) => D[q].reduce((s, x, i) => s + (x * D[d][i]) / n, 0);
  const [a, b, c] = [along(d - 1), along(d), along(d + 1)];
  const den = a - 2 * b + c;
  return d + (den < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (a - c)) / den)) : 0);
}

interface Line { px: number; py: number; ux: number; uy: number }

/**
 * A line through the points that most of them agree with: every pair proposes a line, the one with the
 * most points within 1.5 px wins (RANSAC-style, but exhaustive since there are few points), and the
 * total-least-squares line through those points is the answer.
 */
function robustLine(pts: { x: number; y: number }[]): { line: Line; rms: number; kept: number } | null {
  const n = pts.length;
  if (n < 3) return null;
  const tol = 1.5;
  let bestIn: number[] = [];
  let bestSpread = Infinity;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const dx = pts[j].x - pts[i].x, dy = pts[j].y - pts[i].y, l = Math.hypot(dx, dy);
      if (l < 1e-9) continue;
      const inl: number[] = [];
      let spread = 0;
      for (let k = 0; k < n; k++) {
        const r = Math.abs((pts[k].x - pts[i].x) * dy - (pts[k].y - pts[i].y) * dx) / l;
        if (r <= tol) { inl.push(k); spread += r * r; }
      }
      if (inl.length > bestIn.length || (inl.length === bestIn.length && spread < bestSpread)) { bestIn = inl; bestSpread = spread; }
    }
  }
  if (bestIn.length < 3) return null;
  const use = bestIn.map((k) => pts[k]);
  const f = tls(use);
  if (!f) return null;
  let s2 = 0;
  for (const p of use) s2 += ((p.x - f.px) * -f.uy + (p.y - f.py) * f.ux) ** 2;
  return { line: f, rms: Math.sqrt(s2 / use.length), kept: use.length };
}

function tls(pts: { x: number; y: number }[]): Line | null {
  const n = pts.length;
  if (n < 2) return null;
  let mx = 0, my = 0;
  for (const p of pts) { mx += p.x; my += p.y; }
  mx /= n; my /= n;
  let sxx = 0, sxy = 0, syy = 0;
  for (const p of pts) { const u = p.x - mx, v = p.y - my; sxx += u * u; sxy += u * v; syy += v * v; }
  const phi = 0.5 * Math.atan2(2 * sxy, sxx - syy); // direction of largest spread
  return { px: mx, py: my, ux: Math.cos(phi), uy: Math.sin(phi) };
}

/** The part of a line inside the image's pixel-centre rectangle, or null. */
function clipLine(l: Line, width: number, height: number): Segment | null {
  let t0 = -Infinity, t1 = Infinity;
  const clip = (p: number, u: number, lo: number, hi: number) => {
    if (Math.abs(u) < 1e-12) { if (p < lo || p > hi) { t0 = Infinity; } return; }
    const a = (lo - p) / u, b = (hi - p) / u;
    t0 = Math.max(t0, Math.min(a, b)); t1 = Math.min(t1, Math.max(a, b));
  };
  clip(l.px, l.ux, 0, width - 1);
  clip(l.py, l.uy, 0, height - 1);
  if (!(t1 > t0)) return null;
  return { x1: l.px + t0 * l.ux, y1: l.py + t0 * l.uy, x2: l.px + t1 * l.ux, y2: l.py + t1 * l.uy };
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

function argmax(a: Float32Array, ok: (i: number) => boolean): number {
  let best = -1, v = -Infinity;
  for (let i = 0; i < a.length; i++) if (a[i] > v && ok(i)) { v = a[i]; best = i; }
  return best;
}

/** Median of the finite values (NaN for none). */
function median(v: ArrayLike<number>): number {
  return sharedMedian(Array.from(v).filter(Number.isFinite));
}

/** 98th minus 2nd percentile: the spread of a feature, untroubled by a few extreme pixels. */
function robustRange(v: ArrayLike<number>): number {
  const n = v.length;
  if (n === 0) return 0;
  const step = Math.max(1, Math.floor(n / 20000));
  const a: number[] = [];
  for (let i = 0; i < n; i += step) if (Number.isFinite(v[i])) a.push(v[i]);
  a.sort((p, q) => p - q);
  if (a.length === 0) return 0;
  return a[Math.floor(0.98 * (a.length - 1))] - a[Math.floor(0.02 * (a.length - 1))];
}

/** Mean of k x k blocks (the last partial blocks averaged over what they hold). */
function blockAverage(p: Plane, k: number): Plane {
  if (k <= 1) return { width: p.width, height: p.height, data: Float32Array.from(p.data) };
  const w = Math.ceil(p.width / k), h = Math.ceil(p.height / k);
  const sum = new Float64Array(w * h), cnt = new Uint32Array(w * h);
  // Each column's block worked out once, and a plain loop for the means: a division per pixel and a mapped copy
  // took three times as long.
  const block = Int32Array.from({ length: p.width }, (_, x) => (x / k) | 0);
  for (let y = 0; y < p.height; y++) {
    const row = ((y / k) | 0) * w, at = y * p.width;
    for (let x = 0; x < p.width; x++) { const j = row + block[x]; sum[j] += p.data[at + x]; cnt[j]++; }
  }
  const data = new Float32Array(w * h);
  for (let j = 0; j < data.length; j++) data[j] = sum[j] / cnt[j];
  return { width: w, height: h, data };
}

/** Separable Gaussian blur, edges reflected. */
function gaussianBlur(p: Plane, sigma: number): Plane {
  const r = Math.ceil(3 * sigma);
  const k = Float64Array.from({ length: 2 * r + 1 }, (_, i) => Math.exp(-0.5 * ((i - r) / sigma) ** 2));
  const ks = k.reduce((a, b) => a + b, 0);
  for (let i = 0; i < k.length; i++) k[i] /= ks;
  const { width: w, height: h, data } = p;
  const refl = (i: number, n: number) => (i < 0 ? Math.min(n - 1, -i - 1) : i >= n ? Math.max(0, 2 * n - i - 1) : i);
  const tmp = new Float32Array(w * h), out = new Float32Array(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) {
    let v = 0;
    for (let j = -r; j <= r; j++) v += k[j + r] * data[y * w + refl(x + j, w)];
    tmp[y * w + x] = v;
  }
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) {
    let v = 0;
    for (let j = -r; j <= r; j++) v += k[j + r] * tmp[refl(y + j, h) * w + x];
    out[y * w + x] = v;
  }
  return { width: w, height: h, data: out };
}

/** Central differences (one-sided at the edges). */
function gradient(p: Plane): { gx: Float32Array; gy: Float32Array } {
  const { width: w, height: h, data } = p;
  const gx = new Float32Array(w * h), gy = new Float32Array(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) {
    const xm = Math.max(0, x - 1), xp = Math.min(w - 1, x + 1), ym = Math.max(0, y - 1), yp = Math.min(h - 1, y + 1);
    gx[y * w + x] = (data[y * w + xp] - data[y * w + xm]) / (xp - xm || 1);
    gy[y * w + x] = (data[yp * w + x] - data[ym * w + x]) / (yp - ym || 1);
  }
  return { gx, gy };
}
