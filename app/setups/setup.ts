/**
 * A named set-up: the optical train, the pixel size and the sample's birefringence sign, described
 * once and applied to the images of a session. Pure data and checks; app/storage keeps them.
 */
import { isInputError } from '../../src/common/index.ts';
import { umPerPxFromOptics } from '../../src/calibrate/index.ts';
import { resolveTrain, type OpticalTrain } from '../../src/optics/index.ts';
import { COMPENSATOR_OFFSET_DEG, DEFAULT_ILLUMINANT, OPTICS_LIMITS } from '../../src/analyses/index.ts';
import { parseIlluminant } from '../../src/optics/index.ts';
import { keySet, unknownKeys, withUnknown } from '../storage/unknownKeys.ts';

/** Version of stored set-up records; bump when a field changes meaning and add the upgrade in restoreSetup. */
export const SETUP_SCHEMA_VERSION = 1;

export interface TrainSettings {
  polariserDeg: number;
  analyserDeg: number;
  /** null = no compensator in the train. */
  compensator: { kind: 'full-wave' | 'quarter-wave'; retardanceNm: number; axisDeg: number } | null;
  /** The CLI's --illuminant text: a colour temperature ("3200K"), "D65" or "A". */
  illuminant: string;
}

/** Where the pixel size comes from. */
export type PixelSizeSource =
  | { source: 'none' }
  | { source: 'optics'; cameraPixelUm: number; objectiveMagnification: number; intermediateMagnification: number; binning: number }
  | { source: 'typed'; pixelSizeUmPerPx: number }
  /** Measured from a stage micrometer image; `from` names the image or the measurement. */
  | { source: 'measured'; pixelSizeUmPerPx: number; from: string };

export type SampleSign = 'positive' | 'negative';

export interface SetupRecord {
  schemaVersion: number;
  kind: 'setup';
  id: string;
  name: string;
  createdAt: string;
  updatedAt: string;
  train: TrainSettings;
  pixelSize: PixelSizeSource;
  /** Birefringence of the structure: positive = slow axis along the fibre (length-slow). */
  sampleSign: SampleSign;
  notes: string;
}

/** The CLI's defaults (retarda plate): polariser 0, analyser 90, full-wave 550 nm at +45, 3200 K lamp. */
/** A new set-up's train: the optical readings' defaults (OPTICS_LIMITS in src/analyses), analyser crossed. */
export const DEFAULT_TRAIN_SETTINGS: TrainSettings = {
  polariserDeg: OPTICS_LIMITS.polariserDeg.default, analyserDeg: OPTICS_LIMITS.polariserDeg.default + 90,
  compensator: { kind: 'full-wave', retardanceNm: OPTICS_LIMITS.compensatorNm.default, axisDeg: OPTICS_LIMITS.polariserDeg.default + COMPENSATOR_OFFSET_DEG },
  illuminant: DEFAULT_ILLUMINANT,
};

export function newSetup(id: string, name: string, now = new Date()): SetupRecord {
  const t = now.toISOString();
  return {
    schemaVersion: SETUP_SCHEMA_VERSION, kind: 'setup', id, name, createdAt: t, updatedAt: t,
    train: structuredClone(DEFAULT_TRAIN_SETTINGS), pixelSize: { source: 'none' }, sampleSign: 'positive', notes: '',
  };
}

/**
 * Pixel size in the object plane, um/px: from the optics as cameraPixelUm x binning /
 * (objective x intermediate) (src/calibrate umPerPxFromOptics, docs/methods.md §11.1), or the value typed
 * or measured; null when the set-up gives none (lengths then stay in px).
 *
 * @throws InputError when the optics values are out of range
 */
export function setupPixelSizeUmPerPx(p: PixelSizeSource): number | null {
  switch (p.source) {
    case 'none': return null;
    case 'optics': return umPerPxFromOptics({ cameraPixelUm: p.cameraPixelUm, objectiveMagnification: p.objectiveMagnification, intermediateMagnification: p.intermediateMagnification, binning: p.binning });
    case 'typed': case 'measured':
      if (!(p.pixelSizeUmPerPx > 0 && p.pixelSizeUmPerPx <= 1000)) throw new RangeError(`pixel size ${p.pixelSizeUmPerPx} um/px must be above 0 and at most 1000`);
      return p.pixelSizeUmPerPx;
  }
}

