/**
 * Where a channel profile's stations lie on the image: each station boundary as a segment across the
 * channel (along the normal to the channel axis, from one wall to the other), and each station's number
 * at its middle on the axis, the same numbers as the station table.
 */
// The geometry module alone: the channel index also brings the wall finder and with it opencv.js,
// which the page must not load (it runs in the worker).
import { channelFrame, transverse, type Segment } from '../../src/channel/index.ts';
import type { ProfileResult } from '../../src/analyses/index.ts';

/** The colour of the station lines and labels, in the viewer and in the exported picture. */
export const STATION_COLOUR = '#7fd8ff';

export interface StationLabel { x: number; y: number; text: string }
export interface StationDrawing { boundaries: Segment[]; labels: StationLabel[] }

/**
 * The boundaries (both ends and every boundary between stations) and the labels of a profile's stations.
 * A boundary at along-axis coordinate a starts from the axis point O + a u and runs along the normal n to
 * the two walls: with s and the local width w from `transverse`, wall 0 is at t0 = -(1 + s) w / 2 and
 * wall 1 at t0 + w (s = -1 - 2 t0 / w, src/channel/geometry.ts). Image pixels, x right, y down.
 */
export function stationDrawing(p: Pick<ProfileResult, 'walls' | 'stations'>): StationDrawing {
  const ch = { walls: p.walls };
  const f = channelFrame(ch);
  const across = (along: number): Segment => {
    const px = f.ox + along * f.ux, py = f.oy + along * f.uy;
    const t = transverse(f, ch, px, py);
    const t0 = (-(1 + t.s) * t.width) / 2, t1 = t0 + t.width;
    return { x1: px + t0 * f.nx, y1: py + t0 * f.ny, x2: px + t1 * f.nx, y2: py + t1 * f.ny };
  };
  const boundaries: Segment[] = [];
  const labels: StationLabel[] = [];
  p.stations.forEach((st, k) => {
    if (k === 0) boundaries.push(across(st.alongFromPx));
    boundaries.push(across(st.alongToPx));
    const mid = across((st.alongFromPx + st.alongToPx) / 2);
    labels.push({ x: (mid.x1 + mid.x2) / 2, y: (mid.y1 + mid.y2) / 2, text: String(st.station) });
  });
  return { boundaries, labels };
}
