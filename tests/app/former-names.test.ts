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