/** The train as the optics model takes it (resolveTrain checks every value). */
export function opticalTrainOf(t: TrainSettings): OpticalTrain {
  return resolveTrain({ polariserDeg: t.polariserDeg, analyserDeg: t.analyserDeg, compensator: t.compensator, illuminant: parseIlluminant(t.illuminant) });
}

/** Everything wrong with a set-up, in plain words for the form; empty when it can be saved. */
export function setupProblems(s: SetupRecord): string[] {
  const out: string[] = [];
  if (!s.name.trim()) out.push('give the set-up a name');
  const attempt = (f: () => unknown) => {
    try { f(); } catch (e) { out.push(isInputError(e) || e instanceof RangeError ? (e as Error).message : `unexpected: ${(e as Error).message}`); }
  };
  attempt(() => opticalTrainOf(s.train));
  attempt(() => setupPixelSizeUmPerPx(s.pixelSize));
  return out;
}

/**
 * Command-line options that describe this set-up: `train` for the colour readers (retarda plate,
 * plate-pair: --polariser-deg, --compensator-nm, --compensator-deg, --illuminant, --sign) and `lengths`
 * for measured lengths (retarda diameter: --um-per-px). The command line assumes crossed polars.
 */
export function setupCommandOptions(s: Pick<SetupRecord, 'train' | 'pixelSize' | 'sampleSign'>): { train: string[]; lengths: string[] } {
  const t = s.train;
  const train = [`--polariser-deg ${t.polariserDeg}`];
  if (t.compensator) train.push(`--compensator-nm ${t.compensator.retardanceNm}`, `--compensator-deg ${t.compensator.axisDeg}`);
  train.push(`--illuminant ${t.illuminant}`, `--sign ${s.sampleSign}`);
  let um: number | null = null;
  try { um = setupPixelSizeUmPerPx(s.pixelSize); } catch { um = null; }
  return { train, lengths: um !== null ? [`--um-per-px ${roundSig(um, 6)}`] : [] };
}

/** Whether the analyser is crossed with the polariser (at 90 deg to it, axially), as the command line assumes. */
export function crossedPolars(t: TrainSettings): boolean {
  const d = (((t.analyserDeg - t.polariserDeg) % 180) + 180) % 180;
  return Math.abs(d - 90) < 1e-9;
}

/** One line saying what the set-up is, for lists and reports. */
export function setupSummary(s: Pick<SetupRecord, 'train' | 'pixelSize' | 'sampleSign'>): string {
  const t = s.train;
  const comp = t.compensator ? `${t.compensator.kind} ${t.compensator.retardanceNm} nm at ${t.compensator.axisDeg}°` : 'no compensator';
  let px: string;
  try {
    const um = setupPixelSizeUmPerPx(s.pixelSize);
    px = um === null ? 'pixel size not set' : `${roundSig(um, 4)} µm/px (${s.pixelSize.source === 'optics' ? 'from the optics' : s.pixelSize.source === 'typed' ? 'typed' : 'measured'})`;
  } catch { px = 'pixel size invalid'; }
  return `polariser ${t.polariserDeg}°, analyser ${t.analyserDeg}°, ${comp}, lamp ${t.illuminant}; ${px}; sign ${s.sampleSign}`;
}

export const roundSig = (v: number, digits: number) => Number(v.toPrecision(digits));

/* ---------- restore step ---------- */

export type RestoredSetup = { ok: true; value: SetupRecord; notes: string[] } | { ok: false; reason: string };

const isObj = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const num = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

