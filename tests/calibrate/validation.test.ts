/**
 * The quick subset of the micrometer validation area (tests/validation/micrometer.ts, run in full by
 * `npm run validate`): the main kinds of ruler within the 0.05 %, the refusals and loud warnings,
 * and the coverage of the stated interval on 150 seeded rulers. Every row must meet its goal.
 */
import { describe, expect, it } from 'vitest';
import area from '../validation/micrometer.ts';

describe('micrometer validation, quick subset', () => {
  it('meets every goal', async () => {
    const rows = await area({ quick: true });
    expect(rows.length).toBeGreaterThanOrEqual(12);
    for (const r of rows) expect({ case: r.case, quantity: r.quantity, value: r.value, note: r.note, pass: r.pass }).toMatchObject({ pass: true });
  }, 120_000);
});
