/**
 * Sessions that survive: two tabs on one session, a full storage, a tab killed in the middle of a write, and
 * the words the user is shown. The browser-level proofs are in tests/e2e/sessions-*.e2e.test.ts; these check
 * the storage logic on an in-memory key-value store that behaves as IndexedDB does where it matters here:
 * each call is one transaction, committed whole or not at all (W3C Indexed Database API 3.0, "transaction").
 */
import { describe, expect, it } from 'vitest';
import { createSessionStore, isQuotaError, StorageError, type KeyValue } from '../../app/storage/store.ts';
import { restoreSession, restoreImage, STORAGE_SCHEMA_VERSION, type SessionRecord } from '../../app/storage/records.ts';
import { createSaver } from '../../app/storage/saver.ts';
import { sessionLocks, sessionLockName, type LockManagerLike } from '../../app/storage/sessionLock.ts';
import { bytesWords, keepingWords, storageState } from '../../app/storage/persistence.ts';
import { fullWords, MAX_WAIT_MS, ownershipWords, SAVE_DELAY_MS } from '../../app/state/keeping.ts';
import { sessionReducer } from '../../app/state/session.ts';

/** Thrown by `kill`-limited stores: the tab died before this write. */
class Killed extends Error {}

/**
 * An in-memory key-value store. `atomic`: offers `update` (one transaction), as the browser's does. `writesLeft`:
 * the number of writes (set, del, update) that still happen; the next one and all after it throw, as if the tab
 * had been killed there. `full`: writes fail as IndexedDB's do when the quota is reached.
 */
function memoryKv(o: { atomic?: boolean } = {}) {
  const map = new Map<string, unknown>();
  const state = { writesLeft: Infinity, full: false };
  const write = () => {
    if (state.writesLeft <= 0) throw new Killed('killed');
    if (state.full) throw new DOMException('The transaction was aborted because the quota was exceeded.', 'QuotaExceededError');
    state.writesLeft--;
  };
  // Values are stored as structured clones, as IndexedDB stores them.
  const kv: KeyValue = {
    async get(k) { return map.has(k) ? structuredClone(map.get(k)) : undefined; },
    async set(k, v) { write(); map.set(k, structuredClone(v)); },
    async del(k) { write(); map.delete(k); },
    async keys() { return [...map.keys()]; },
    async entries() { return [...map.entries()].map(([k, v]) => [k, structuredClone(v)] as [IDBValidKey, unknown]); },
    ...(o.atomic === false ? {} : {
      async update(k: string, f: (old: unknown) => unknown) {
        const next = f(map.has(k) ? structuredClone(map.get(k)) : undefined);
        write();
        map.set(k, structuredClone(next));
      },
    }),
  };
  return { kv, map, state };
}

const ids = () => { let n = 0; return () => `id${++n}`; };
const png = (n: number) => new Blob([new Uint8Array(n).fill(7)], { type: 'image/png' });

/** A session with two images and some work, saved. */
async function sessionWithImages(store: ReturnType<typeof createSessionStore>) {
  const s = await store.create('Run 7');
  const a = await store.addImage({ name: 'a.png', type: 'image/png', blob: png(10) });
  const b = await store.addImage({ name: 'b.png', type: 'image/png', blob: png(20) });
  const next = sessionReducer(s, { type: 'addImages', images: [a, b] });
  await store.save(next);
  return next;
}