// The keys this version reads at each level; restore keeps any other key as it was (app/storage/unknownKeys.ts).
const SETUP_KEYS = keySet<SetupRecord>({
  schemaVersion: true, kind: true, id: true, name: true, createdAt: true, updatedAt: true, train: true, pixelSize: true, sampleSign: true, notes: true,
});
const TRAIN_KEYS = keySet<TrainSettings>({ polariserDeg: true, analyserDeg: true, compensator: true, illuminant: true });
const COMPENSATOR_KEYS = keySet<NonNullable<TrainSettings['compensator']>>({ kind: true, retardanceNm: true, axisDeg: true });
/** Every key of every kind of pixel-size source. */
const PIXEL_SIZE_KEYS: ReadonlySet<string> = new Set(['source', 'cameraPixelUm', 'objectiveMagnification', 'intermediateMagnification', 'binning', 'pixelSizeUmPerPx', 'from']);
const APPLIED_KEYS = keySet<AppliedSetup>({ setupId: true, name: true, appliedAt: true, train: true, pixelSize: true, sampleSign: true });

function restoreTrain(raw: unknown, notes: string[]): TrainSettings {
  const t = structuredClone(DEFAULT_TRAIN_SETTINGS);
  if (!isObj(raw)) { notes.push('the optical train was unreadable; defaults used'); return t; }
  const angle = (k: 'polariserDeg' | 'analyserDeg') => {
    if (raw[k] === undefined) return;
    if (num(raw[k]) && Math.abs(raw[k]) <= 360) t[k] = raw[k]; else notes.push(`${k} was unreadable; default used`);
  };
  angle('polariserDeg'); angle('analyserDeg');
  if (raw.compensator === null) t.compensator = null;
  else if (isObj(raw.compensator)) {
    const c = raw.compensator;
    if ((c.kind === 'full-wave' || c.kind === 'quarter-wave') && num(c.retardanceNm) && c.retardanceNm >= 1 && c.retardanceNm <= 5000 && num(c.axisDeg) && Math.abs(c.axisDeg) <= 360) {
      t.compensator = withUnknown<NonNullable<TrainSettings['compensator']>>(c, COMPENSATOR_KEYS, { kind: c.kind, retardanceNm: c.retardanceNm, axisDeg: c.axisDeg });
    } else notes.push('the compensator was unreadable; the default full-wave plate was used');
  }
  if (typeof raw.illuminant === 'string') {
    try { parseIlluminant(raw.illuminant); t.illuminant = raw.illuminant; } catch { notes.push(`illuminant "${raw.illuminant}" is not known; 3200K used`); }
  }
  return withUnknown(raw, TRAIN_KEYS, t);
}

function restorePixelSize(raw: unknown, notes: string[]): PixelSizeSource {
  if (!isObj(raw) || raw.source === 'none' || raw.source === undefined) return withUnknown<PixelSizeSource>(raw, PIXEL_SIZE_KEYS, { source: 'none' });
  let p: PixelSizeSource | null = null;
  if (raw.source === 'optics' && num(raw.cameraPixelUm) && num(raw.objectiveMagnification)) {
    p = { source: 'optics', cameraPixelUm: raw.cameraPixelUm, objectiveMagnification: raw.objectiveMagnification, intermediateMagnification: num(raw.intermediateMagnification) ? raw.intermediateMagnification : 1, binning: num(raw.binning) ? raw.binning : 1 };
  } else if (raw.source === 'typed' && num(raw.pixelSizeUmPerPx)) p = { source: 'typed', pixelSizeUmPerPx: raw.pixelSizeUmPerPx };
  else if (raw.source === 'measured' && num(raw.pixelSizeUmPerPx)) p = { source: 'measured', pixelSizeUmPerPx: raw.pixelSizeUmPerPx, from: typeof raw.from === 'string' ? raw.from : '' };
  if (p) {
    try { setupPixelSizeUmPerPx(p); return withUnknown(raw, PIXEL_SIZE_KEYS, p); } catch { /* reported below */ }
  }
  notes.push('the pixel size was unreadable or out of range; it was left unset');
  return { source: 'none' };
}

/**
 * Restores a stored set-up. Version 0 (no schemaVersion) is read with defaults filled in; fields that
 * cannot be read get their defaults and are named in `notes`; a record from a newer version is refused
 * (the store keeps it aside unchanged).
 */
