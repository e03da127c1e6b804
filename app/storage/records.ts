/**
 * What the app keeps on the device, and the restore step every stored record passes through when
 * read back: records from older versions are upgraded, damaged parts are left out (and the original
 * kept aside by the store), records from a newer version are kept aside untouched.
 *
 * Restore keeps every key it does not know, as it was, on a session and on every object inside it (settings,
 * image entries, work entries, walls, optical readings and forms, diameter runs, calibrations, the applied
 * set-up), so a copy of the app that is not yet up to date never drops a newer copy's optional field when
 * it saves; results of the analyses are kept whole. New optional fields are therefore added without bumping
 * the version (list them in the key sets below, and keep them JSON values or Blobs so backups carry them).
 */
import { upgradeCommandLine, upgradeResult, type ReadingKind, type MicrometerDocument, type OpticsResult, type OrientResult, type ProfileResult } from '../../src/analyses/index.ts';
import type { DiameterDocument } from '../../src/analyses/index.ts';
import type { Channel, Segment, WallFit } from '../../src/channel/index.ts';
import { DEFAULT_WEIGHTING, formerWeighting, TEXTURE_WEIGHTINGS, type Weighting } from '../../src/order/index.ts';
import { COMPENSATOR_OFFSET_DEG, DEFAULT_ANGLES_DEG, DEFAULT_ILLUMINANT, OPTICS_LIMITS } from '../../src/analyses/index.ts';
import { withinLimit } from '../../src/common/index.ts';
import { TENSOR_LIMITS } from '../../src/orientation/index.ts';
import { PROFILE_LIMITS } from '../../src/channel/index.ts';
import { DIAMETER_LIMITS } from '../../src/fibre/index.ts';
import { restoreApplied, type AppliedSetup } from '../setups/setup.ts';
import { SERIES_MODELS, TREND_READINGS, type SeriesResult, type TrendReading } from '../../src/analyses/index.ts';
import type { SeriesForm, SeriesRequest } from '../series/seriesForm.ts';
import type { TrendForm } from '../trend/trendForm.ts';
import { keySet, unknownKeys, withUnknown } from './unknownKeys.ts';

/**
 * Version of every stored record. Adding an optional field needs no bump (older copies keep keys they do not
 * know); bump only when a field changes meaning, and add the upgrade in restore: older copies then keep the
 * newer records aside untouched instead of misreading them.
 */
export const STORAGE_SCHEMA_VERSION = 1;

/** The settings of the texture orientation and profile analyses (the CLI's option names, camelCase). */
export interface AnalysisSettings {
  sigmaPx: number;
  weighting: Weighting;
  /** Reference axis for S_axis in the orientation analysis; null = free director only. */
  axisDeg: number | null;
  bins: number;
  stations: number;
  coreMax: number;
  skinMin: number;
}

/** The ranges of the number settings, as the analyses check them (the form and restore use the same). */
export const SETTING_LIMITS = {
  sigmaPx: TENSOR_LIMITS.sigmaPx, bins: PROFILE_LIMITS.bins, stations: PROFILE_LIMITS.stations, coreMax: PROFILE_LIMITS.coreMax, skinMin: PROFILE_LIMITS.skinMin,
} as const;

/** The analyses' defaults (retarda orient / profile). */
export const DEFAULT_SETTINGS: AnalysisSettings = {
  sigmaPx: SETTING_LIMITS.sigmaPx.default, weighting: DEFAULT_WEIGHTING.texture, axisDeg: null, bins: SETTING_LIMITS.bins.default,
  stations: SETTING_LIMITS.stations.default, coreMax: SETTING_LIMITS.coreMax.default, skinMin: SETTING_LIMITS.skinMin.default,
};

export interface ImageMeta { id: string; name: string; type: string; size: number; page: number; addedAt: string }

export interface ImageRecord extends ImageMeta { schemaVersion: number; kind: 'image'; blob: Blob }