describe('two tabs on one session never overwrite each other', () => {
  for (const atomic of [true, false]) {
    it(`a save over another tab's newer save is refused, and the other tab's record stays (${atomic ? 'one transaction' : 'read then write'})`, async () => {
      const { kv, map } = memoryKv({ atomic });
      const tabA = createSessionStore(kv, ids());
      const first = await tabA.create('Shared');
      const tabB = createSessionStore(kv, () => 'other');
      const inA = (await tabA.open(first.id))!;
      const inB = (await tabB.open(first.id))!;
      await tabA.save(sessionReducer(inA, { type: 'settings', change: { bins: 30 } }));
      const err = await tabB.save(sessionReducer(inB, { type: 'settings', change: { bins: 5 } })).catch((e) => e);
      expect(err).toBeInstanceOf(StorageError);
      expect((err as StorageError).kind).toBe('conflict');
      expect((err as Error).message).toMatch(/another tab has saved it/);
      const stored = restoreSession(map.get(`session:${first.id}`));
      expect(stored.ok && stored.value.settings.bins).toBe(30);
      // Tab A goes on saving over its own revisions.
      await tabA.save(sessionReducer(inA, { type: 'settings', change: { bins: 31 } }));
      const again = restoreSession(map.get(`session:${first.id}`));
      expect(again.ok && again.value.settings.bins).toBe(31);
      expect(again.ok && again.value.revision).toBe(2);
    });
  }

  it('a session deleted in another tab is not written back by a tab that had it open', async () => {
    const { kv, map } = memoryKv();
    const tabA = createSessionStore(kv, ids());
    const s = await tabA.create('Gone');
    const tabB = createSessionStore(kv, ids());
    await tabB.open(s.id);
    await tabA.remove(s.id);
    const err = await tabB.save({ ...s, name: 'Gone, edited' }).catch((e) => e);
    expect((err as StorageError).kind).toBe('conflict');
    expect(map.has(`session:${s.id}`)).toBe(false);
  });

  it('renaming from the session list counts as a save: the tab that had it open is stopped, not overwriting the name', async () => {
    const { kv, map } = memoryKv();
    const tabA = createSessionStore(kv, ids());
    const s = await tabA.create('Before');
    const tabB = createSessionStore(kv, ids());
    await tabB.rename(s.id, 'Renamed in B');
    const err = await tabA.save(sessionReducer(s, { type: 'settings', change: { bins: 9 } })).catch((e) => e);
    expect((err as StorageError).kind).toBe('conflict');
    expect((map.get(`session:${s.id}`) as SessionRecord).name).toBe('Renamed in B');
  });

  for (const atomic of [true, false]) {
    it(`renaming a session another tab has deleted writes nothing (${atomic ? 'one transaction' : 'read then write'})`, async () => {
      const { kv, map } = memoryKv({ atomic });
      const store = createSessionStore(kv, ids());
      expect(await store.rename('gone', 'New name')).toBeNull();
      expect(map.has('session:gone')).toBe(false);
    });
  }

  it('a copy of the session as one tab holds it keeps that tab\'s changes and its own copy of every image', async () => {
    const { kv, map } = memoryKv();
    const store = createSessionStore(kv, ids());
    const s = await sessionWithImages(store);
    const edited = sessionReducer(s, { type: 'rename', name: 'Run 7, second look' });
    const { copy, missing } = await store.copy(edited);
    expect(missing).toEqual([]);
    expect(copy.name).toBe('Run 7, second look (copy)');
    expect(copy.id).not.toBe(s.id);
    expect(copy.images.map((m) => m.name)).toEqual(['a.png', 'b.png']);
    for (const m of copy.images) {
      expect(s.images.some((o) => o.id === m.id)).toBe(false);
      const img = restoreImage(map.get(`image:${m.id}`));
      expect(img.ok && img.value.size).toBe(m.name === 'a.png' ? 10 : 20);
    }
    // The original is as it was saved; the copy is saved and can be saved again by this store.
    expect((map.get(`session:${s.id}`) as SessionRecord).name).toBe('Run 7');
    await store.save(sessionReducer(copy, { type: 'settings', change: { bins: 12 } }));
    expect((map.get(`session:${copy.id}`) as SessionRecord).settings.bins).toBe(12);
  });

  it('a copy leaves out, and names, an image whose stored bytes are gone', async () => {
    const { kv, map } = memoryKv();
    const store = createSessionStore(kv, ids());
    const s = await sessionWithImages(store);
    map.delete(`image:${s.images[1].id}`);
    const { copy, missing } = await store.copy(s);
    expect(missing).toEqual(['b.png']);
    expect(copy.images.map((m) => m.name)).toEqual(['a.png']);
    expect(Object.keys(copy.work)).toEqual([copy.images[0].id]);
  });
});

