/**
 * Sessions saved before the renames of result schema 2 (README, "Changes in schema 2") come back with the new
 * names, so a reload shows what the app and the command line now say.
 */
import { describe, it, expect } from 'vitest';
import { restoreSession } from '../../app/storage/records.ts';

describe('restoring a session saved with former names', () => {
  it('reads the former weighting names as their new ones', () => {
    const cases: [string, string][] = [['confidence', 'coherency'], ['energy', 'strength'], ['energy-confidence', 'strength-coherency'], ['none', 'none']];
    for (const [before, now] of cases) {
      const r = restoreSession({ schemaVersion: 1, id: 's', settings: { weighting: before } });
      expect(r.ok && r.value.settings.weighting).toBe(now);
    }
    // An optical reading's weighting is not a texture setting: the default stays.
    const r = restoreSession({ schemaVersion: 1, id: 's', settings: { weighting: 'nonsense' } });
    expect(r.ok && r.value.settings.weighting).toBe('coherency');
  });
});

describe('restoring optical readings and results of result schema 1', () => {
  it('reads a kept angle series ("quad") with its result, names and command line in today\'s words', () => {
    const result = { schemaVersion: 1, analysis: 'quad', order2D: 0.5, order2DCi: [0.4, 0.6], axisOrderCi: null, extra: { anglesDeg: [0, 45, 90] }, options: { method: 'four-angle' } };
    const r = restoreSession({
      schemaVersion: 1, id: 's', images: [{ id: 'i', name: 'a.png' }],
      work: { i: { walls: null, orient: null, profile: null, optics: { kind: 'quad', result, commandLine: 'retarda quad a.png b.png c.png --angles 0,45,90', rangeNm: null } } },
    });
    expect(r.ok).toBe(true);
    const optics = r.ok ? r.value.work.i.optics : null;
    expect(optics?.kind).toBe('angle-series');
    expect(optics?.commandLine).toBe('retarda angle-series a.png b.png c.png --angles 0,45,90');
    expect(optics?.result.analysis).toBe('angle-series');
    expect(optics?.result.order2DCiLow).toBe(0.4);
    expect(optics?.result.reading).toEqual({ anglesDeg: [0, 45, 90] });
    // Nothing was lost: the record is whole, so nothing is set aside.
    expect(r.ok && r.lossy).toBe(false);
  });

  it('reads a kept plate pair ("plate2") and a kept orientation result', () => {
    const pair = { schemaVersion: 1, analysis: 'plate2', order2DCi: [0.1, 0.3], axisOrderCi: null, extra: {}, options: {} };
    const orient = { schemaVersion: 1, analysis: 'orient', order2DCi: [0.7, 0.9], axisOrderCi: null, options: { weighting: 'confidence', energyFloor: 0.02 } };
    const r = restoreSession({
      schemaVersion: 1, id: 's', images: [{ id: 'i', name: 'a.png' }],
      work: { i: { walls: null, orient, profile: null, optics: { kind: 'plate2', result: pair, commandLine: 'retarda plate2 a.png b.png --background 0,0,5,5', rangeNm: null } } },
    });
    const w = r.ok ? r.value.work.i : null;
    expect(w?.optics?.kind).toBe('plate-pair');
    expect(w?.optics?.commandLine).toBe('retarda plate-pair a.png b.png --sample-free 0,0,5,5');
    expect(w?.orient?.options).toEqual({ weighting: 'coherency', strengthFloor: 0.02 });
    expect([w?.orient?.order2DCiLow, w?.orient?.order2DCiHigh]).toEqual([0.7, 0.9]);
  });
});