/** What was done on one image of a session. */
export interface ImageWork {
  walls: Channel | null;
  wallsFound: boolean;
  /** How well each found wall's edge points lay on its line (display only; kept as stored). */
  wallFit?: [WallFit, WallFit] | null;
  orient: OrientResult | null;
  profile: ProfileResult | null;
  /** Fibre diameters measured on the image (`retarda diameter`'s document); absent in older records. */
  diameter?: DiameterDocument | null;
  /** The form settings and command line that made `diameter`; absent in older records. */
  diameterRun?: StoredDiameterRun | null;
  /** The last optical reading made with this image first (plate, plate2 or quad); absent in older records. */
  optics?: StoredOptics | null;
  /** The micrometer calibration made on this image (`retarda calibrate`'s document); absent in older records. */
  micrometer?: StoredMicrometer | null;
}

/** Which optical reading made a result: the `retarda` subcommand of the same name (README, "Glossary"). */
export type OpticsKind = ReadingKind;

/**
 * The optical panel's form as typed (text, blank = the command line's default), kept with the reading it made
 * so the form comes back after a reload. Images are named by their ids in the session.
 */
export interface OpticalForm {
  compensatorNm: string; compensatorDeg: string; polariserDeg: string; illuminant: string; retardanceMaxNm: string;
  background: string; sign: 'positive' | 'negative'; match: 'lab' | 'chroma'; axisDeg: string; resolveMirror: boolean;
  imageB: string; turnDeg: string; quadImages: string[]; quadAngles: string[]; quadPlate: string; quadPlateBackground: string;
  /** One-image reading: the sample's known retardance and its tolerance, nm (`--sample-retardance-nm`, `--sample-retardance-tolerance-nm`). */
  sampleRetardanceNm: string; sampleRetardanceToleranceNm: string;
}

/** The optical form before anything is typed: the `retarda plate` / `plate-pair` / `angle-series` defaults. */
export const DEFAULT_OPTICAL_FORM: OpticalForm = {
  compensatorNm: '', compensatorDeg: String(OPTICS_LIMITS.polariserDeg.default + COMPENSATOR_OFFSET_DEG), polariserDeg: String(OPTICS_LIMITS.polariserDeg.default),
  illuminant: DEFAULT_ILLUMINANT, retardanceMaxNm: String(OPTICS_LIMITS.retardanceMaxNm.default), background: '',
  sign: 'positive', match: 'lab', axisDeg: '', resolveMirror: false, imageB: '', turnDeg: String(OPTICS_LIMITS.turnDeg.default),
  quadImages: DEFAULT_ANGLES_DEG.map(() => ''), quadAngles: DEFAULT_ANGLES_DEG.map(String), quadPlate: '', quadPlateBackground: '',
  sampleRetardanceNm: '', sampleRetardanceToleranceNm: '',
};

/** Form fields added after forms were first kept: a stored form without them is read with their defaults. */
const LATER_FORM_KEYS: readonly (keyof OpticalForm)[] = ['sampleRetardanceNm', 'sampleRetardanceToleranceNm'];

/** An optical reading as shown: its result, the equivalent command line, the retardance colour-bar range and the form that made it. */
export interface StoredOptics { kind: OpticsKind; result: OpticsResult; commandLine: string; rangeNm: [number, number] | null; form?: OpticalForm }

/** The diameter panel's form as typed (text, blank = the command line's default). */
export interface DiameterForm { umPerPx: string; stepPx: string; averagePx: string; polarity: 'auto' | 'dark' | 'bright'; backgroundDegree: string }

/** The `retarda diameter` defaults, as the form shows them. */
export const DEFAULT_DIAMETER_FORM: DiameterForm = {
  umPerPx: '', stepPx: String(DIAMETER_LIMITS.stepPx.default), averagePx: String(DIAMETER_LIMITS.averageLengthPx.default), polarity: 'auto',
  backgroundDegree: String(DIAMETER_LIMITS.shadingDegree.default),
};