export function restoreSetup(raw: unknown): RestoredSetup {
  if (!isObj(raw)) return { ok: false, reason: 'it is not a set-up record' };
  if (raw.schemaVersion !== undefined && !num(raw.schemaVersion)) return { ok: false, reason: 'its schemaVersion is not a number' };
  if (num(raw.schemaVersion) && raw.schemaVersion > SETUP_SCHEMA_VERSION) return { ok: false, reason: `it was written by a newer version of the app (schemaVersion ${raw.schemaVersion})` };
  if (raw.kind !== undefined && raw.kind !== 'setup') return { ok: false, reason: `it is a ${String(raw.kind)} record, not a set-up` };
  if (typeof raw.id !== 'string' || !raw.id) return { ok: false, reason: 'it has no set-up id' };
  const notes: string[] = [];
  if (raw.schemaVersion === undefined) notes.push('upgraded from an early record without a version');
  const now = new Date().toISOString();
  const sign = raw.sampleSign === 'negative' ? 'negative' : 'positive';
  if (raw.sampleSign !== undefined && raw.sampleSign !== 'positive' && raw.sampleSign !== 'negative') notes.push('the sample sign was unreadable; positive used');
  return {
    ok: true, notes,
    value: {
      ...unknownKeys(raw, SETUP_KEYS),
      schemaVersion: SETUP_SCHEMA_VERSION, kind: 'setup', id: raw.id,
      name: (typeof raw.name === 'string' && raw.name.trim() ? raw.name.trim() : 'Unnamed set-up').slice(0, 120),
      createdAt: typeof raw.createdAt === 'string' ? raw.createdAt : now, updatedAt: typeof raw.updatedAt === 'string' ? raw.updatedAt : now,
      train: restoreTrain(raw.train, notes), pixelSize: restorePixelSize(raw.pixelSize, notes), sampleSign: sign,
      notes: typeof raw.notes === 'string' ? raw.notes.slice(0, 2000) : '',
    },
  };
}

/**
 * The copy of a set-up a session keeps when it is applied: its values at that moment, so editing or
 * deleting the named set-up later does not change what the session's numbers were made with.
 */
export interface AppliedSetup {
  setupId: string;
  name: string;
  appliedAt: string;
  train: TrainSettings;
  pixelSize: PixelSizeSource;
  sampleSign: SampleSign;
}

export function applied(s: SetupRecord, now = new Date()): AppliedSetup {
  return { setupId: s.id, name: s.name, appliedAt: now.toISOString(), train: structuredClone(s.train), pixelSize: structuredClone(s.pixelSize), sampleSign: s.sampleSign };
}

/** Reads an applied set-up kept in a session record; null when absent or unreadable. */
export function restoreApplied(raw: unknown): AppliedSetup | null {
  if (!isObj(raw) || typeof raw.setupId !== 'string') return null;
  const r = restoreSetup({ ...raw, id: raw.setupId, kind: 'setup', schemaVersion: SETUP_SCHEMA_VERSION });
  if (!r.ok || r.notes.length) return null;
  return withUnknown(raw, APPLIED_KEYS, { setupId: raw.setupId, name: r.value.name, appliedAt: typeof raw.appliedAt === 'string' ? raw.appliedAt : r.value.updatedAt, train: r.value.train, pixelSize: r.value.pixelSize, sampleSign: r.value.sampleSign });
}

/**
 * The pixel size an image is measured with: the applied set-up's when it gives one (docs/methods.md §11.2:
 * the file's value is always overridable), else the file's, else none.
 */
export function effectivePixelSize(setup: AppliedSetup | null, fileUmPerPx: number | null): { umPerPx: number | null; from: 'set-up' | 'file' | 'none' } {
  if (setup) {
    try { const v = setupPixelSizeUmPerPx(setup.pixelSize); if (v !== null) return { umPerPx: v, from: 'set-up' }; } catch { /* an invalid set-up value is not used */ }
  }
  if (fileUmPerPx !== null && fileUmPerPx > 0) return { umPerPx: fileUmPerPx, from: 'file' };
  return { umPerPx: null, from: 'none' };
}