describe('records from before revisions open and save as before', () => {
  it('a stored session without a revision (written by an earlier version) opens whole, is read as revision 0, and saves as 1', async () => {
    const { kv, map } = memoryKv();
    // As the first versions wrote it: schemaVersion 1, no revision field.
    const old = {
      schemaVersion: 1, kind: 'session', id: 'old', name: 'From last year', createdAt: '2024-01-02T03:04:05.000Z', updatedAt: '2024-01-02T03:04:05.000Z',
      images: [], activeImageId: null, settings: { sigmaPx: 3, weighting: 'none', axisDeg: null, bins: 10, stations: 1, coreMax: 0.5, skinMin: 0.8 }, work: {}, setup: null,
    };
    map.set('session:old', old);
    const store = createSessionStore(kv, ids());
    const r = restoreSession(old);
    expect(r.ok && !r.lossy).toBe(true);
    expect(r.ok && 'revision' in r.value).toBe(false);
    const s = (await store.open('old'))!;
    expect(s.settings.sigmaPx).toBe(3);
    await store.save(sessionReducer(s, { type: 'settings', change: { bins: 11 } }));
    const saved = map.get('session:old') as SessionRecord;
    expect(saved.revision).toBe(1);
    expect(saved.schemaVersion).toBe(STORAGE_SCHEMA_VERSION);
    expect(saved.settings.bins).toBe(11);
    expect(saved.createdAt).toBe(old.createdAt);
  });

  it('a revision that is not a whole number is read as 0, not kept', () => {
    const r = restoreSession({ schemaVersion: 1, kind: 'session', id: 'x', revision: 'three', images: [], work: {} });
    expect(r.ok && r.value.revision).toBe(0);
  });
});

describe('a full storage loses nothing already saved', () => {
  it('a save refused for lack of room rejects with a plain message and leaves the stored session as it was', async () => {
    const { kv, map, state } = memoryKv();
    const store = createSessionStore(kv, ids());
    const s = await sessionWithImages(store);
    const before = structuredClone(map.get(`session:${s.id}`));
    const imagesBefore = [...map.keys()].filter((k) => k.startsWith('image:'));
    state.full = true;
    const err = await store.save(sessionReducer(s, { type: 'rename', name: 'Will not fit' })).catch((e) => e);
    expect(err).toBeInstanceOf(StorageError);
    expect((err as StorageError).kind).toBe('quota');
    expect(isQuotaError(err)).toBe(true);
    expect((err as Error).message).toBe('could not save "Will not fit": the storage this browser allows the app is full');
    expect((err as Error).message).not.toMatch(/QuotaExceeded|DOMException/);
    expect(map.get(`session:${s.id}`)).toEqual(before);
    const addErr = await store.addImage({ name: 'big.png', type: 'image/png', blob: png(1000) }).catch((e) => e);
    expect((addErr as StorageError).kind).toBe('quota');
    expect([...map.keys()].filter((k) => k.startsWith('image:'))).toEqual(imagesBefore);
    // Room made: the same save goes through, over the revision this store read.
    state.full = false;
    await store.save(sessionReducer(s, { type: 'rename', name: 'Fits now' }));
    expect((map.get(`session:${s.id}`) as SessionRecord).name).toBe('Fits now');
  });

  it('knows a full storage by the error\'s name, on the error or its cause, and nothing else', () => {
    expect(isQuotaError(new DOMException('x', 'QuotaExceededError'))).toBe(true);
    expect(isQuotaError({ name: 'NS_ERROR_DOM_QUOTA_REACHED' })).toBe(true);
    expect(isQuotaError(new Error('wrapped', { cause: new DOMException('x', 'QuotaExceededError') }))).toBe(true);
    expect(isQuotaError(new DOMException('x', 'AbortError'))).toBe(false);
    expect(isQuotaError(new Error('QuotaExceededError in the text only'))).toBe(false);
    expect(isQuotaError(undefined)).toBe(false);
  });

  it('the message says what was not saved, that the rest is safe, and what to do', () => {
    const t = fullWords('Run 7');
    expect(t).toContain('“Run 7”');
    expect(t).toMatch(/Everything saved before is safe/);
    expect(t).toMatch(/Save a backup/);
    expect(t).not.toMatch(/Error|Exception|quota/);
  });
});