/**
 * How a stored diameter result was made: the form, the equivalent command line and, when lengths are in um,
 * where the pixel size came from in plain words (`calibrationWords`); absent in older records.
 */
export interface StoredDiameterRun { form: DiameterForm; commandLine: string; pixelSizeFrom?: string }

/** A micrometer calibration as shown: the document and the equivalent command line. */
export interface StoredMicrometer { doc: MicrometerDocument; commandLine: string }

/** A pixel size the user chose for the session's lengths (from a micrometer image), and where it came from. */
/** `uncertainty`: relative standard uncertainty (k = 1) when the size came from a calibration that gives one. */
export interface SessionPixelSize { umPerPx: number; from: string; uncertainty?: number }

export interface SessionRecord {
  schemaVersion: number;
  kind: 'session';
  id: string;
  name: string;
  createdAt: string;
  updatedAt: string;
  images: ImageMeta[];
  activeImageId: string | null;
  settings: AnalysisSettings;
  work: Record<string, ImageWork>;
  /** The set-up applied to the session's images (a copy of its values when applied); null = none. */
  setup: AppliedSetup | null;
  /** The pixel size chosen from a micrometer calibration for this session's lengths; absent in older records. */
  pixelSize?: SessionPixelSize | null;
  /**
   * How many times the record has been written (0 when created; absent in older records, read as 0). The store
   * writes a session only over the revision it last read or wrote, so a tab never overwrites another tab's save.
   */
  revision?: number;
  /** The Over time screen's form and last fit (app/series); absent in older records. */
  series?: StoredSeries | null;
  /** The "Against a variable" screen's form (app/trend): the reading, the variable and each image's value; absent in older records. */
  trend?: TrendForm | null;
}

/** The Over time screen as kept with the session: its form and the last run (request and result), or none. */
export interface StoredSeries { form: SeriesForm; run: { request: SeriesRequest; result: SeriesResult } | null }

/** The keys this version reads on each level of a session record; restore keeps any other key as it was. */
const SESSION_KEYS = keySet<SessionRecord>({
  schemaVersion: true, kind: true, id: true, name: true, createdAt: true, updatedAt: true, images: true, activeImageId: true,
  settings: true, work: true, setup: true, pixelSize: true, revision: true, series: true, trend: true,
});
const SERIES_FORM_KEYS = keySet<SeriesForm>({ chosen: true, timing: true, intervalS: true, startS: true, timesS: true, axisDeg: true, model: true });
const STORED_SERIES_KEYS = keySet<StoredSeries>({ form: true, run: true });
const TREND_FORM_KEYS = keySet<TrendForm>({ reading: true, variable: true, unit: true, values: true });
const SETTINGS_KEYS = keySet<AnalysisSettings>({ sigmaPx: true, weighting: true, axisDeg: true, bins: true, stations: true, coreMax: true, skinMin: true });
const IMAGE_META_KEYS = keySet<ImageMeta>({ id: true, name: true, type: true, size: true, page: true, addedAt: true });
const IMAGE_RECORD_KEYS = keySet<ImageRecord>({ id: true, name: true, type: true, size: true, page: true, addedAt: true, schemaVersion: true, kind: true, blob: true });
const WORK_KEYS = keySet<ImageWork>({
  walls: true, wallsFound: true, wallFit: true, orient: true, profile: true, diameter: true, diameterRun: true, optics: true, micrometer: true,
});
const SEGMENT_KEYS = keySet<Segment>({ x1: true, y1: true, x2: true, y2: true });
const CHANNEL_KEYS = keySet<Channel>({ walls: true });
const OPTICS_KEYS = keySet<StoredOptics>({ kind: true, result: true, commandLine: true, rangeNm: true, form: true });
const OPTICAL_FORM_KEYS = keySet<OpticalForm>(Object.fromEntries(Object.keys(DEFAULT_OPTICAL_FORM).map((k) => [k, true])) as Record<keyof OpticalForm, true>);
const DIAMETER_RUN_KEYS = keySet<StoredDiameterRun>({ form: true, commandLine: true, pixelSizeFrom: true });
const DIAMETER_FORM_KEYS = keySet<DiameterForm>({ umPerPx: true, stepPx: true, averagePx: true, polarity: true, backgroundDegree: true });
const MICROMETER_KEYS = keySet<StoredMicrometer>({ doc: true, commandLine: true });
const PIXEL_SIZE_KEYS = keySet<SessionPixelSize>({ umPerPx: true, from: true, uncertainty: true });

