/** Plain-text tables for the terminal. */
export function formatTable(headers: string[], rows: (string | number | null | undefined)[][]): string {
  const cells = rows.map((r) => r.map(formatCell));
  const widths = headers.map((h, i) => Math.max(h.length, ...cells.map((r) => (r[i] ?? '').length)));
  const line = (r: string[]) => r.map((c, i) => c.padStart(widths[i])).join('  ');
  return [line(headers), line(widths.map((w) => '-'.repeat(w))), ...cells.map(line)].join('\n');
}

export function formatCell(v: string | number | null | undefined): string {
  if (v === null || v === undefined) return '-';
  if (typeof v === 'string') return v;
  if (!Number.isFinite(v)) return String(v);
  if (Number.isInteger(v)) return String(v);
  const a = Math.abs(v);
  if (a !== 0 && (a < 1e-3 || a >= 1e6)) return v.toExponential(4);
  return v.toFixed(a < 1 ? 4 : a < 100 ? 3 : 1);
}

/** Key-value block for single results. */
export function formatPairs(pairs: [string, string | number | null | undefined][]): string {
  const w = Math.max(...pairs.map(([k]) => k.length));
  return pairs.map(([k, v]) => `${k.padEnd(w)}  ${formatCell(v)}`).join('\n');
}
