/**
 * Sessions on the device. Works on any key-value store with idb-keyval's calls, so the same code runs
 * against IndexedDB in the browser and an in-memory map in unit tests.
 *
 * Keys: `session:<id>` (session record, no pixels), `image:<id>` (the file's bytes as a Blob, written
 * once), `aside:<original key>:<time>` (records that could not be read, kept so nothing is lost).
 *
 * Every write of a record is one IndexedDB transaction that puts the whole record: the database commits a
 * transaction whole or not at all (IndexedDB, "transaction" and "commit" in the W3C Indexed Database API 3.0),
 * so a tab killed during a save leaves the old record or the new one, never a mixture. Operations that touch
 * several records write the new ones first and the record that points to them last (an image before the
 * session that lists it; a deleted session's record before its images), so a tab killed in between leaves
 * at most image records no session lists, which nothing reads.
 *
 * A session is written only over the revision this store last read or wrote (`open`, `create`, `save`); when
 * another tab has written it since, `save` refuses with a StorageError of kind 'conflict' instead of
 * overwriting that tab's work.
 */
import {
  STORAGE_SCHEMA_VERSION, newSession, restoreImage, restoreSession, revisionOf, screensWithIds,
  type ImageMeta, type ImageRecord, type SessionRecord,
} from './records.ts';

/** The subset of idb-keyval the store needs. */
export interface KeyValue {
  get(key: string): Promise<unknown>;
  set(key: string, value: unknown): Promise<void>;
  del(key: string): Promise<void>;
  keys(): Promise<IDBValidKey[]>;
  entries(): Promise<[IDBValidKey, unknown][]>;
  /**
   * Reads a key and writes what `f` returns in one transaction, so no other write comes between (idb-keyval's
   * `update`). When `f` throws nothing is written and the promise rejects with what it threw. Optional: without
   * it the store reads and then writes.
   */
  update?(key: string, f: (old: unknown) => unknown): Promise<void>;
}

export interface SessionSummary { id: string; name: string; createdAt: string; updatedAt: string; imageCount: number; analysed: number }

export interface AsideRecord { key: string; reason: string; value: unknown }

export interface Listing { sessions: SessionSummary[]; /** Records moved aside during this listing, with the reason. */ setAside: { key: string; reason: string }[]; asideCount: number }

export const SESSION_PREFIX = 'session:';
export const IMAGE_PREFIX = 'image:';
export const ASIDE_PREFIX = 'aside:';

const randomId = () => (globalThis.crypto?.randomUUID?.() ?? `${Date.now().toString(36)}-${Math.random().toString(36).slice(2)}`);

/**
 * Whether a failed write failed because the browser's storage for the app is full: a DOMException named
 * QuotaExceededError (the name the Indexed Database API and the Storage Standard give it; Firefox has also used
 * NS_ERROR_DOM_QUOTA_REACHED, "from memory"), on the error itself or on its cause.
 */
export function isQuotaError(e: unknown): boolean {
  for (let x = e, depth = 0; x && depth < 5; x = (x as { cause?: unknown }).cause, depth++) {
    if (x instanceof StorageError) return x.kind === 'quota';
    const name = (x as { name?: unknown }).name;
    if (name === 'QuotaExceededError' || name === 'NS_ERROR_DOM_QUOTA_REACHED') return true;
  }
  return false;
}

/** Why a storage call failed: the storage is full, another tab wrote the session, or anything else. */
export type StorageFailure = 'quota' | 'conflict' | 'other';

/** A failed storage call, with what was being done in plain words and why. */
export class StorageError extends Error {
  readonly kind: StorageFailure;
  constructor(what: string, cause: unknown, kind: StorageFailure = isQuotaError(cause) ? 'quota' : 'other') {
    const why = kind === 'quota' ? 'the storage this browser allows the app is full'
      : kind === 'conflict' ? 'another tab has saved it since it was opened here'
        : cause instanceof Error ? cause.message : String(cause);
    super(`${what}: ${why}`, { cause });
    this.name = 'StorageError';
    this.kind = kind;
  }
}

/** Runs a storage call and turns any failure into a StorageError naming what was being done. */
async function guarded<T>(what: string, f: () => Promise<T>): Promise<T> {
  try { return await f(); } catch (e) { throw e instanceof StorageError ? e : new StorageError(what, e); }
}

/** Returned by an update's function to write nothing. */
const KEEP = Symbol('keep what is stored');

/** What a copy of a session left out: images whose stored bytes were missing or unreadable. */
export interface SessionCopy { copy: SessionRecord; missing: string[] }