export const EMPTY_WORK: ImageWork = { walls: null, wallsFound: false, orient: null, profile: null };

export type Restored<T> =
  | { ok: true; value: T; /** What had to be left out or upgraded; the store keeps the original aside when any was left out. */ notes: string[]; lossy: boolean }
  | { ok: false; reason: string };

const isObj = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const str = (v: unknown, d: string) => (typeof v === 'string' ? v : d);
const num = (v: unknown) => typeof v === 'number' && Number.isFinite(v);

function versionCheck(raw: Record<string, unknown>): string | null {
  const v = raw.schemaVersion;
  if (v === undefined) return null;
  if (!num(v)) return 'its schemaVersion is not a number';
  if ((v as number) > STORAGE_SCHEMA_VERSION) return `it was written by a newer version of the app (schemaVersion ${v})`;
  return null;
}

function restoreSettings(raw: unknown, notes: string[]): AnalysisSettings {
  if (!isObj(raw)) { if (raw !== undefined) notes.push('settings were unreadable; defaults used'); return { ...DEFAULT_SETTINGS }; }
  const s = { ...unknownKeys(raw, SETTINGS_KEYS), ...DEFAULT_SETTINGS };
  // Each number within the range the analysis checks (SETTING_LIMITS), else its default.
  for (const k of Object.keys(SETTING_LIMITS) as (keyof typeof SETTING_LIMITS)[]) {
    if (raw[k] === undefined) continue;
    if (withinLimit(SETTING_LIMITS[k], raw[k])) s[k] = raw[k];
    else notes.push(`setting ${k} was out of range; default used`);
  }
  if (raw.axisDeg === null || num(raw.axisDeg)) s.axisDeg = (raw.axisDeg as number | null) ?? null;
  // Weighting names of schema 1 (energy, energy-confidence, confidence) are read as their new names.
  const w = typeof raw.weighting === 'string' ? formerWeighting(raw.weighting, true) ?? raw.weighting : null;
  if (w !== null && (TEXTURE_WEIGHTINGS as string[]).includes(w)) s.weighting = w as Weighting;
  return s;
}

function restoreSegment(v: unknown): Segment | null {
  if (!isObj(v) || ![v.x1, v.y1, v.x2, v.y2].every(num)) return null;
  return withUnknown(v, SEGMENT_KEYS, { x1: v.x1 as number, y1: v.y1 as number, x2: v.x2 as number, y2: v.y2 as number });
}

function restoreChannel(v: unknown): Channel | null {
  if (!isObj(v) || !Array.isArray(v.walls) || v.walls.length !== 2) return null;
  const a = restoreSegment(v.walls[0]), b = restoreSegment(v.walls[1]);
  return a && b ? withUnknown(v, CHANNEL_KEYS, { walls: [a, b] as [Segment, Segment] }) : null;
}

/** A stored result of `analysis`; one of an earlier result schema is read with today's names (upgradeResult). */
function restoreResult<T>(v: unknown, analysis: string): T | null {
  const d = upgradeResult(v);
  return isObj(d) && num(d.schemaVersion) && d.analysis === analysis ? (d as T) : null;
}

