/**
 * A backup of everything the app keeps, as one JSON file: every record under its key, Blobs written
 * as base64. Importing adds the backup's sessions under new ids, so it never overwrites anything.
 */
import { restoreImage, restoreSession, STORAGE_SCHEMA_VERSION } from './records.ts';
import { ASIDE_PREFIX, IMAGE_PREFIX, SESSION_PREFIX, type SessionStore } from './store.ts';
import { SETUP_PREFIX } from './setups.ts';
import { restoreSetup } from '../setups/setup.ts';

export const BACKUP_KIND = 'retarda-backup';

export function bytesToBase64(bytes: Uint8Array): string {
  let s = '';
  for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(s);
}

export function base64ToBytes(b64: string): Uint8Array {
  const s = atob(b64);
  const out = new Uint8Array(s.length);
  for (let i = 0; i < s.length; i++) out[i] = s.charCodeAt(i);
  return out;
}

/**
 * Deep copy with every Blob replaced by { $blob: { type, base64 } } and every number JSON cannot hold (NaN, the
 * infinities: a withheld number is NaN in a stored result) by { $number: 'NaN' | 'Infinity' | '-Infinity' }, which
 * JSON.stringify would otherwise write as null.
 */
async function toJsonSafe(v: unknown): Promise<unknown> {
  if (typeof v === 'number' && !Number.isFinite(v)) return { $number: String(v) };
  if (v instanceof Blob) return { $blob: { type: v.type, base64: bytesToBase64(new Uint8Array(await v.arrayBuffer())) } };
  if (Array.isArray(v)) return Promise.all(v.map(toJsonSafe));
  if (typeof v === 'object' && v !== null) {
    const out: Record<string, unknown> = {};
    for (const [k, x] of Object.entries(v)) out[k] = await toJsonSafe(x);
    return out;
  }
  return v;
}

function fromJsonSafe(v: unknown): unknown {
  if (Array.isArray(v)) return v.map(fromJsonSafe);
  if (typeof v === 'object' && v !== null) {
    const num = (v as { $number?: unknown }).$number;
    if (num === 'NaN' || num === 'Infinity' || num === '-Infinity') return Number(num);
    const b = (v as { $blob?: { type?: unknown; base64?: unknown } }).$blob;
    if (b && typeof b.base64 === 'string') return new Blob([base64ToBytes(b.base64) as Uint8Array<ArrayBuffer>], { type: typeof b.type === 'string' ? b.type : '' });
    return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, fromJsonSafe(x)]));
  }
  return v;
}

/** The backup document as text. */
export async function exportBackup(store: SessionStore, now = new Date()): Promise<string> {
  const records: { key: string; value: unknown }[] = [];
  for (const [k, v] of await store.kv.entries()) {
    const key = String(k);
    if (key.startsWith(SESSION_PREFIX) || key.startsWith(IMAGE_PREFIX) || key.startsWith(ASIDE_PREFIX) || key.startsWith(SETUP_PREFIX)) records.push({ key, value: await toJsonSafe(v) });
  }
  return JSON.stringify({ schemaVersion: STORAGE_SCHEMA_VERSION, kind: BACKUP_KIND, exportedAt: now.toISOString(), records });
}

export class BackupError extends Error {
  constructor(message: string) { super(message); this.name = 'BackupError'; }
}

export interface ImportReport { sessions: number; images: number; setups: number; setAside: number; notes: string[] }

/**
 * Adds a backup's contents: sessions and images get new ids (so nothing present is replaced),
 * records that cannot be read are added aside with the reason.
 */
export async function importBackup(store: SessionStore, text: string, makeId: () => string = () => crypto.randomUUID()): Promise<ImportReport> {
  let doc: unknown;
  try { doc = JSON.parse(text); } catch {
    throw new BackupError('this file is not a backup: it is not JSON. Choose a file saved with "Save a backup"');
  }
  const d = doc as { kind?: unknown; schemaVersion?: unknown; records?: unknown };
  if (typeof d !== 'object' || d === null || d.kind !== BACKUP_KIND || !Array.isArray(d.records)) {
    throw new BackupError('this file is not a Retarda backup. Choose a file saved with "Save a backup"');
  }
  if (typeof d.schemaVersion !== 'number' || d.schemaVersion > STORAGE_SCHEMA_VERSION) {
    throw new BackupError(`this backup was made by a newer version of the app (schemaVersion ${String(d.schemaVersion)}). Update the app, then import it`);
  }
  const report: ImportReport = { sessions: 0, images: 0, setups: 0, setAside: 0, notes: [] };
  const imageIds = new Map<string, string>();
  const entries = (d.records as { key?: unknown; value?: unknown }[]).filter((r) => typeof r?.key === 'string');
  const kv = store.kv;
  const stamp = Date.now();
  const aside = async (key: string, value: unknown, reason: string) => {
    await kv.set(`${ASIDE_PREFIX}imported:${key}:${stamp}:${report.setAside}`, { schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'aside', key, reason, value, at: new Date().toISOString() });
    report.setAside++;
  };
  for (const r of entries) {
    const key = r.key as string;
    if (!key.startsWith(IMAGE_PREFIX)) continue;
    const value = fromJsonSafe(r.value);
    const img = restoreImage(value);
    if (!img.ok) { await aside(key, value, img.reason); continue; }
    const id = makeId();
    imageIds.set(img.value.id, id);
    await kv.set(IMAGE_PREFIX + id, { ...img.value, id });
    report.images++;
  }
  for (const r of entries) {
    const key = r.key as string;
    const value = fromJsonSafe(r.value);
    if (key.startsWith(ASIDE_PREFIX)) { await kv.set(`${key}:imported:${stamp}`, value); report.setAside++; continue; }
    if (key.startsWith(SETUP_PREFIX)) {
      const su = restoreSetup(value);
      if (!su.ok) { await aside(key, value, su.reason); continue; }
      // A set-up already here under the same id is kept; the backup's copy comes in under a new id.
      const taken = (await kv.get(SETUP_PREFIX + su.value.id)) !== undefined;
      const id = taken ? makeId() : su.value.id;
      await kv.set(SETUP_PREFIX + id, { ...su.value, id, name: taken ? `${su.value.name} (restored)` : su.value.name });
      report.setups++;
      continue;
    }
    if (!key.startsWith(SESSION_PREFIX)) continue;
    const s = restoreSession(value);
    if (!s.ok) { await aside(key, value, s.reason); continue; }
    const old = s.value;
    const missing = old.images.filter((m) => !imageIds.has(m.id));
    if (missing.length) report.notes.push(`${old.name}: ${missing.length} image(s) were not in the backup`);
    const images = old.images.filter((m) => imageIds.has(m.id)).map((m) => ({ ...m, id: imageIds.get(m.id)! }));
    const work = Object.fromEntries(Object.entries(old.work).filter(([k]) => imageIds.has(k)).map(([k, w]) => [imageIds.get(k)!, w]));
    const id = makeId();
    await kv.set(SESSION_PREFIX + id, {
      ...old, id, images, work, activeImageId: old.activeImageId ? imageIds.get(old.activeImageId) ?? images[0]?.id ?? null : images[0]?.id ?? null,
    });
    report.sessions++;
  }
  return report;
}
