/**
 * Sessions on the device. Works on any key-value store with idb-keyval's five calls, so the same
 * code runs against IndexedDB in the browser and an in-memory map in unit tests.
 *
 * Keys: `session:<id>` (session record, no pixels), `image:<id>` (the file's bytes as a Blob, written
 * once), `aside:<original key>:<time>` (records that could not be read, kept so nothing is lost).
 */
import {
  STORAGE_SCHEMA_VERSION, newSession, restoreImage, restoreSession,
  type ImageMeta, type ImageRecord, type SessionRecord,
} from './records.ts';

/** The subset of idb-keyval the store needs. */
export interface KeyValue {
  get(key: string): Promise<unknown>;
  set(key: string, value: unknown): Promise<void>;
  del(key: string): Promise<void>;
  keys(): Promise<IDBValidKey[]>;
  entries(): Promise<[IDBValidKey, unknown][]>;
}

export interface SessionSummary { id: string; name: string; createdAt: string; updatedAt: string; imageCount: number; analysed: number }

export interface AsideRecord { key: string; reason: string; value: unknown }

export interface Listing { sessions: SessionSummary[]; /** Records moved aside during this listing, with the reason. */ setAside: { key: string; reason: string }[]; asideCount: number }

export const SESSION_PREFIX = 'session:';
export const IMAGE_PREFIX = 'image:';
export const ASIDE_PREFIX = 'aside:';

const randomId = () => (globalThis.crypto?.randomUUID?.() ?? `${Date.now().toString(36)}-${Math.random().toString(36).slice(2)}`);

export class StorageError extends Error {
  constructor(what: string, cause: unknown) {
    super(`${what}: ${cause instanceof Error ? cause.message : String(cause)}`);
    this.name = 'StorageError';
  }
}

/** Runs a storage call and turns any failure into a StorageError naming what was being done. */
async function guarded<T>(what: string, f: () => Promise<T>): Promise<T> {
  try { return await f(); } catch (e) { throw e instanceof StorageError ? e : new StorageError(what, e); }
}