const OPTICS_KINDS: readonly string[] = ['plate', 'plate-pair', 'angle-series'];
/** Reading kinds as stored before result schema 2. */
const FORMER_OPTICS_KINDS: Record<string, OpticsKind> = { plate2: 'plate-pair', quad: 'angle-series' };

const strings4 = (v: unknown): string[] | null => (Array.isArray(v) && v.length === 4 && v.every((x) => typeof x === 'string') ? [...v] : null);

/** A stored optical form: every field must have its type and, for the choices, a known value; else the whole form is unreadable. */
function restoreOpticalForm(v: unknown): OpticalForm | null {
  if (!isObj(v)) return null;
  const d = DEFAULT_OPTICAL_FORM;
  const texts = (Object.keys(d) as (keyof OpticalForm)[]).filter((k) => typeof d[k] === 'string');
  if (texts.some((k) => typeof v[k] !== 'string' && !(v[k] === undefined && LATER_FORM_KEYS.includes(k)))) return null;
  if (v.sign !== 'positive' && v.sign !== 'negative') return null;
  if (v.match !== 'lab' && v.match !== 'chroma') return null;
  if (typeof v.resolveMirror !== 'boolean') return null;
  const quadImages = strings4(v.quadImages), quadAngles = strings4(v.quadAngles);
  if (!quadImages || !quadAngles) return null;
  const form = { ...d, quadImages, quadAngles, resolveMirror: v.resolveMirror, sign: v.sign, match: v.match } as OpticalForm;
  for (const k of texts) if (v[k] !== undefined) (form as unknown as Record<string, unknown>)[k] = v[k];
  return withUnknown(v, OPTICAL_FORM_KEYS, form);
}

/** A stored optical reading: a known kind, a result of that analysis and its command line; an unreadable form is left out. */
function restoreOptics(v: unknown): StoredOptics | null {
  if (!isObj(v) || typeof v.kind !== 'string' || typeof v.commandLine !== 'string') return null;
  const kind = FORMER_OPTICS_KINDS[v.kind] ?? v.kind;
  if (!OPTICS_KINDS.includes(kind)) return null;
  const result = restoreResult<OpticsResult>(v.result, kind);
  if (!result) return null;
  const r = v.rangeNm;
  const rangeNm = Array.isArray(r) && r.length === 2 && r.every(num) ? [r[0] as number, r[1] as number] as [number, number] : null;
  const form = v.form == null ? null : restoreOpticalForm(v.form);
  return withUnknown(v, OPTICS_KEYS, { kind: kind as OpticsKind, result, commandLine: upgradeCommandLine(v.commandLine), rangeNm, ...(form ? { form } : {}) });
}

/** How a stored diameter result was made: the form (all text, a known polarity) and its command line. */
function restoreDiameterRun(v: unknown): StoredDiameterRun | null {
  if (!isObj(v) || typeof v.commandLine !== 'string' || !isObj(v.form)) return null;
  const f = v.form;
  if (![f.umPerPx, f.stepPx, f.averagePx, f.backgroundDegree].every((x) => typeof x === 'string')) return null;
  if (f.polarity !== 'auto' && f.polarity !== 'dark' && f.polarity !== 'bright') return null;
  return withUnknown<StoredDiameterRun>(v, DIAMETER_RUN_KEYS, {
    commandLine: upgradeCommandLine(v.commandLine), ...(typeof v.pixelSizeFrom === 'string' ? { pixelSizeFrom: v.pixelSizeFrom } : {}),
    form: withUnknown<DiameterForm>(f, DIAMETER_FORM_KEYS, { umPerPx: f.umPerPx as string, stepPx: f.stepPx as string, averagePx: f.averagePx as string, polarity: f.polarity, backgroundDegree: f.backgroundDegree as string }),
  });
}

