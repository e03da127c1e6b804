import { describe, expect, it } from 'vitest';
import seriesArea from './series.ts';
import { rowText } from './goals.ts';

/** The quick subset of the series validation (npm run validate -- --area=series --quick). */
describe('series validation, quick subset', () => {
  it('covers tau at the stated rate on independent renderings', async () => {
    const rows = await seriesArea({ quick: true });
    expect(rows.length).toBeGreaterThan(1);
    for (const r of rows) expect(r.pass, rowText(r)).toBe(true);
  }, 300_000);
});
