import { describe, expect, it } from 'vitest';
import {
  applied, crossedPolars, effectivePixelSize, newSetup, restoreApplied, restoreSetup, setupCommandOptions, setupPixelSizeUmPerPx,
  setupProblems, SETUP_SCHEMA_VERSION, type SetupRecord,
} from '../../app/setups/setup.ts';
import { createSetupStore, SETUP_PREFIX } from '../../app/storage/setups.ts';
import { createSessionStore, type KeyValue } from '../../app/storage/store.ts';
import { restoreSession } from '../../app/storage/records.ts';
import { exportBackup, importBackup } from '../../app/storage/backup.ts';
import { sessionReducer } from '../../app/state/session.ts';
import { PLATE_OPTIONS } from '../../src/options/index.ts';
import { diameterCommand } from '../../src/cli/commands/diameter.ts';

function memoryKv(): KeyValue & { map: Map<string, unknown> } {
  const map = new Map<string, unknown>();
  return {
    map,
    async get(k) { return map.get(k); },
    async set(k, v) { map.set(k, v); },
    async del(k) { map.delete(k); },
    async keys() { return [...map.keys()]; },
    async entries() { return [...map.entries()] as [IDBValidKey, unknown][]; },
  };
}

const at = new Date('2026-03-01T10:00:00Z');
const opticsSetup = (): SetupRecord => ({
  ...newSetup('s1', 'Bench 2, 10x', at),
  pixelSize: { source: 'optics', cameraPixelUm: 3.45, objectiveMagnification: 10, intermediateMagnification: 1, binning: 1 },
});

describe('set-up pixel size', () => {
  it('from the optics is camera pixel x binning / (objective x adapter)', () => {
    // Arithmetic (object pixel = camera pixel / (objective x adapter)); camera pixels of common sensors, from memory:
    // 3.45 um at 10x and 1x = 0.345 um/px; 5.86 um at 20x and 0.5x = 0.586 um/px; 6.5 um at 20x = 0.325 um/px
    expect(setupPixelSizeUmPerPx({ source: 'optics', cameraPixelUm: 3.45, objectiveMagnification: 10, intermediateMagnification: 1, binning: 1 })).toBeCloseTo(0.345, 12);
    expect(setupPixelSizeUmPerPx({ source: 'optics', cameraPixelUm: 5.86, objectiveMagnification: 20, intermediateMagnification: 0.5, binning: 1 })).toBeCloseTo(0.586, 12);
    expect(setupPixelSizeUmPerPx({ source: 'optics', cameraPixelUm: 6.5, objectiveMagnification: 20, intermediateMagnification: 1, binning: 1 })).toBeCloseTo(0.325, 12);
    // 2x2 binning doubles the pixel (definition of binning): 2 x 0.345
    expect(setupPixelSizeUmPerPx({ source: 'optics', cameraPixelUm: 3.45, objectiveMagnification: 10, intermediateMagnification: 1, binning: 2 })).toBeCloseTo(0.69, 12);
  });

  it('typed or measured values are used as given; none gives null', () => {
    expect(setupPixelSizeUmPerPx({ source: 'typed', pixelSizeUmPerPx: 0.1625 })).toBe(0.1625);
    expect(setupPixelSizeUmPerPx({ source: 'measured', pixelSizeUmPerPx: 0.32499, from: 'micrometer.png' })).toBe(0.32499);
    expect(setupPixelSizeUmPerPx({ source: 'none' })).toBeNull();
  });

  it('an applied set-up overrides the file\'s pixel size (the user can always override it); without one the file\'s is used', () => {
    const a = applied(opticsSetup(), at);
    const px = effectivePixelSize(a, 0.5);
    expect(px.from).toBe('set-up');
    expect(px.umPerPx).toBeCloseTo(0.345, 12);
    expect(effectivePixelSize(applied(newSetup('n', 'no px', at), at), 0.5)).toEqual({ umPerPx: 0.5, from: 'file' });
    expect(effectivePixelSize(null, null)).toEqual({ umPerPx: null, from: 'none' });
  });
});