/** A stored micrometer calibration: a `calibrate` document with a usable pixel size, and its command line. */
function restoreMicrometer(v: unknown): StoredMicrometer | null {
  if (!isObj(v) || typeof v.commandLine !== 'string') return null;
  const doc = restoreResult<MicrometerDocument>(v.doc, 'calibrate');
  if (!doc || doc.method !== 'micrometer' || !num(doc.umPerPx) || doc.umPerPx <= 0) return null;
  return withUnknown(v, MICROMETER_KEYS, { doc, commandLine: v.commandLine });
}

/** The session's chosen pixel size: a positive finite number of um per pixel and where it came from. */
function restorePixelSize(v: unknown): SessionPixelSize | null {
  if (!isObj(v) || !num(v.umPerPx) || (v.umPerPx as number) <= 0) return null;
  const u = typeof v.uncertainty === 'number' && Number.isFinite(v.uncertainty) && v.uncertainty >= 0 ? { uncertainty: v.uncertainty } : {};
  return withUnknown(v, PIXEL_SIZE_KEYS, { umPerPx: v.umPerPx as number, from: str(v.from, 'a micrometer image'), ...u });
}

function restoreImageMeta(v: unknown): ImageMeta | null {
  if (!isObj(v) || typeof v.id !== 'string' || !v.id) return null;
  return {
    id: v.id, name: str(v.name, 'image'), type: str(v.type, ''), size: num(v.size) ? (v.size as number) : 0,
    page: num(v.page) ? (v.page as number) : 0, addedAt: str(v.addedAt, new Date(0).toISOString()),
  };
}

/**
 * Restores a stored session record. Version 0 (no schemaVersion) is read with defaults filled in;
 * image entries, walls or results that cannot be read are left out and named in `notes`.
 */
