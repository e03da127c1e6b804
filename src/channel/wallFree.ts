import type { Plane } from '../common/index.ts';
import { derivativeReachPx, integrationReachPx, recomputeWithCertainty, type FieldPatch, type OrientationField } from '../orientation/index.ts';
import { channelFrame, transverseLinear, type Channel } from './geometry.ts';

/**
 * Distance from a wall within which intensities are left out: the optics' blur spreads the wall's own
 * edge over a pixel or two, and a wall placed by hand or found may be a pixel off.
 */
export const WALL_CLEARANCE_PX = 2;

/**
 * The texture field inside a channel with the walls' own edges kept out of it. Intensities within
 * WALL_CLEARANCE_PX of a wall (or outside the channel) get certainty 0: a derivative filter reaching them
 * would read the wall's edge gradient, which runs along the wall and so would read as order along the
 * axis. Every pixel whose derivative or integration window reaches them is recomputed by normalised
 * (differential) convolution from the material's intensities only (recomputeWithCertainty; Knutsson &
 * Westin 1993), so gradients are read up to the clearance. Pixels farther in are unchanged.
 * Returns the recomputed pixels (read the field with them through withFieldPatch) and the clearance used,
 * for the result's options.
 */
export function wallFreeTexturePatch(plane: Plane, field: OrientationField, channel: Channel): { patch: FieldPatch; clearancePx: number } {
  const clearance = WALL_CLEARANCE_PX;
  const reach = clearance + derivativeReachPx(field) + integrationReachPx(field) + 1;
  const frame = channelFrame(channel);
  const L = transverseLinear(frame, channel);
  const { width, height } = plane;
  const certainty = new Uint8Array(width * height);
  const pixels: number[] = [];
  for (let y = 0; y < height; y++) {
    let t0 = L.t0.c + L.t0.cy * y, t1 = L.t1.c + L.t1.cy * y;
    for (let x = 0; x < width; x++, t0 += L.t0.cx, t1 += L.t1.cx) {
      // t0 <= 0 <= t1 inside: distances along the normal to the first and second wall.
      if (!(t0 < 0 && t1 > 0)) continue;
      const d = Math.min(-t0, t1);
      const i = y * width + x;
      if (d >= clearance) certainty[i] = 1;
      if (d < reach) pixels.push(i);
    }
  }
  return { patch: recomputeWithCertainty(plane, field, certainty, pixels), clearancePx: clearance };
}