export function createSessionStore(kv: KeyValue, makeId: () => string = randomId, now: () => Date = () => new Date()) {
  /** The revision of each session as this store last read or wrote it: a save must find that one stored. */
  const seen = new Map<string, number>();

  /**
   * Reads and writes one key with nothing between (one transaction where the key-value store offers it). When `f`
   * returns KEEP nothing is written.
   */
  const update = async (key: string, f: (old: unknown) => unknown): Promise<void> => {
    if (!kv.update) {
      const v = f(await kv.get(key));
      if (v !== KEEP) await kv.set(key, v);
      return;
    }
    try {
      await kv.update(key, (old) => { const v = f(old); if (v === KEEP) throw KEEP; return v; });
    } catch (e) {
      if (e !== KEEP) throw e;
    }
  };

  /** Moves a record aside (under a new key, with the reason) and removes it from its place. */
  async function setAside(key: string, value: unknown, reason: string, keepOriginal = false): Promise<void> {
    await kv.set(`${ASIDE_PREFIX}${key}:${now().getTime()}`, { schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'aside', key, reason, value, at: now().toISOString() });
    if (!keepOriginal) await kv.del(key);
  }

  async function readSession(key: string, raw: unknown, moved: { key: string; reason: string }[]): Promise<SessionRecord | null> {
    const r = restoreSession(raw);
    if (!r.ok) { await setAside(key, raw, r.reason); moved.push({ key, reason: r.reason }); return null; }
    if (r.lossy) {
      // Keep the original as it was, then store the readable part in its place, unless a tab saved it meanwhile.
      await setAside(key, raw, r.notes.join('; '), true);
      await update(key, (cur) => (cur !== undefined && revisionOf(cur) === revisionOf(raw) ? r.value : KEEP));
      moved.push({ key, reason: r.notes.join('; ') });
    }
    return r.value;
  }

  const summary = (s: SessionRecord): SessionSummary => ({
    id: s.id, name: s.name, createdAt: s.createdAt, updatedAt: s.updatedAt, imageCount: s.images.length,
    analysed: Object.values(s.work).filter((w) => w.orient || w.profile || w.optics || w.micrometer || w.diameter).length,
  });

  /** Stores a full copy of `src` under a new id, with its own copy of every image's bytes (written before the session). */
  async function copyOf(src: SessionRecord, name: string): Promise<SessionCopy> {
    const ids = new Map<string, string>();
    const missing: string[] = [];
    for (const m of src.images) {
      const img = restoreImage(await kv.get(IMAGE_PREFIX + m.id));
      if (!img.ok) { missing.push(m.name); continue; }
      const nid = makeId();
      ids.set(m.id, nid);
      await kv.set(IMAGE_PREFIX + nid, { ...img.value, id: nid });
    }
    const t = now().toISOString();
    const images = src.images.filter((m) => ids.has(m.id)).map((m) => ({ ...m, id: ids.get(m.id)! }));
    const copy: SessionRecord = {
      ...structuredClone(src), id: makeId(), name, createdAt: t, updatedAt: t, revision: 0, images,
      activeImageId: (src.activeImageId ? ids.get(src.activeImageId) : undefined) ?? images[0]?.id ?? null,
      work: Object.fromEntries(Object.entries(src.work).filter(([k]) => ids.has(k)).map(([k, w]) => [ids.get(k)!, structuredClone(w)])),
      ...screensWithIds(structuredClone({ series: src.series, trend: src.trend }), ids),
    };
    await kv.set(SESSION_PREFIX + copy.id, { ...copy, schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'session' });
    seen.set(copy.id, 0);
    return { copy, missing };
  }

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
      seen.set(s.id, 0);
      return s;
    }),

    /** One session, restored; null if it does not exist or had to be moved aside. Reading only: see `open`. */
    load: (id: string): Promise<SessionRecord | null> => guarded('could not open the session', async () => {
      const key = SESSION_PREFIX + id;
      const raw = await kv.get(key);
      if (raw === undefined) return null;
      return readSession(key, raw, []);
    }),

    /** One session to work on: as `load`, and later saves must find the revision read here. */
    open: (id: string): Promise<SessionRecord | null> => guarded('could not open the session', async () => {
      const key = SESSION_PREFIX + id;
      const raw = await kv.get(key);
      if (raw === undefined) return null;
      const s = await readSession(key, raw, []);
      if (s) seen.set(id, revisionOf(raw));
      return s;
    }),

    /**
     * Writes the session whole, as the next revision of the one this store last read or wrote. When another tab
     * wrote it since (or deleted it), nothing is written and the StorageError's kind is 'conflict'.
     */
    save: (s: SessionRecord): Promise<void> => guarded(`could not save "${s.name}"`, async () => {
      const key = SESSION_PREFIX + s.id;
      const base = seen.get(s.id);
      let next = 0;
      await update(key, (old) => {
        if (base !== undefined && (old === undefined || revisionOf(old) !== base)) throw new StorageError(`"${s.name}" was not saved`, null, 'conflict');
        next = (base ?? revisionOf(old)) + 1;
        return { ...s, schemaVersion: STORAGE_SCHEMA_VERSION, kind: 'session', revision: next };
      });
      seen.set(s.id, next);
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

    /** Renames a session that is not open in this tab (the open one is renamed through its saves). */
    rename: (id: string, name: string): Promise<SessionRecord | null> => guarded('could not rename the session', async () => {
      let out = null as SessionRecord | null;
      await update(SESSION_PREFIX + id, (raw) => {
        const r = restoreSession(raw);
        if (!r.ok) return KEEP;
        out = { ...r.value, name: name.trim() || r.value.name, updatedAt: now().toISOString(), revision: revisionOf(raw) + 1 };
        return out;
      });
      return out;
    }),

    /** A full copy under a new id: the image bytes are copied too, so deleting one leaves the other whole. */
    duplicate: (id: string): Promise<SessionRecord | null> => guarded('could not duplicate the session', async () => {
      const r = restoreSession(await kv.get(SESSION_PREFIX + id));
      return r.ok ? (await copyOf(r.value, `${r.value.name} (copy)`)).copy : null;
    }),

    /**
     * A full copy of a session as this tab holds it (with changes not saved), under a new id and name; images
     * whose stored bytes are missing are left out and named in `missing`.
     */
    copy: (s: SessionRecord, name = `${s.name} (copy)`): Promise<SessionCopy> => guarded(`could not copy "${s.name}"`, () => copyOf(s, name)),

    /** Deletes a session and then its images (a tab killed in between leaves only images no session lists). */
    remove: (id: string): Promise<void> => guarded('could not delete the session', async () => {
      const r = restoreSession(await kv.get(SESSION_PREFIX + id));
      await kv.del(SESSION_PREFIX + id);
      seen.delete(id);
      if (r.ok) for (const m of r.value.images) await kv.del(IMAGE_PREFIX + m.id);
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
