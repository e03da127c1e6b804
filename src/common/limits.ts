import { checkNumber, InputError } from './errors.ts';

/**
 * A number option's default and allowed range, defined once beside the code that checks it; the command line's
 * help, the app's forms, the restore of stored settings and the command lines the app shows all read it from there.
 */
export interface Limit {
  /** What the number is, in the words of the error message ("texture scale sigma"). */
  what: string;
  min: number;
  max: number;
  /** Absent when the default is not one number (it depends on the image or on another option). */
  default?: number;
  /** Whole numbers only. */
  integer?: boolean;
  unit?: string;
}

/**
 * `value`, or the limit's default when it is undefined, checked against the limit.
 * @throws InputError naming the number, its range and what was given
 */
export function checkLimit(limit: Limit, value: number | undefined): number {
  const v = value ?? limit.default;
  if (v === undefined) throw new InputError(`${limit.what} is needed`, `Give a value from ${limit.min} to ${limit.max}${limit.unit ? ` ${limit.unit}` : ''}`);
  checkNumber(limit.what, v, limit.min, limit.max, limit.unit);
  if (limit.integer && !Number.isInteger(v)) throw new InputError(`${limit.what} must be a whole number, got ${v}`, `Give a whole number from ${limit.min} to ${limit.max}`);
  return v;
}

/** A reference axis or other angle given in degrees (wrapped to (-90, 90] where it is used). */
export const AXIS_DEG_LIMIT: Limit = { what: 'axis angle', min: -360, max: 360, unit: 'deg' };

/** Whether a value lies within the limit (for stored settings, which are replaced by the default rather than refused). */
export function withinLimit(limit: Limit, value: unknown): value is number {
  return typeof value === 'number' && Number.isFinite(value) && value >= limit.min && value <= limit.max && (!limit.integer || Number.isInteger(value));
}
