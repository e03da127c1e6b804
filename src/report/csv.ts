/**
 * CSV as RFC 4180: comma separated, CRLF line ends, fields with a comma, quote or line break quoted
 * and inner quotes doubled; UTF-8, '.' decimal point, one header row (units in the column names).
 */
export type CsvValue = string | number | boolean | null | undefined;

export function csvField(v: CsvValue): string {
  if (v === null || v === undefined) return '';
  const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : '') : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** Rows of objects to CSV; the columns are the union of keys in first-seen order. */
export function toCsv(rows: Record<string, CsvValue>[], columns?: string[]): string {
  const cols = columns ?? [...new Set(rows.flatMap((r) => Object.keys(r)))];
  const lines = [cols.map(csvField).join(','), ...rows.map((r) => cols.map((c) => csvField(r[c])).join(','))];
  return lines.join('\r\n') + '\r\n';
}
