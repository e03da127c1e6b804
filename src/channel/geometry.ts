import { InputError } from '../common/index.ts';
import { radToDeg, wrapAxialDeg } from '../common/index.ts';

/** A straight line segment in pixel coordinates (x right, y down). */
export interface Segment { x1: number; y1: number; x2: number; y2: number }

/** A channel (or fibre) between two walls: s = -1 at walls[0], +1 at walls[1]. */
export interface Channel { walls: [Segment, Segment] }

/** The frame every profile is measured in: axis = bisector of the two walls. */
export interface ChannelFrame {
  /** Unit vector along the channel axis, pixel coordinates. */
  ux: number; uy: number;
  /** Unit normal (u rotated by +90 deg in pixel coordinates). */
  nx: number; ny: number;
  /** Origin on the axis: the midpoint of the walls' midpoints. */
  ox: number; oy: number;
  /** Range of the along-axis coordinate covered by both walls, px. */
  alongMin: number; alongMax: number;
  /** Axis angle in degrees, CCW on screen, (-90, 90]. */
  axisDeg: number;
  /** Angle between the walls in degrees (0 = parallel). */
  taperDeg: number;
}

/** Parses "x1,y1,x2,y2;x3,y3,x4,y4" (pixel coordinates) into a channel. */
export function parseWalls(text: string): Channel {
  const parts = text.split(';').map((p) => p.trim()).filter(Boolean);
  const segs = parts.map((p) => p.split(',').map((v) => Number(v.trim())));
  if (segs.length !== 2 || segs.some((s) => s.length !== 4 || s.some((v) => !Number.isFinite(v)))) {
    throw new InputError(`walls "${text}" are not two segments`, 'Write them as "x1,y1,x2,y2;x3,y3,x4,y4" in pixels');
  }
  const [a, b] = segs.map(([x1, y1, x2, y2]) => ({ x1, y1, x2, y2 }));
  return { walls: [a, b] };
}

/** Walls as `--walls` takes them, "x1,y1,x2,y2;x3,y3,x4,y4", every coordinate exact (parseWalls reads back the same channel). */
export function wallsText(walls: readonly Segment[]): string {
  return walls.map((s) => [s.x1, s.y1, s.x2, s.y2].map(String).join(',')).join(';');
}

/** Step to which walls drawn or dragged by hand are kept, px: a tenth of a pixel, so their `--walls` text stays short. */
export const WALL_STEP_PX = 0.1;

/** The channel with every wall end on the WALL_STEP_PX grid. */
export function snapWalls(ch: Channel): Channel {
  const snap = (v: number) => Math.round(v / WALL_STEP_PX) / (1 / WALL_STEP_PX);
  const seg = (s: Segment): Segment => ({ x1: snap(s.x1), y1: snap(s.y1), x2: snap(s.x2), y2: snap(s.y2) });
  return { walls: [seg(ch.walls[0]), seg(ch.walls[1])] };
}

const len = (s: Segment) => Math.hypot(s.x2 - s.x1, s.y2 - s.y1);

/**
 * Builds the channel frame. The axis is the bisector of the wall directions, so a tapered channel's
 * s is still measured perpendicular to one axis and normalised by the local width.
 */
