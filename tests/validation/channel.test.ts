import { describe, it, expect } from 'vitest';
import channelArea from './channel.ts';
import { rowText } from './goals.ts';

/**
 * The quick subset of the channel validation (`npm run validate -- --area=channel --quick`), rendered by the
 * independent renderer under tests/validation/render/ with the truth of its own construction. Every row is held
 * to its goal: walls, per-bin S (texture bins as the mean over three streak patterns of one director field,
 * channel.ts `textureRows` says why), coverage and "estimate inside its interval".
 */
describe('channel validation, quick subset', () => {
  it('meets every goal of the quick subset', async () => {
    const rows = await channelArea({ quick: true });
    expect(rows.length).toBeGreaterThan(15);
    for (const r of rows) expect(r.pass, rowText(r)).toBe(true);
  }, 300_000);
});