describe('set-up checks', () => {
  it('names every problem in plain words and none for a good set-up', () => {
    expect(setupProblems(opticsSetup())).toEqual([]);
    const bad = opticsSetup();
    bad.name = ' ';
    bad.train.illuminant = 'candle';
    bad.pixelSize = { source: 'optics', cameraPixelUm: 3.45, objectiveMagnification: 0, intermediateMagnification: 1, binning: 1 };
    const p = setupProblems(bad);
    expect(p).toHaveLength(3);
    expect(p[0]).toMatch(/name/);
    expect(p[1]).toMatch(/illuminant "candle" is not known/);
    expect(p[2]).toMatch(/objective magnification must be a positive number/);
  });

  it('crossed polars are analyser = polariser + 90 deg, axially', () => {
    expect(crossedPolars({ ...newSetup('a', 'a').train })).toBe(true);
    expect(crossedPolars({ ...newSetup('a', 'a').train, polariserDeg: 45, analyserDeg: -45 })).toBe(true);
    expect(crossedPolars({ ...newSetup('a', 'a').train, analyserDeg: 80 })).toBe(false);
  });

  it('command-line options use the names the plate and diameter commands accept', () => {
    const o = setupCommandOptions(opticsSetup());
    expect(o.train).toEqual(['--polariser-deg 0', '--compensator-nm 550', '--compensator-deg 45', '--illuminant 3200K', '--sign positive']);
    expect(o.lengths).toEqual(['--um-per-px 0.345']);
    const plateNames = new Set(PLATE_OPTIONS.map((x) => x.name));
    for (const flag of o.train) expect(plateNames.has(flag.split(' ')[0].slice(2))).toBe(true);
    expect(diameterCommand.options.map((x) => x.name)).toContain('um-per-px');
  });
});

describe('restoreSetup', () => {
  it('upgrades an early record without schemaVersion, filling defaults and saying so', () => {
    const r = restoreSetup({ id: 'old', name: 'Old bench', train: { polariserDeg: 10 } });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.schemaVersion).toBe(SETUP_SCHEMA_VERSION);
    expect(r.value.train).toEqual({ polariserDeg: 10, analyserDeg: 90, compensator: { kind: 'full-wave', retardanceNm: 550, axisDeg: 45 }, illuminant: '3200K' });
    expect(r.value.pixelSize).toEqual({ source: 'none' });
    expect(r.notes).toContain('upgraded from an early record without a version');
  });

  it('replaces unreadable fields with defaults and names each one', () => {
    const r = restoreSetup({ schemaVersion: 1, kind: 'setup', id: 'x', name: 'X', train: { polariserDeg: 'left', illuminant: 'candle', compensator: { kind: 'wedge' } }, pixelSize: { source: 'typed', pixelSizeUmPerPx: -2 }, sampleSign: 'both' });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.train.polariserDeg).toBe(0);
    expect(r.value.train.illuminant).toBe('3200K');
    expect(r.value.pixelSize).toEqual({ source: 'none' });
    expect(r.value.sampleSign).toBe('positive');
    expect(r.notes).toHaveLength(5);
  });

  it('keeps "no compensator" and a measured pixel size through a round trip', () => {
    const s = { ...newSetup('m', 'Micrometer bench', at), pixelSize: { source: 'measured' as const, pixelSizeUmPerPx: 0.32499, from: 'micrometer 2026-03-01' } };
    s.train.compensator = null;
    const r = restoreSetup(JSON.parse(JSON.stringify(s)));
    expect(r).toEqual({ ok: true, notes: [], value: s });
  });

  it('refuses records from a newer version or of another kind', () => {
    expect(restoreSetup({ schemaVersion: SETUP_SCHEMA_VERSION + 1, id: 'n', kind: 'setup' })).toEqual({ ok: false, reason: `it was written by a newer version of the app (schemaVersion ${SETUP_SCHEMA_VERSION + 1})` });
    expect(restoreSetup({ id: 'n', kind: 'session' }).ok).toBe(false);
    expect(restoreSetup({ name: 'no id' }).ok).toBe(false);
    expect(restoreSetup('text').ok).toBe(false);
  });
});