describe('a tab killed during any write leaves whole sessions only', () => {
  /** Every session the listing shows opens whole, and every image it lists has its bytes. */
  async function assertWhole(kv: KeyValue) {
    const store = createSessionStore(kv, ids());
    const listing = await store.list();
    expect(listing.setAside).toEqual([]);
    for (const sum of listing.sessions) {
      const raw = await kv.get(`session:${sum.id}`);
      const r = restoreSession(raw);
      expect(r.ok && r.lossy).toBe(false);
      if (!r.ok) continue;
      for (const m of r.value.images) expect(restoreImage(await kv.get(`image:${m.id}`)).ok).toBe(true);
    }
    return listing.sessions;
  }

  const operations: [string, (store: ReturnType<typeof createSessionStore>, s: SessionRecord) => Promise<unknown>][] = [
    ['saving a change', (store, s) => store.save(sessionReducer(s, { type: 'settings', change: { bins: 33 } }))],
    ['adding an image (bytes, then the session listing it)', async (store, s) => {
      const m = await store.addImage({ name: 'c.png', type: 'image/png', blob: png(5) });
      await store.save(sessionReducer(s, { type: 'addImages', images: [m] }));
    }],
    ['removing an image (the session without it, then its bytes)', async (store, s) => {
      await store.save(sessionReducer(s, { type: 'removeImage', id: s.images[0].id }));
      await store.removeImage(s.images[0].id);
    }],
    ['copying the session', (store, s) => store.copy(s)],
    ['deleting the session', (store, s) => store.remove(s.id)],
    ['renaming from the list', (store, s) => store.rename(s.id, 'New name')],
  ];

  for (const [what, op] of operations) {
    it(`${what}: killed before each of its writes in turn`, async () => {
      // How many writes the operation makes when nothing stops it.
      const probe = memoryKv();
      let writes = 0;
      const counting: KeyValue = { ...probe.kv, set: (k, v) => { writes++; return probe.kv.set(k, v); }, del: (k) => { writes++; return probe.kv.del(k); }, update: (k, f) => { writes++; return probe.kv.update!(k, f); } };
      const probeStore = createSessionStore(counting, ids());
      const ps = await sessionWithImages(probeStore);
      writes = 0;
      await op(probeStore, (await probeStore.open(ps.id))!);
      expect(writes).toBeGreaterThan(0);
      for (let k = 0; k <= writes; k++) {
        const { kv, state } = memoryKv();
        const store = createSessionStore(kv, ids());
        const s = await sessionWithImages(store);
        state.writesLeft = k;
        const outcome = await op(store, (await store.open(s.id))!).then(() => 'done', (e) => (e instanceof StorageError && e.cause instanceof Killed ? 'killed' : e));
        expect(outcome).toBe(k < writes ? 'killed' : 'done');
        state.writesLeft = Infinity;
        const sessions = await assertWhole(kv);
        // The session is there as before or as after, never gone half-way (deleting removes it in one write).
        if (!what.startsWith('deleting')) expect(sessions.some((x) => x.id === s.id)).toBe(true);
      }
    });
  }
});

