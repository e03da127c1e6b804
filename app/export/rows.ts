/**
 * The current result as the files the command line writes: JSON (the --json document) and CSV rows
 * with the same columns as `retarda orient --csv` / `retarda profile --csv`, through src/report/csv.ts.
 */
import type { OrientResult, ProfileResult } from '../../src/analyses/index.ts';
import { toCsv } from '../../src/report/csv.ts';
import { orientCsvRow, profileCsvRow, profileBinRows } from '../../src/report/rows.ts';

export { orientCsvRow, profileCsvRow, profileBinRows } from '../../src/report/rows.ts';

export const orientCsv = (r: OrientResult) => toCsv([orientCsvRow(r)]);
export const profileCsv = (r: ProfileResult) => toCsv([profileCsvRow(r)]);
export const profileBinsCsv = (r: ProfileResult) => toCsv(profileBinRows(r));

/** The command line that gives the same numbers for the same file (shown beside the results). */
export function orientCommandLine(name: string, o: { sigmaPx: number; weighting: string; axisDeg: number | null }): string {
  return ['retarda orient', quote(name), `--sigma ${o.sigmaPx}`, `--weighting ${o.weighting}`, ...(o.axisDeg !== null ? [`--axis-deg ${o.axisDeg}`] : [])].join(' ');
}

export function profileCommandLine(name: string, o: { sigmaPx: number; weighting: string; bins: number; stations: number; coreMax: number; skinMin: number }, walls: string | null): string {
  const w = walls ? `--walls "${walls}"` : '--auto-walls';
  return ['retarda profile', quote(name), w, `--sigma ${o.sigmaPx}`, `--weighting ${o.weighting}`, `--bins ${o.bins}`, `--stations ${o.stations}`, `--core-max ${o.coreMax}`, `--skin-min ${o.skinMin}`].join(' ');
}

const quote = (s: string) => (/^[\w.\-/]+$/.test(s) ? s : `"${s.replace(/"/g, '\\"')}"`);

/** Walls as the CLI's --walls text, "x1,y1,x2,y2;x3,y3,x4,y4". */
export const wallsText = (walls: { x1: number; y1: number; x2: number; y2: number }[]) => walls.map((s) => [s.x1, s.y1, s.x2, s.y2].map((v) => String(Math.round(v * 10) / 10)).join(',')).join(';');

/** Starts a download of text as a file. */
export function download(name: string, text: string, type: string): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url; a.download = name;
  document.body.appendChild(a); a.click(); a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}
