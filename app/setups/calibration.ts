/**
 * The session's one calibration state: which pixel size its lengths use and where it came from, worked out in
 * one place so the status line, the header, the panels, the report, the exported pictures and the compare
 * view all say the same thing.
 *
 * Which pixel size wins (docs/methods.md §11.2, the file's value is always overridable): the one chosen from a
 * micrometer image for this session ("use this pixel size"), else the applied set-up's, else the file's
 * resolution tags, else none (lengths stay in px). Applying a set-up that gives a pixel size clears the
 * micrometer choice (app/state/session.ts), so the most recent choice is always the one in use.
 */
import type { SessionPixelSize } from '../storage/records.ts';
import { setupPixelSizeUmPerPx, type AppliedSetup } from './setup.ts';

/** Where a pixel size came from, in the four kinds a user gives one. */
export type CalibrationOrigin = 'optics' | 'micrometer' | 'typed' | 'file' | 'none';

export interface Calibration {
  /** Object-plane pixel size, um/px; null when nothing gives one. */
  umPerPx: number | null;
  origin: CalibrationOrigin;
  /** Where it came from, in words that follow "from the" (e.g. `micrometer image ruler.png`); '' without a pixel size. */
  from: string;
}

const NONE: Calibration = { umPerPx: null, origin: 'none', from: '' };

/**
 * A pixel size as every screen prints it, to 5 significant digits: a measured one (micrometer) with all five, as
 * the micrometer panel prints it; one typed or worked out from the optics as given (trailing zeros dropped).
 */
export const umPerPxText = (v: number, measured = false) => (measured ? v.toPrecision(5) : String(Number(v.toPrecision(5))));

/** Whether words saying where a pixel size came from name a micrometer measurement. */
export const isMeasured = (from: string) => /micrometer/.test(from);

/** The micrometer panel keeps `micrometer NAME`; shown as "micrometer image NAME". */
function micrometerWords(from: string): string {
  const m = /^micrometer (.+)$/.exec(from);
  return m ? `micrometer image ${m[1]}` : from || 'micrometer image';
}

/** The set-up's pixel size with its origin, or null when it gives none (or an invalid one). */
export function setupCalibration(setup: AppliedSetup | null): Calibration | null {
  if (!setup) return null;
  let um: number | null;
  try { um = setupPixelSizeUmPerPx(setup.pixelSize); } catch { return null; }
  if (um === null) return null;
  const p = setup.pixelSize;
  const name = `set-up "${setup.name}"`;
  switch (p.source) {
    case 'optics': return { umPerPx: um, origin: 'optics', from: `${name}: objective ${p.objectiveMagnification}× and camera pixel ${p.cameraPixelUm} µm${p.intermediateMagnification !== 1 ? `, adapter ${p.intermediateMagnification}×` : ''}${p.binning !== 1 ? `, binning ${p.binning}` : ''}` };
    case 'measured': return { umPerPx: um, origin: 'micrometer', from: `${name}: measured on a micrometer${p.from ? ` (${p.from})` : ''}` };
    default: return { umPerPx: um, origin: 'typed', from: `${name}: typed` };
  }
}

/**
 * The pixel size an image of the session is measured with and where it came from.
 *
 * @param fileUmPerPx the image file's own pixel size (resolution tags), null when it has none
 */
export function calibrationOf(session: { setup: AppliedSetup | null; pixelSize?: SessionPixelSize | null } | null, fileUmPerPx: number | null): Calibration {
  const chosen = session?.pixelSize;
  if (chosen && chosen.umPerPx > 0) return { umPerPx: chosen.umPerPx, origin: 'micrometer', from: micrometerWords(chosen.from) };
  const s = setupCalibration(session?.setup ?? null);
  if (s) return s;
  if (fileUmPerPx !== null && fileUmPerPx > 0) return { umPerPx: fileUmPerPx, origin: 'file', from: "file's resolution tags" };
  return NONE;
}

/** One line for the status bar and the report: "0.65 µm/px from the micrometer image ruler.png" or "not calibrated (lengths in px)". */
export function calibrationWords(c: Calibration): string {
  return c.umPerPx === null ? 'not calibrated (lengths in px)' : `${umPerPxText(c.umPerPx, c.origin === 'micrometer')} µm/px from the ${c.from}`;
}

const ORIGIN_SHORT: Record<CalibrationOrigin, string> = {
  optics: 'objective and camera', micrometer: 'micrometer', typed: 'typed', file: 'file metadata', none: '',
};

/** A short form for the header: "0.65 µm/px (micrometer)" or "not calibrated". */
export function calibrationShort(c: Calibration): string {
  return c.umPerPx === null ? 'not calibrated' : `${umPerPxText(c.umPerPx, c.origin === 'micrometer')} µm/px (${ORIGIN_SHORT[c.origin]})`;
}

/** What the app says when a pixel size is applied, replaced or removed. */
export function calibrationChange(before: Calibration, after: Calibration): string {
  if (after.umPerPx === null) return before.umPerPx === null ? 'Lengths stay in px: no pixel size is set.' : `Lengths are in px again: ${calibrationWords(before)} is no longer used.`;
  const was = before.umPerPx !== null && (before.umPerPx !== after.umPerPx || before.from !== after.from) ? ` (instead of ${calibrationWords(before)})` : '';
  return `Lengths in this session now use ${calibrationWords(after)}${was}: diameters, the report, exported pictures and Compare use it.`;
}
