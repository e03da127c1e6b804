/**
 * Channel geometry of the validation renderer: wall lines from an axis angle, width, taper and offset;
 * clipping to the visible frame; and the transverse coordinate s computed from two wall segments (the
 * definition the analyses promise: s = -1 at the first wall, +1 at the second, measured along the normal
 * to the bisector of the wall directions and normalised by the local width). Written from that
 * definition, not from the project's code. Coordinates: x right, y down, pixel centres at integers;
 * angles counter-clockwise on screen from +x.
 */

export interface Segment { x1: number; y1: number; x2: number; y2: number }

/** A straight line: a point on it and a unit direction (screen coordinates). */
export interface Line { px: number; py: number; dx: number; dy: number }

/** Unit vector of an on-screen angle (CCW from +x, y down). */
export function dirOf(angleRad: number): [number, number] {
  return [Math.cos(angleRad), -Math.sin(angleRad)];
}

export interface ChannelGeometry {
  /** Axis angle (CCW on screen), radians, as given. */
  axisRad: number;
  /** Full angle between the walls, radians; wall 0 is turned by +taper/2 from the axis, wall 1 by -taper/2. */
  taperRad: number;
  /** Unit axis u and unit normal n towards the first wall (up for a channel within 45 deg of horizontal, else left). */
  ux: number; uy: number; nx: number; ny: number;
  /** Where the centre line crosses the normal through the image centre shifted by the offset. */
  cx: number; cy: number;
  /** Inner wall lines (where the ordered interior starts); walls[0] on the +n side. */
  walls: [Line, Line];
  /** Outward unit normals of the walls (away from the interior). */
  outward: [[number, number], [number, number]];
}

/**
 * Wall lines of a channel whose axis makes `axisDeg` with +x, interior width `widthPx` measured along the
 * normal through the centre point, walls turned by +-taperDeg/2 about the axis (so the wall bisector is the
 * axis), centre point = image centre moved by `offsetPx` along the normal n (towards the first wall for
 * positive offsets). The first wall is the upper one of a channel within 45 deg of horizontal and the left
 * one of a channel steeper than that (n points up, or left).
 */
export function channelGeometry(w: number, h: number, axisDeg: number, widthPx: number, taperDeg: number, offsetPx: number): ChannelGeometry {
  const a = (axisDeg * Math.PI) / 180, t = (taperDeg * Math.PI) / 180;
  const [ux, uy] = dirOf(a);
  let [nx, ny] = dirOf(a + Math.PI / 2);
  if (Math.abs(wrapAxialDeg(axisDeg)) <= 45 ? ny > 0 : nx > 0) { nx = -nx; ny = -ny; }
  const cx = (w - 1) / 2 + offsetPx * nx, cy = (h - 1) / 2 + offsetPx * ny;
  const line = (side: 1 | -1): Line => {
    const [dx, dy] = dirOf(a + (side * t) / 2);
    return { px: cx + (side * widthPx * nx) / 2, py: cy + (side * widthPx * ny) / 2, dx, dy };
  };
  const walls: [Line, Line] = [line(1), line(-1)];
  // Each wall's normal pointing away from the centre point.
  const away = (l: Line): [number, number] => ((l.px - cx) * -l.dy + (l.py - cy) * l.dx >= 0 ? [-l.dy, l.dx] : [l.dy, -l.dx]);
  const outward: [[number, number], [number, number]] = [away(walls[0]), away(walls[1])];
  return { axisRad: a, taperRad: t, ux, uy, nx, ny, cx, cy, walls, outward };
}

/** Signed distance of (x, y) from wall k, positive outside the interior (px). */
export function outsideDistance(g: ChannelGeometry, k: 0 | 1, x: number, y: number): number {
  const l = g.walls[k], [ox, oy] = g.outward[k];
  return (x - l.px) * ox + (y - l.py) * oy;
}

/**
 * The part of a line inside the rectangle [0, w-1] x [0, h-1] (the centres of the visible pixels), or null.
 * Endpoints are ordered so that x1 <= x2 (y1 <= y2 for a vertical line).
 */