describe('set-up store and sessions', () => {
  it('saves, lists by name and deletes; a newer record is moved aside, not lost', async () => {
    const kv = memoryKv();
    const store = createSetupStore(kv, () => at);
    await store.save({ ...opticsSetup(), id: 'b', name: 'Zeta' });
    await store.save({ ...opticsSetup(), id: 'a', name: 'Alpha' });
    kv.map.set(`${SETUP_PREFIX}future`, { schemaVersion: 99, kind: 'setup', id: 'future', name: 'From the future' });
    const l = await store.list();
    expect(l.setups.map((s) => s.name)).toEqual(['Alpha', 'Zeta']);
    expect(l.setAside).toEqual([{ key: `${SETUP_PREFIX}future`, reason: 'it was written by a newer version of the app (schemaVersion 99)' }]);
    expect([...kv.map.keys()].filter((k) => k.startsWith('aside:'))).toHaveLength(1);
    await store.remove('a');
    expect((await store.list()).setups.map((s) => s.id)).toEqual(['b']);
  });

  it('a session keeps the applied copy through save and restore, and later edits of the named set-up do not change it', async () => {
    const kv = memoryKv();
    const sessions = createSessionStore(kv, (() => { let n = 0; return () => `id${++n}`; })(), () => at);
    const setups = createSetupStore(kv, () => at);
    const su = await setups.save(opticsSetup());
    const s0 = await sessions.create('Run 1');
    const s1 = sessionReducer(s0, { type: 'applySetup', setup: applied(su, at) }, () => at);
    await sessions.save(s1);
    await setups.save({ ...su, pixelSize: { source: 'typed', pixelSizeUmPerPx: 9 } });
    const back = await sessions.load(s0.id);
    expect(back?.setup?.name).toBe('Bench 2, 10x');
    expect(effectivePixelSize(back!.setup, null).umPerPx).toBeCloseTo(0.345, 12);
    expect(sessionReducer(back!, { type: 'applySetup', setup: null }).setup).toBeNull();
  });

  it('a session record with an unreadable applied set-up is restored without it and the loss is named', () => {
    const r = restoreSession({ schemaVersion: 1, kind: 'session', id: 's', name: 'S', images: [], work: {}, setup: { setupId: 'x', train: 'broken' } });
    expect(r.ok && r.value.setup).toBeNull();
    expect(r.ok && r.lossy).toBe(true);
    expect(restoreApplied({ setupId: 'x', name: 'ok', train: { polariserDeg: 0 }, pixelSize: { source: 'none' }, sampleSign: 'negative' })?.sampleSign).toBe('negative');
  });

  it('backups carry the set-ups; a restored set-up whose id is taken comes in under a new id', async () => {
    const kv = memoryKv();
    const sessions = createSessionStore(kv, () => 'sid', () => at);
    const setups = createSetupStore(kv, () => at);
    await setups.save(opticsSetup());
    const text = await exportBackup(sessions, at);
    const report = await importBackup(sessions, text, (() => { let n = 0; return () => `new${++n}`; })());
    expect(report.setups).toBe(1);
    const names = (await setups.list()).setups.map((s) => `${s.id}:${s.name}`).sort();
    expect(names).toEqual(['new1:Bench 2, 10x (restored)', 's1:Bench 2, 10x']);
    const fresh = memoryKv();
    const r2 = await importBackup(createSessionStore(fresh), text);
    expect(r2.setups).toBe(1);
    expect((await createSetupStore(fresh).get('s1'))?.pixelSize).toEqual(opticsSetup().pixelSize);
  });
});

describe('a set-up written by a newer copy of the app', () => {
  // Behaviour of our own storage: unknown keys at each level of a set-up record are kept as they were.
  const raw = {
    schemaVersion: SETUP_SCHEMA_VERSION, kind: 'setup', id: 'b', name: 'Bench B', createdAt: '2026-01-01T00:00:00.000Z', updatedAt: '2026-01-01T00:00:00.000Z',
    train: { polariserDeg: 0, analyserDeg: 90, compensator: { kind: 'full-wave', retardanceNm: 530, axisDeg: 45, futureWedge: { steps: 4 } }, illuminant: 'D65', futureFilter: 'green 546 nm' },
    pixelSize: { source: 'optics', cameraPixelUm: 3.45, objectiveMagnification: 10, intermediateMagnification: 1, binning: 1, futureTubeLens: 180 },
    sampleSign: 'negative', notes: '', futureStage: { rotates: true },
  };

  it('is restored with every unknown key where it was, and no notes', () => {
    const r = restoreSetup(structuredClone(raw));
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.notes).toEqual([]);
    expect(r.value).toEqual(raw);
  });

  it('keeps them when applied to a session, stored there and read back', () => {
    const r = restoreSetup(structuredClone(raw));
    if (!r.ok) throw new Error(r.reason);
    const copy = { ...applied(r.value, new Date('2026-02-01T00:00:00Z')), futureNote: 'applied by a newer copy' };
    const back = restoreApplied(JSON.parse(JSON.stringify(copy)));
    expect(back).toEqual(copy);
    expect(back?.train).toEqual(raw.train);
    expect(back?.pixelSize).toEqual(raw.pixelSize);
  });
});