export function createSessionStore(kv: KeyValue, makeId: () => string = randomId, now: () => Date = () => new Date()) {
  /** Moves a record aside (under a new key, with the reason) and removes it from its place. */
  async function setAside(key: string, value: unknown, reason: string, keepOriginal = false): Promise<void> {
    await kv.set(`${ASIDE_PREFIX}${key}:${now().getTime()}`, { schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'aside', key, reason, value, at: now().toISOString() });
    if (!keepOriginal) await kv.del(key);
  }

  async function readSession(key: string, raw: unknown, moved: { key: string; reason: string }[]): Promise<SessionRecord | null> {
    const r = restoreSession(raw);
    if (!r.ok) { await setAside(key, raw, r.reason); moved.push({ key, reason: r.reason }); return null; }
    if (r.lossy) {
      // Keep the original as it was, then store the readable part in its place.
      await setAside(key, raw, r.notes.join('; '), true);
      await kv.set(key, r.value);
      moved.push({ key, reason: r.notes.join('; ') });
    }
    return r.value;
  }

  const summary = (s: SessionRecord): SessionSummary => ({
    id: s.id, name: s.name, createdAt: s.createdAt, updatedAt: s.updatedAt, imageCount: s.images.length,
    analysed: Object.values(s.work).filter((w) => w.orient || w.profile || w.optics || w.micrometer || w.diameter).length,
  });

  return {
    /** Every readable session, newest change first; unreadable ones are moved aside and named. */
    list: (): Promise<Listing> => guarded('could not list the saved sessions', async () => {
      const moved: { key: string; reason: string }[] = [];
      const sessions: SessionSummary[] = [];
      let asideCount = 0;
      for (const [k, raw] of await kv.entries()) {
        const key = String(k);
        if (key.startsWith(ASIDE_PREFIX)) { asideCount++; continue; }
        if (!key.startsWith(SESSION_PREFIX)) continue;
        const s = await readSession(key, raw, moved);
        if (s) sessions.push(summary(s));
      }
      sessions.sort((a, b) => b.updatedAt.localeCompare(a.updatedAt));
      return { sessions, setAside: moved, asideCount: asideCount + moved.length };
    }),

    create: (name: string): Promise<SessionRecord> => guarded('could not create a session', async () => {
      const s = newSession(makeId(), name, now());
      await kv.set(SESSION_PREFIX + s.id, s);
      return s;
    }),

    /** One session, restored; null if it does not exist or had to be moved aside. */
    load: (id: string): Promise<SessionRecord | null> => guarded('could not open the session', async () => {
      const key = SESSION_PREFIX + id;
      const raw = await kv.get(key);
      if (raw === undefined) return null;
      return readSession(key, raw, []);
    }),

    save: (s: SessionRecord): Promise<void> => guarded(`could not save "${s.name}"`, async () => {
      await kv.set(SESSION_PREFIX + s.id, { ...s, schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'session' });
    }),

    /** Stores an image file once and returns its description for the session. */
    addImage: (file: { id?: string; name: string; type: string; blob: Blob; page?: number }): Promise<ImageMeta> => guarded(`could not keep ${file.name}`, async () => {
      const meta: ImageMeta = { id: file.id ?? makeId(), name: file.name, type: file.type, size: file.blob.size, page: file.page ?? 0, addedAt: now().toISOString() };
      const rec: ImageRecord = { ...meta, schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'image', blob: file.blob };
      await kv.set(IMAGE_PREFIX + meta.id, rec);
      return meta;
    }),

    /** An image's record with its bytes; null when missing or unreadable (then moved aside). */
    image: (id: string): Promise<ImageRecord | null> => guarded('could not read an image', async () => {
      const key = IMAGE_PREFIX + id;
      const raw = await kv.get(key);
      if (raw === undefined) return null;
      const r = restoreImage(raw);
      if (!r.ok) { await setAside(key, raw, r.reason); return null; }
      return r.value;
    }),

    removeImage: (id: string): Promise<void> => guarded('could not remove an image', () => kv.del(IMAGE_PREFIX + id)),

    rename: (id: string, name: string): Promise<SessionRecord | null> => guarded('could not rename the session', async () => {
      const raw = await kv.get(SESSION_PREFIX + id);
      const r = restoreSession(raw);
      if (!r.ok) return null;
      const s = { ...r.value, name: name.trim() || r.value.name, updatedAt: now().toISOString() };
      await kv.set(SESSION_PREFIX + id, s);
      return s;
    }),

    /** A full copy under a new id: the image bytes are copied too, so deleting one leaves the other whole. */
    duplicate: (id: string): Promise<SessionRecord | null> => guarded('could not duplicate the session', async () => {
      const r = restoreSession(await kv.get(SESSION_PREFIX + id));
      if (!r.ok) return null;
      const src = r.value, ids = new Map<string, string>();
      for (const m of src.images) {
        const img = restoreImage(await kv.get(IMAGE_PREFIX + m.id));
        const nid = makeId();
        ids.set(m.id, nid);
        if (img.ok) await kv.set(IMAGE_PREFIX + nid, { ...img.value, id: nid });
      }
      const t = now().toISOString();
      const copy: SessionRecord = {
        ...structuredClone({ ...src, work: src.work }), id: makeId(), name: `${src.name} (copy)`, createdAt: t, updatedAt: t,
        images: src.images.map((m) => ({ ...m, id: ids.get(m.id)! })),
        activeImageId: src.activeImageId ? ids.get(src.activeImageId) ?? null : null,
        work: Object.fromEntries(Object.entries(src.work).map(([k, w]) => [ids.get(k) ?? k, structuredClone(w)])),
      };
      await kv.set(SESSION_PREFIX + copy.id, copy);
      return copy;
    }),

    /** Deletes a session and its images. */
    remove: (id: string): Promise<void> => guarded('could not delete the session', async () => {
      const r = restoreSession(await kv.get(SESSION_PREFIX + id));
      if (r.ok) for (const m of r.value.images) await kv.del(IMAGE_PREFIX + m.id);
      await kv.del(SESSION_PREFIX + id);
    }),

    /** Records kept aside, for the backup and for the user to see. */
    aside: (): Promise<AsideRecord[]> => guarded('could not read the set-aside records', async () => {
      const out: AsideRecord[] = [];
      for (const [k, v] of await kv.entries()) {
        const key = String(k);
        if (!key.startsWith(ASIDE_PREFIX)) continue;
        const rec = v as { key?: string; reason?: string; value?: unknown };
        out.push({ key, reason: String(rec?.reason ?? ''), value: rec?.value });
      }
      return out;
    }),

    kv,
  };
}

export type SessionStore = ReturnType<typeof createSessionStore>;