export function restoreSession(raw: unknown): Restored<SessionRecord> {
  if (!isObj(raw)) return { ok: false, reason: 'it is not a session record' };
  const bad = versionCheck(raw);
  if (bad) return { ok: false, reason: bad };
  if (raw.kind !== undefined && raw.kind !== 'session') return { ok: false, reason: `it is a ${String(raw.kind)} record, not a session` };
  if (typeof raw.id !== 'string' || !raw.id) return { ok: false, reason: 'it has no session id' };
  const notes: string[] = [];
  let lossy = false;
  if (raw.schemaVersion === undefined) notes.push('upgraded from an early record without a version');
  const images: ImageMeta[] = [];
  for (const m of Array.isArray(raw.images) ? raw.images : []) {
    const meta = restoreImageMeta(m);
    if (meta) images.push({ ...unknownKeys(m as Record<string, unknown>, IMAGE_META_KEYS), ...meta }); else { notes.push('an image entry was unreadable'); lossy = true; }
  }
  const work: Record<string, ImageWork> = {};
  const rawWork = isObj(raw.work) ? raw.work : {};
  for (const img of images) {
    const w = rawWork[img.id];
    if (!isObj(w)) { work[img.id] = { ...EMPTY_WORK }; continue; }
    const walls = w.walls == null ? null : restoreChannel(w.walls);
    const orient = w.orient == null ? null : restoreResult<OrientResult>(w.orient, 'orient');
    const profile = w.profile == null ? null : restoreResult<ProfileResult>(w.profile, 'profile');
    const diameter = w.diameter == null ? null : restoreResult<DiameterDocument>(w.diameter, 'diameter');
    const diameterRun = diameter && w.diameterRun != null ? restoreDiameterRun(w.diameterRun) : null;
    const optics = w.optics == null ? null : restoreOptics(w.optics);
    const micrometer = w.micrometer == null ? null : restoreMicrometer(w.micrometer);
    if ((w.walls != null && !walls) || (w.orient != null && !orient) || (w.profile != null && !profile) || (w.diameter != null && !diameter)
      || (diameter && w.diameterRun != null && !diameterRun) || (optics && isObj(w.optics) && w.optics.form != null && !optics.form)
      || (w.optics != null && !optics) || (w.micrometer != null && !micrometer)) {
      notes.push(`part of the work on ${img.name} was unreadable`);
      lossy = true;
    }
    work[img.id] = {
      ...unknownKeys(w, WORK_KEYS), walls, wallsFound: w.wallsFound === true, ...(isWallFit(w.wallFit) ? { wallFit: w.wallFit } : {}), orient, profile,
      ...(diameter ? { diameter } : {}), ...(diameterRun ? { diameterRun } : {}), ...(optics ? { optics } : {}), ...(micrometer ? { micrometer } : {}),
    };
  }
  const active = typeof raw.activeImageId === 'string' && images.some((i) => i.id === raw.activeImageId) ? raw.activeImageId : images[0]?.id ?? null;
  const setup = raw.setup == null ? null : restoreApplied(raw.setup);
  if (raw.setup != null && !setup) { notes.push('the applied set-up was unreadable'); lossy = true; }
  const pixelSize = raw.pixelSize == null ? null : restorePixelSize(raw.pixelSize);
  if (raw.pixelSize != null && !pixelSize) { notes.push('the session\'s pixel size was unreadable'); lossy = true; }
  const series = raw.series == null ? null : restoreSeries(raw.series);
  if (raw.series != null && !series) { notes.push('the Over time screen\'s form was unreadable'); lossy = true; }
  const trend = raw.trend == null ? null : restoreTrendForm(raw.trend);
  if (raw.trend != null && !trend) { notes.push('the Against a variable screen\'s form was unreadable'); lossy = true; }
  const now = new Date().toISOString();
  return {
    ok: true, notes, lossy,
    value: {
      ...unknownKeys(raw, SESSION_KEYS), schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'session', id: raw.id, name: str(raw.name, 'Untitled session').slice(0, 200) || 'Untitled session',
      createdAt: str(raw.createdAt, now), updatedAt: str(raw.updatedAt, now), images, activeImageId: active,
      settings: restoreSettings(raw.settings, notes), work, setup, pixelSize,
      ...(series ? { series } : {}), ...(trend ? { trend } : {}),
      ...(raw.revision !== undefined ? { revision: revisionOf(raw) } : {}),
    },
  };
}

/** A record's revision: a non-negative whole number, else 0 (records from before revisions were kept). */
export function revisionOf(raw: unknown): number {
  const r = isObj(raw) ? raw.revision : undefined;
  return typeof r === 'number' && Number.isInteger(r) && r >= 0 ? r : 0;
}

/** Restores a stored image record: it must hold the image bytes as a Blob. */
export function restoreImage(raw: unknown): Restored<ImageRecord> {
  if (!isObj(raw)) return { ok: false, reason: 'it is not an image record' };
  const bad = versionCheck(raw);
  if (bad) return { ok: false, reason: bad };
  const meta = restoreImageMeta(raw);
  if (!meta) return { ok: false, reason: 'it has no image id' };
  if (!(raw.blob instanceof Blob)) return { ok: false, reason: 'its image bytes are missing' };
  return { ok: true, notes: [], lossy: false, value: { ...unknownKeys(raw, IMAGE_RECORD_KEYS), ...meta, schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'image', blob: raw.blob } };
}

export function newSession(id: string, name: string, now = new Date()): SessionRecord {
  const t = now.toISOString();
  return {
    schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'session', id, name, createdAt: t, updatedAt: t,
    images: [], activeImageId: null, settings: { ...DEFAULT_SETTINGS }, work: {}, setup: null, pixelSize: null, revision: 0,
  };
}

/** A stored pair of wall fits (display only): two objects with finite numbers, else dropped. */
function isWallFit(v: unknown): v is [WallFit, WallFit] {
  return Array.isArray(v) && v.length === 2 && v.every((f) => isObj(f) && ['residualPx', 'points', 'strips'].every((k) => Number.isFinite((f as Record<string, unknown>)[k])));
}