export function channelFrame(ch: Channel): ChannelFrame {
  const [a, b] = ch.walls;
  if (len(a) < 2 || len(b) < 2) throw new InputError('a channel wall is shorter than 2 px', 'Draw each wall along its full length');
  let ax = (a.x2 - a.x1) / len(a), ay = (a.y2 - a.y1) / len(a);
  let bx = (b.x2 - b.x1) / len(b), by = (b.y2 - b.y1) / len(b);
  if (ax * bx + ay * by < 0) { bx = -bx; by = -by; }
  const cosTaper = Math.min(1, ax * bx + ay * by);
  const taperDeg = radToDeg(Math.acos(cosTaper));
  if (taperDeg > 60) throw new InputError(`the walls meet at ${taperDeg.toFixed(0)} deg`, 'Give two walls of one channel, roughly facing each other');
  let ux = ax + bx, uy = ay + by;
  const ul = Math.hypot(ux, uy);
  ux /= ul; uy /= ul;
  // Orient the axis so that the first wall lies on the negative-normal side: s = -1 there.
  let nx = -uy, ny = ux;
  const ma = { x: (a.x1 + a.x2) / 2, y: (a.y1 + a.y2) / 2 }, mb = { x: (b.x1 + b.x2) / 2, y: (b.y1 + b.y2) / 2 };
  const ox = (ma.x + mb.x) / 2, oy = (ma.y + mb.y) / 2;
  if ((ma.x - ox) * nx + (ma.y - oy) * ny > 0) { ux = -ux; uy = -uy; nx = -nx; ny = -ny; }
  const along = (x: number, y: number) => (x - ox) * ux + (y - oy) * uy;
  const ra = [along(a.x1, a.y1), along(a.x2, a.y2)].sort((p, q) => p - q);
  const rb = [along(b.x1, b.y1), along(b.x2, b.y2)].sort((p, q) => p - q);
  const alongMin = Math.max(ra[0], rb[0]), alongMax = Math.min(ra[1], rb[1]);
  if (alongMax - alongMin < 2) throw new InputError('the two walls do not overlap along the channel', 'Draw both walls over the same stretch of channel');
  const f: ChannelFrame = { ux, uy, nx, ny, ox, oy, alongMin, alongMax, taperDeg, axisDeg: wrapAxialDeg(radToDeg(Math.atan2(-uy, ux))) };
  const wa = transverse(f, ch, ox, oy);
  if (!Number.isFinite(wa.width) || wa.width < 2) throw new InputError('the walls are less than 2 px apart', 'Check the wall coordinates');
  return f;
}

/** Distance t along the normal from (px, py) to the line of a segment; NaN if parallel to the normal. */
function hitAlongNormal(f: ChannelFrame, s: Segment, px: number, py: number): number {
  const dx = s.x2 - s.x1, dy = s.y2 - s.y1;
  const den = f.nx * dy - f.ny * dx;
  if (Math.abs(den) < 1e-12) return NaN;
  return ((s.x1 - px) * dy - (s.y1 - py) * dx) / den;
}

/** A linear function of pixel position: value = c + cx x + cy y. */
export interface Linear { c: number; cx: number; cy: number }

/**
 * The distances t0, t1 along the normal to each wall and the along-axis coordinate are linear in
 * (x, y): returned as coefficients so per-pixel loops need only additions.
 */
export function transverseLinear(f: ChannelFrame, ch: Channel): { t0: Linear; t1: Linear; along: Linear } {
  const lin = (s: Segment): Linear => {
    const dx = s.x2 - s.x1, dy = s.y2 - s.y1;
    const den = f.nx * dy - f.ny * dx;
    return { c: (s.x1 * dy - s.y1 * dx) / den, cx: -dy / den, cy: dx / den };
  };
  return { t0: lin(ch.walls[0]), t1: lin(ch.walls[1]), along: { c: -(f.ox * f.ux + f.oy * f.uy), cx: f.ux, cy: f.uy } };
}

/**
 * Transverse coordinate of a point: the line through it along the normal meets wall 0 at t0 and
 * wall 1 at t1; s = -1 + 2 (0 - t0) / (t1 - t0). Also returns the local width in px.
 */
export function transverse(f: ChannelFrame, ch: Channel, px: number, py: number): { s: number; width: number; along: number } {
  const t0 = hitAlongNormal(f, ch.walls[0], px, py), t1 = hitAlongNormal(f, ch.walls[1], px, py);
  const width = t1 - t0;
  return { s: -1 + (2 * -t0) / width, width, along: (px - f.ox) * f.ux + (py - f.oy) * f.uy };
}

/**
 * The channel's local axis direction at a pixel, radians CCW on screen: the walls' directions blended by
 * the pixel's place across the width (s = -1 at the first wall, +1 at the second), so in a taper the
 * axis turns from one wall's direction to the other's; the bisector on the midline.
 */
export function localAxisRadAt(ch: Channel): (x: number, y: number) => number {
  const f = channelFrame(ch);
  const [a, b] = ch.walls;
  const unit = (s: Segment) => {
    const l = Math.hypot(s.x2 - s.x1, s.y2 - s.y1);
    let ux = (s.x2 - s.x1) / l, uy = (s.y2 - s.y1) / l;
    if (ux * f.ux + uy * f.uy < 0) { ux = -ux; uy = -uy; }
    return { ux, uy };
  };
  const ua = unit(a), ub = unit(b);
  return (x, y) => {
    const { s } = transverse(f, ch, x, y);
    const w = Math.min(1, Math.max(0, (s + 1) / 2));
    const ux = (1 - w) * ua.ux + w * ub.ux, uy = (1 - w) * ua.uy + w * ub.uy;
    return Math.atan2(-uy, ux);
  };
}
