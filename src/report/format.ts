/**
 * One number as the command line's tables print it, and the app's panels with them, so a number reads the same in
 * both: whole numbers as they are; below 1e-3 or from 1e6 in exponent form with 4 decimals; otherwise 4 decimals
 * below 1, 3 below 100, else 1. null and undefined print as "-".
 */
export function formatCell(v: string | number | null | undefined): string {
  if (v === null || v === undefined) return '-';
  if (typeof v === 'string') return v;
  if (!Number.isFinite(v)) return String(v);
  if (Number.isInteger(v)) return String(v);
  const a = Math.abs(v);
  if (a !== 0 && (a < 1e-3 || a >= 1e6)) return v.toExponential(4);
  return v.toFixed(a < 1 ? 4 : a < 100 ? 3 : 1);
}
