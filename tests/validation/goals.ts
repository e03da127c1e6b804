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

/** One row in words, for an assertion's message in an area's quick test. */
export const rowText = (r: ValidationRow): string => `${r.area} / ${r.case} / ${r.quantity} = ${r.value} (goal ${r.goal}) ${r.note ?? ''}`;

/** A row for "value at most limit". */
export function atMost(area: string, kase: string, quantity: string, value: number, limit: number, unit = '', note?: string): ValidationRow {
  return { area, case: kase, quantity, value, goal: `<= ${limit}${unit ? ' ' + unit : ''}`, pass: Number.isFinite(value) && value <= limit, note };
}

/** A row for "value within [lo, hi]" (coverage rates, in %). */
export function within(area: string, kase: string, quantity: string, value: number, lo: number, hi: number, unit = '', note?: string): ValidationRow {
  return { area, case: kase, quantity, value, goal: `${lo}-${hi}${unit ? ' ' + unit : ''}`, pass: Number.isFinite(value) && value >= lo && value <= hi, note };
}

/** Counts point estimates outside their own interval, over every interval an area's rows looked at (goal 0). */
export class InsideCheck {
  count = 0;
  total = 0;
  examples: string[] = [];
  /** Counts one interval (skipped when any of the three is not a number: withheld). */
  check(what: string, v: number, lo: number, hi: number): void {
    if (![v, lo, hi].every(Number.isFinite)) return;
    this.total++;
    if (v < lo - 1e-12 || v > hi + 1e-12) {
      this.count++;
      if (this.examples.length < 3) this.examples.push(`${what}: ${v.toFixed(3)} not in ${lo.toFixed(3)}..${hi.toFixed(3)}`);
    }
  }
  /** The area's closing row. */
  row(area: string): ValidationRow {
    return atMost(area, 'every interval above', 'point estimates outside their own interval (count)', this.count, 0, '',
      `${this.total} intervals checked${this.examples.length ? '; e.g. ' + this.examples.join('; ') : ''}`);
  }
}

/**
 * Runs an area's parts in order, timing each on stderr; RETARDA_VALIDATE_PARTS=a,b runs only those (all by
 * default).
 */
export async function runParts(label: string, parts: readonly (readonly [string, () => Promise<ValidationRow[]>])[]): Promise<ValidationRow[]> {
  const only = process.env.RETARDA_VALIDATE_PARTS?.split(',');
  const rows: ValidationRow[] = [];
  for (const [what, part] of parts) {
    if (only && !only.includes(what)) continue;
    const t0 = performance.now();
    rows.push(...await part());
    process.stderr.write(`${label} ${what}: ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
  }
  return rows;
}
