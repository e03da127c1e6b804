import { describe, expect, it } from 'vitest';
import { stationDrawing } from '../../app/components/stationMarks.ts';
import type { ProfileResult } from '../../src/analyses/index.ts';
import type { Segment } from '../../src/channel/index.ts';

/** Stations split the walls' common stretch into equal parts along the axis (src/channel/profile.ts). */
function stationsOver(walls: [Segment, Segment], count: number, alongMin: number, alongMax: number): Pick<ProfileResult, 'walls' | 'stations'> {
  const span = alongMax - alongMin;
  return {
    walls,
    stations: Array.from({ length: count }, (_, k) => ({ station: k, alongFromPx: alongMin + (span * k) / count, alongToPx: alongMin + (span * (k + 1)) / count })) as ProfileResult['stations'],
  };
}

describe('stationDrawing: station boundaries across the channel', () => {
  it('a straight horizontal channel: boundaries are vertical, from wall to wall, at equal steps', () => {
    // Walls y = 40 and y = 160 from x = 10 to 310: axis along x through y = 100, origin at x = 160, so the
    // common stretch runs from along = -150 to +150 (geometry of the construction).
    const walls: [Segment, Segment] = [{ x1: 10, y1: 40, x2: 310, y2: 40 }, { x1: 10, y1: 160, x2: 310, y2: 160 }];
    const d = stationDrawing(stationsOver(walls, 3, -150, 150));
    expect(d.boundaries).toHaveLength(4);
    const xs = d.boundaries.map((b) => (b.x1 + b.x2) / 2).sort((a, b) => a - b);
    [10, 110, 210, 310].forEach((x, k) => expect(xs[k]).toBeCloseTo(x, 9));
    for (const b of d.boundaries) {
      expect(b.x1).toBeCloseTo(b.x2, 9);
      expect([b.y1, b.y2].sort((p, q) => p - q)).toEqual([expect.closeTo(40, 9), expect.closeTo(160, 9)]);
    }
    // numbers sit in the middle of each station on the axis, with the table's numbers
    expect(d.labels.map((l) => l.text)).toEqual(['0', '1', '2']);
    for (const l of d.labels) expect(l.y).toBeCloseTo(100, 9);
    expect(d.labels.map((l) => l.x).sort((a, b) => a - b)).toEqual([expect.closeTo(60, 9), expect.closeTo(160, 9), expect.closeTo(260, 9)]);
  });

  it('a tilted, tapering channel: each boundary is perpendicular to the axis and ends on the two walls', () => {
    const walls: [Segment, Segment] = [{ x1: 0, y1: 20, x2: 200, y2: 120 }, { x1: 0, y1: 100, x2: 200, y2: 180 }];
    const d = stationDrawing(stationsOver(walls, 4, -60, 60));
    // Axis = bisector of the two wall directions (src/channel/geometry.ts).
    const u = walls.map((w) => { const l = Math.hypot(w.x2 - w.x1, w.y2 - w.y1); return [(w.x2 - w.x1) / l, (w.y2 - w.y1) / l]; });
    const ax = u[0][0] + u[1][0], ay = u[0][1] + u[1][1];
    // a point lies on the line of a wall when its cross product with the wall direction vanishes
    const onLine = (w: Segment, x: number, y: number) => (w.x2 - w.x1) * (y - w.y1) - (w.y2 - w.y1) * (x - w.x1);
    expect(d.boundaries).toHaveLength(5);
    for (const b of d.boundaries) {
      expect(((b.x2 - b.x1) * ax + (b.y2 - b.y1) * ay) / Math.hypot(b.x2 - b.x1, b.y2 - b.y1)).toBeCloseTo(0, 9);
      expect(onLine(walls[0], b.x1, b.y1)).toBeCloseTo(0, 6);
      expect(onLine(walls[1], b.x2, b.y2)).toBeCloseTo(0, 6);
    }
  });
});