describe('the saver writes at most about half a second after a change, also while changes keep coming', () => {
  /** A clock and timers under the test's control. */
  function fakeTime() {
    let t = 0;
    const timers = new Map<number, { at: number; fn: () => void }>();
    let next = 1;
    return {
      now: () => t,
      setTimer: (fn: () => void, ms: number) => { const h = next++; timers.set(h, { at: t + ms, fn }); return h; },
      clearTimer: (h: unknown) => { timers.delete(h as number); },
      /** Moves the clock on to `to`, running due timers in order. */
      async advance(to: number) {
        for (;;) {
          const due = [...timers.entries()].filter(([, x]) => x.at <= to).sort((a, b) => a[1].at - b[1].at)[0];
          if (!due) break;
          t = due[1].at;
          timers.delete(due[0]);
          due[1].fn();
          await Promise.resolve(); await Promise.resolve(); await Promise.resolve();
        }
        t = to;
      },
    };
  }

  /**
   * Changes every `everyMs` for 5 s (each change's value is the time it was made): the most work a tab killed at
   * any moment would lose, i.e. the age of the oldest change not yet written, ms.
   */
  async function worstLoss(maxWaitMs: number, everyMs: number) {
    const time = fakeTime();
    let stored = -1; // when the change last written was made
    const saver = createSaver<number>(async (madeAt) => { stored = madeAt; }, { delayMs: SAVE_DELAY_MS, maxWaitMs, now: time.now, setTimer: time.setTimer, clearTimer: time.clearTimer });
    const made: number[] = [];
    let worst = 0;
    for (let t = 0; t <= 5000; t += 10) {
      await time.advance(t);
      const oldestUnwritten = made.find((m) => m > stored);
      if (oldestUnwritten !== undefined) worst = Math.max(worst, t - oldestUnwritten);
      if (t % everyMs === 0) { saver.schedule(t); made.push(t); }
    }
    return worst;
  }

  it('a change every 100 ms for 5 s (a wall end dragged) is never more than the app\'s 600 ms behind, so under the issue\'s 1 s', async () => {
    const worst = await worstLoss(MAX_WAIT_MS, 100);
    expect(worst).toBeLessThanOrEqual(MAX_WAIT_MS);
    expect(worst).toBeLessThan(1000);
  });

  it('without the longest wait the same changes would wait for the end of the drag (the check can fail)', async () => {
    // A longest wait of a minute is the plain debounce: each change puts the write off again.
    const worst = await worstLoss(60_000, 100);
    expect(worst).toBeGreaterThan(1000);
  });

  it('a single change is written after the quiet time, and cancel drops it', async () => {
    const time = fakeTime();
    const written: number[] = [];
    const saver = createSaver<number>(async (v) => { written.push(v); }, { now: time.now, setTimer: time.setTimer, clearTimer: time.clearTimer });
    saver.schedule(1);
    await time.advance(SAVE_DELAY_MS - 1);
    expect(written).toEqual([]);
    await time.advance(SAVE_DELAY_MS);
    expect(written).toEqual([1]);
    saver.schedule(2);
    saver.cancel();
    await time.advance(5000);
    expect(written).toEqual([1]);
    expect(saver.dirty()).toBe(false);
  });
});

/**
 * A lock manager with the Web Locks API's behaviour for exclusive locks (W3C Web Locks API, "request a lock"):
 * `ifAvailable` gives the callback null when the name is held; a lock is held until the promise the callback
 * returned settles; `query` lists the held names across every "tab" sharing this manager.
 */
function fakeLocks(): LockManagerLike {
  const held = new Set<string>();
  return {
    async request(name, options, callback) {
      if (held.has(name)) { if (options.ifAvailable) return callback(null); throw new Error('queueing is not needed by these tests'); }
      held.add(name);
      try { return await callback({ name }); } finally { held.delete(name); }
    },
    async query() { return { held: [...held].map((name) => ({ name })) }; },
  };
}

