import { describe, expect, it } from 'vitest';
import trendArea from './trend.ts';
import { rowText } from './goals.ts';

/** The quick subset of the trend validation (npm run validate -- --area=trend --quick). */
describe('trend validation, quick subset', () => {
  it('covers the slope and intercept at the stated rate on independent renderings', async () => {
    const rows = await trendArea({ quick: true });
    expect(rows.length).toBe(3);
    for (const r of rows) expect(r.pass, rowText(r)).toBe(true);
  }, 300_000);
});
