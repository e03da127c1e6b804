/**
 * The current result as the files the command line writes: JSON (the --json document) and CSV rows
 * with the same columns as `retarda orient --csv` / `retarda profile --csv`, through src/report/csv.ts.
 */
import type { OrientResult, ProfileResult } from '../../src/analyses/index.ts';
import { toCsv } from '../../src/report/index.ts';
import { orientCsvRow, profileCsvRow, profileBinRows } from '../../src/report/index.ts';

export { orientCsvRow, profileCsvRow, profileBinRows } from '../../src/report/index.ts';

export const orientCsv = (r: OrientResult) => toCsv([orientCsvRow(r)]);
export const profileCsv = (r: ProfileResult) => toCsv([profileCsvRow(r)]);
export const profileBinsCsv = (r: ProfileResult) => toCsv(profileBinRows(r));

/** Starts a download of text as a file. */
export function download(name: string, text: string, type: string): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url; a.download = name;
  document.body.appendChild(a); a.click(); a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}
