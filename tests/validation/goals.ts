/**
 * The validation table: every measured error or coverage next to the goal it must meet. Each area
 * (channels, micrometers, fibres, ...) exports an async function returning rows; `npm run validate`
 * runs them all and prints the table (tests/validation/validate.ts), and each area's quick subset runs
 * in `npm test` as ordinary assertions on the same rows.
 */
export interface ValidationRow {
  /** Area, e.g. 'channel walls', 'micrometer', 'small fibres'. */
  area: string;
  /** Case name: what was rendered (kind, angle, seed range). */
  case: string;
  /** What was measured, with its unit, e.g. 'wall error px (max)'. */
  quantity: string;
  /** The measured value (NaN when the tool refused; see `note`). */
  value: number;
  /** The goal as text, e.g. '<= 1 px', '90-99 %'. */
  goal: string;
  pass: boolean;
  /** Anything a reader needs: a refusal message, a count. */
  note?: string;
}

export type ValidationArea = (options: { quick: boolean }) => Promise<ValidationRow[]>;

/** A row for "value at most limit". */
export function atMost(area: string, kase: string, quantity: string, value: number, limit: number, unit = '', note?: string): ValidationRow {
  return { area, case: kase, quantity, value, goal: `<= ${limit}${unit ? ' ' + unit : ''}`, pass: Number.isFinite(value) && value <= limit, note };
}

/** A row for "value within [lo, hi]" (coverage rates, in %). */
export function within(area: string, kase: string, quantity: string, value: number, lo: number, hi: number, unit = '', note?: string): ValidationRow {
  return { area, case: kase, quantity, value, goal: `${lo}-${hi}${unit ? ' ' + unit : ''}`, pass: Number.isFinite(value) && value >= lo && value <= hi, note };
}
