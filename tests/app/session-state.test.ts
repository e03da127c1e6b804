import { describe, expect, it } from 'vitest';
import { sessionReducer, orientIsStale } from '../../app/state/session.ts';
import { newSession, DEFAULT_SETTINGS, type ImageMeta } from '../../app/storage/records.ts';
import type { OrientResult, ProfileResult } from '../../src/analyses/index.ts';

const t0 = new Date('2026-01-01T00:00:00Z'), t1 = new Date('2026-01-01T00:05:00Z');
const img = (id: string): ImageMeta => ({ id, name: `${id}.png`, type: 'image/png', size: 10, page: 0, addedAt: t0.toISOString() });
const walls = { walls: [{ x1: 0, y1: 0, x2: 100, y2: 0 }, { x1: 0, y1: 50, x2: 100, y2: 50 }] as [ { x1: number; y1: number; x2: number; y2: number }, { x1: number; y1: number; x2: number; y2: number }] };
const reduce = (s: ReturnType<typeof newSession>, a: Parameters<typeof sessionReducer>[1]) => sessionReducer(s, a, () => t1);

describe('sessionReducer', () => {
  it('addImages selects the first new image and gives each empty work', () => {
    const s = reduce(newSession('s', 'x', t0), { type: 'addImages', images: [img('a'), img('b')] });
    expect(s.activeImageId).toBe('a');
    expect(Object.keys(s.work)).toEqual(['a', 'b']);
    expect(s.work.b).toEqual({ walls: null, wallsFound: false, orient: null, profile: null });
    expect(s.updatedAt).toBe(t1.toISOString());
  });

  it('removing the shown image shows the next one and drops its work', () => {
    let s = reduce(newSession('s', 'x', t0), { type: 'addImages', images: [img('a'), img('b')] });
    s = reduce(s, { type: 'removeImage', id: 'a' });
    expect(s.activeImageId).toBe('b');
    expect(s.work.a).toBeUndefined();
  });

  it('new walls drop the old profile (it was for other walls) but keep the orientation result', () => {
    let s = reduce(newSession('s', 'x', t0), { type: 'addImages', images: [img('a')] });
    const orient = { schemaVersion: 1, analysis: 'orient' } as OrientResult;
    const profile = { schemaVersion: 1, analysis: 'profile', walls: walls.walls, wallsFound: true } as ProfileResult;
    s = reduce(s, { type: 'orient', id: 'a', result: orient });
    s = reduce(s, { type: 'profile', id: 'a', result: profile });
    expect(s.work.a.walls).toEqual(walls);
    expect(s.work.a.wallsFound).toBe(true);
    s = reduce(s, { type: 'walls', id: 'a', channel: walls, found: false });
    expect(s.work.a.profile).toBeNull();
    expect(s.work.a.orient).toBe(orient);
  });

  it('an action on an unknown image or an empty rename changes nothing (same object, no new time)', () => {
    const s = newSession('s', 'x', t0);
    expect(reduce(s, { type: 'select', id: 'nope' })).toBe(s);
    expect(reduce(s, { type: 'rename', name: '   ' })).toBe(s);
    expect(reduce(s, { type: 'orient', id: 'nope', result: {} as OrientResult })).toBe(s);
  });

  it('orientIsStale compares the result options with the settings', () => {
    const r = { options: { sigmaPx: 2, weighting: 'coherency' }, axisDeg: null } as unknown as OrientResult;
    expect(orientIsStale(r, DEFAULT_SETTINGS)).toBe(false);
    expect(orientIsStale(r, { ...DEFAULT_SETTINGS, sigmaPx: 3 })).toBe(true);
    expect(orientIsStale(r, { ...DEFAULT_SETTINGS, axisDeg: 0 })).toBe(true);
  });
});
