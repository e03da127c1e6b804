/** Plain-text tables for the terminal. */
import { formatCell } from '../report/index.ts';

export { formatCell };

export function formatTable(headers: string[], rows: (string | number | null | undefined)[][]): string {
  const cells = rows.map((r) => r.map(formatCell));
  const widths = headers.map((h, i) => Math.max(h.length, ...cells.map((r) => (r[i] ?? '').length)));
  const line = (r: string[]) => r.map((c, i) => c.padStart(widths[i])).join('  ');
  return [line(headers), line(widths.map((w) => '-'.repeat(w))), ...cells.map(line)].join('\n');
}

/** Key-value block for single results. */
export function formatPairs(pairs: [string, string | number | null | undefined][]): string {
  const w = Math.max(...pairs.map(([k]) => k.length));
  return pairs.map(([k, v]) => `${k.padEnd(w)}  ${formatCell(v)}`).join('\n');
}