const isStrings = (v: unknown): v is string[] => Array.isArray(v) && v.every((x) => typeof x === 'string');
const isTextRecord = (v: unknown): v is Record<string, string> => isObj(v) && Object.values(v).every((x) => typeof x === 'string');

/** The Over time form: every field of its type and a known model and timing; else unreadable (null). */
function restoreSeriesForm(v: unknown): SeriesForm | null {
  if (!isObj(v)) return null;
  if (!(v.chosen === null || isStrings(v.chosen)) || (v.timing !== 'interval' && v.timing !== 'each') || !isTextRecord(v.timesS)) return null;
  if (![v.intervalS, v.startS, v.axisDeg].every((x) => typeof x === 'string') || !(SERIES_MODELS as readonly unknown[]).includes(v.model)) return null;
  return withUnknown<SeriesForm>(v, SERIES_FORM_KEYS, {
    chosen: v.chosen === null ? null : [...(v.chosen as string[])], timing: v.timing, intervalS: v.intervalS as string, startS: v.startS as string,
    timesS: { ...v.timesS }, axisDeg: v.axisDeg as string, model: v.model as SeriesForm['model'],
  });
}

/** The Over time screen kept with a session: its form (needed) and its last run (a series result and the request that made it; left out when unreadable). */
function restoreSeries(v: unknown): StoredSeries | null {
  if (!isObj(v)) return null;
  const form = restoreSeriesForm(v.form);
  if (!form) return null;
  let run: StoredSeries['run'] = null;
  if (isObj(v.run) && isObj(v.run.request)) {
    const q = v.run.request, result = restoreResult<SeriesResult>(v.run.result, 'series');
    const ok = result && isStrings(q.keys) && isStrings(q.names) && Array.isArray(q.tSeconds) && q.tSeconds.every(num) && isObj(q.times) && isObj(q.options);
    if (ok) run = { request: q as unknown as SeriesRequest, result };
  }
  return withUnknown<StoredSeries>(v, STORED_SERIES_KEYS, { form, run });
}

/** The Against a variable form: a known reading, text name and unit, and text values by image id; else unreadable (null). */
function restoreTrendForm(v: unknown): TrendForm | null {
  if (!isObj(v) || !(TREND_READINGS as readonly unknown[]).includes(v.reading) || typeof v.variable !== 'string' || typeof v.unit !== 'string' || !isTextRecord(v.values)) return null;
  return withUnknown<TrendForm>(v, TREND_FORM_KEYS, { reading: v.reading as TrendReading, variable: v.variable, unit: v.unit, values: { ...v.values } });
}

/**
 * The screens' kept state with image ids renamed (a session copied under new image ids): the Against a variable
 * values and the Over time frames, times and last run follow their images; an id not in `ids` is dropped.
 */
export function screensWithIds(s: Pick<SessionRecord, 'series' | 'trend'>, ids: ReadonlyMap<string, string>): Pick<SessionRecord, 'series' | 'trend'> {
  const keyed = (r: Record<string, string>) => Object.fromEntries(Object.entries(r).filter(([k]) => ids.has(k)).map(([k, v]) => [ids.get(k)!, v]));
  const out: Pick<SessionRecord, 'series' | 'trend'> = {};
  if (s.trend) out.trend = { ...s.trend, values: keyed(s.trend.values) };
  if (s.series) {
    const f = s.series.form, run = s.series.run;
    out.series = {
      ...s.series,
      form: { ...f, chosen: f.chosen === null ? null : f.chosen.filter((k) => ids.has(k)).map((k) => ids.get(k)!), timesS: keyed(f.timesS) },
      run: run && run.request.keys.every((k) => ids.has(k)) ? { ...run, request: { ...run.request, keys: run.request.keys.map((k) => ids.get(k)!) } } : null,
    };
  }
  return out;
}