describe('session locks: one tab writes a session at a time', () => {
  it('the first tab takes it; the second is refused and sees it held elsewhere until the first lets go', async () => {
    const manager = fakeLocks();
    const tabA = sessionLocks(manager), tabB = sessionLocks(manager);
    expect(await tabA.claim('s1')).toBe(true);
    expect(await tabA.claim('s1')).toBe(true);
    expect(await tabA.heldElsewhere('s1')).toBe(false);
    expect(await tabB.claim('s1')).toBe(false);
    expect(await tabB.heldElsewhere('s1')).toBe(true);
    expect(await tabB.claim('s2')).toBe(true);
    tabA.release('s1');
    await new Promise((r) => setTimeout(r, 0));
    expect(await tabB.heldElsewhere('s1')).toBe(false);
    expect(await tabB.claim('s1')).toBe(true);
    expect(await tabA.claim('s1')).toBe(false);
    expect((await manager.query!()).held!.map((l) => l.name).sort()).toEqual([sessionLockName('s1'), sessionLockName('s2')]);
  });

  it('two claims of one session at once in one tab both hold it (an effect run twice)', async () => {
    const manager = fakeLocks();
    const tab = sessionLocks(manager), other = sessionLocks(manager);
    expect(await Promise.all([tab.claim('s1'), tab.claim('s1')])).toEqual([true, true]);
    expect(await other.claim('s1')).toBe(false);
    tab.release('s1');
    await new Promise((r) => setTimeout(r, 0));
    expect(await other.claim('s1')).toBe(true);
  });

  it('without Web Locks every claim succeeds (the store\'s revision check still stops overwrites)', async () => {
    const none = sessionLocks(undefined);
    expect(await none.claim('s1')).toBe(true);
    expect(await none.heldElsewhere('s1')).toBe(false);
  });

  it('the second tab is told in plain words and offered a copy', () => {
    const t = ownershipWords({ id: 's1', name: 'Run 7', mode: 'elsewhere', edited: false });
    expect(t).toContain('“Run 7” is open in another tab');
    expect(t).toMatch(/nothing you change here is saved/);
    expect(t).toMatch(/Work on a copy here/);
    expect(ownershipWords({ id: 's1', name: 'Run 7', mode: 'changed', edited: true })).toMatch(/saved from another tab/);
    expect(ownershipWords({ id: 's1', name: 'Run 7', mode: 'own', edited: false })).toBe('');
  });
});

describe('persistent storage: asked for and shown in plain words', () => {
  it('asks once when not yet persistent, and reads the space used', async () => {
    let asked = 0;
    const sm = { persisted: async () => false, persist: async () => { asked++; return true; }, estimate: async () => ({ usage: 34_512_000, quota: 10_770_862_502 }) };
    expect(await storageState(sm)).toEqual({ persisted: false, usageBytes: 34_512_000, quotaBytes: 10_770_862_502 });
    expect(asked).toBe(0);
    expect(await storageState(sm, true)).toEqual({ persisted: true, usageBytes: 34_512_000, quotaBytes: 10_770_862_502 });
    expect(asked).toBe(1);
  });

  it('a browser without the Storage API, or one that refuses, gives "does not say"', async () => {
    expect(await storageState(undefined, true)).toEqual({ persisted: null, usageBytes: null, quotaBytes: null });
    const failing = { persisted: () => Promise.reject(new Error('no')), estimate: () => Promise.reject(new Error('no')) };
    expect(await storageState(failing, true)).toEqual({ persisted: null, usageBytes: null, quotaBytes: null });
  });

  it('words for each state, with the space in SI units (1 MB = 1 000 000 bytes, as browsers\' settings show it)', () => {
    expect(keepingWords({ persisted: true, usageBytes: null, quotaBytes: null }).text).toMatch(/keeps your sessions until you delete them/);
    expect(keepingWords({ persisted: false, usageBytes: null, quotaBytes: null }).text).toMatch(/may clear your sessions.*Save a backup/);
    expect(keepingWords({ persisted: null, usageBytes: null, quotaBytes: null }).text).toMatch(/does not say/);
    expect(keepingWords({ persisted: true, usageBytes: 34_512_000, quotaBytes: 10_770_862_502 }).space).toBe('Stored here: 35 MB (the app itself and your sessions) of about 11 GB this browser allows.');
    expect(bytesWords(999)).toBe('999 bytes');
    expect(bytesWords(1_234_567)).toBe('1.2 MB');
    expect(bytesWords(12_500)).toBe('13 kB');
  });
});
