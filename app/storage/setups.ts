/**
 * Named set-ups on the device, under `setup:<id>`, each passing the restore step when read. Same
 * key-value interface as the sessions, so unit tests run on an in-memory map.
 */
import { restoreSetup, SETUP_SCHEMA_VERSION, type SetupRecord } from '../setups/setup.ts';
import { ASIDE_PREFIX, StorageError, type KeyValue } from './store.ts';

export const SETUP_PREFIX = 'setup:';

async function guarded<T>(what: string, f: () => Promise<T>): Promise<T> {
  try { return await f(); } catch (e) { throw e instanceof StorageError ? e : new StorageError(what, e); }
}

export interface SetupListing { setups: SetupRecord[]; /** Records that could not be read, moved aside with the reason. */ setAside: { key: string; reason: string }[] }

export function createSetupStore(kv: KeyValue, now: () => Date = () => new Date()) {
  return {
    /** Every readable set-up, by name; unreadable records are moved aside (kept, never deleted). */
    list: (): Promise<SetupListing> => guarded('could not list the set-ups', async () => {
      const setups: SetupRecord[] = [];
      const setAside: { key: string; reason: string }[] = [];
      for (const [k, raw] of await kv.entries()) {
        const key = String(k);
        if (!key.startsWith(SETUP_PREFIX)) continue;
        const r = restoreSetup(raw);
        if (!r.ok) {
          await kv.set(`${ASIDE_PREFIX}${key}:${now().getTime()}`, { schemaVersion: SETUP_SCHEMA_VERSION, kind: 'aside', key, reason: r.reason, value: raw, at: now().toISOString() });
          await kv.del(key);
          setAside.push({ key, reason: r.reason });
          continue;
        }
        setups.push(r.value);
      }
      setups.sort((a, b) => a.name.localeCompare(b.name));
      return { setups, setAside };
    }),

    get: (id: string): Promise<SetupRecord | null> => guarded('could not read the set-up', async () => {
      const r = restoreSetup(await kv.get(SETUP_PREFIX + id));
      return r.ok ? r.value : null;
    }),

    /** Saves (creates or replaces) a set-up, stamping updatedAt. */
    save: (s: SetupRecord): Promise<SetupRecord> => guarded(`could not save the set-up "${s.name}"`, async () => {
      const rec = { ...s, schemaVersion: SETUP_SCHEMA_VERSION, kind: 'setup' as const, updatedAt: now().toISOString() };
      await kv.set(SETUP_PREFIX + s.id, rec);
      return rec;
    }),

    remove: (id: string): Promise<void> => guarded('could not delete the set-up', () => kv.del(SETUP_PREFIX + id)),
  };
}

export type SetupStore = ReturnType<typeof createSetupStore>;