export function clipLine(l: Line, w: number, h: number): Segment | null {
  let t0 = -Infinity, t1 = Infinity;
  const clip = (p: number, d: number, lo: number, hi: number): boolean => {
    if (Math.abs(d) < 1e-12) return p >= lo && p <= hi;
    let a = (lo - p) / d, b = (hi - p) / d;
    if (a > b) [a, b] = [b, a];
    t0 = Math.max(t0, a); t1 = Math.min(t1, b);
    return t0 <= t1;
  };
  if (!clip(l.px, l.dx, 0, w - 1) || !clip(l.py, l.dy, 0, h - 1) || t1 - t0 < 1e-9) return null;
  let s: Segment = { x1: l.px + t0 * l.dx, y1: l.py + t0 * l.dy, x2: l.px + t1 * l.dx, y2: l.py + t1 * l.dy };
  if (s.x2 < s.x1 - 1e-9 || (Math.abs(s.x2 - s.x1) <= 1e-9 && s.y2 < s.y1)) s = { x1: s.x2, y1: s.y2, x2: s.x1, y2: s.y1 };
  return s;
}

export const segmentLength = (s: Segment) => Math.hypot(s.x2 - s.x1, s.y2 - s.y1);

/**
 * The frame of two wall segments: unit axis along the bisector of the wall directions, unit normal, and
 * the along-axis range covered by both walls. Independent of how each wall's endpoints are ordered.
 */
export interface WallFrame {
  ux: number; uy: number; nx: number; ny: number;
  /** Range of the along-axis coordinate (x ux + y uy) covered by both segments. */
  alongMin: number; alongMax: number;
  /** Bisector angle, degrees CCW on screen, wrapped to (-90, 90]. */
  axisDeg: number;
  walls: [Segment, Segment];
}

export function wallFrame(walls: [Segment, Segment]): WallFrame {
  const unit = (s: Segment): [number, number] => { const L = segmentLength(s); return [(s.x2 - s.x1) / L, (s.y2 - s.y1) / L]; };
  const [ax, ay] = unit(walls[0]);
  let [bx, by] = unit(walls[1]);
  if (ax * bx + ay * by < 0) { bx = -bx; by = -by; }
  const L = Math.hypot(ax + bx, ay + by);
  const ux = (ax + bx) / L, uy = (ay + by) / L;
  const nx = -uy, ny = ux;
  const along = (x: number, y: number) => x * ux + y * uy;
  const range = (s: Segment) => [Math.min(along(s.x1, s.y1), along(s.x2, s.y2)), Math.max(along(s.x1, s.y1), along(s.x2, s.y2))];
  const [a0, a1] = range(walls[0]), [b0, b1] = range(walls[1]);
  return { ux, uy, nx, ny, alongMin: Math.max(a0, b0), alongMax: Math.min(a1, b1), axisDeg: wrapAxialDeg((Math.atan2(-uy, ux) * 180) / Math.PI), walls };
}

/** Parameter t where the line (x, y) + t n meets the line of segment s. */
function hitAlongNormal(f: WallFrame, s: Segment, x: number, y: number): number {
  const dx = s.x2 - s.x1, dy = s.y2 - s.y1;
  return ((s.x1 - x) * dy - (s.y1 - y) * dx) / (f.nx * dy - f.ny * dx);
}

/**
 * Transverse coordinate: the line through (x, y) along the normal to the bisector meets wall 0 at t0 and
 * wall 1 at t1; s = -1 + 2 (0 - t0) / (t1 - t0) (so -1 on wall 0, +1 on wall 1), width = |t1 - t0| px.
 */
export function transverseS(f: WallFrame, x: number, y: number): { s: number; widthPx: number; along: number } {
  const t0 = hitAlongNormal(f, f.walls[0], x, y), t1 = hitAlongNormal(f, f.walls[1], x, y);
  return { s: -1 + (2 * -t0) / (t1 - t0), widthPx: Math.abs(t1 - t0), along: x * f.ux + y * f.uy };
}

/** Axial angle in degrees wrapped to (-90, 90]. */
export function wrapAxialDeg(d: number): number {
  let v = ((d % 180) + 180) % 180;
  if (v > 90) v -= 180;
  return v;
}

/** Largest distance from the points of segment `truth` to the line through `found` (px). */
export function largestLineDistance(truth: Segment, found: Segment): number {
  const L = segmentLength(found);
  const nx = -(found.y2 - found.y1) / L, ny = (found.x2 - found.x1) / L;
  const d = (x: number, y: number) => Math.abs((x - found.x1) * nx + (y - found.y1) * ny);
  // Distance to a line is linear along a straight segment, so its largest value is at an endpoint.
  return Math.max(d(truth.x1, truth.y1), d(truth.x2, truth.y2));
}
