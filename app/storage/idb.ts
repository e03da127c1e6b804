/** The app's one connection to IndexedDB (through idb-keyval), in its own database. */
import { createStore, del, entries, get, keys, set, update } from 'idb-keyval';
import type { KeyValue } from './store.ts';

export function browserKeyValue(): KeyValue {
  const db = createStore('retarda', 'records');
  return {
    get: (k) => get(k, db),
    set: (k, v) => set(k, v, db),
    del: (k) => del(k, db),
    keys: () => keys(db),
    entries: () => entries(db),
    // One readwrite transaction: read, then put what `f` returns (nothing is put when it throws).
    update: (k, f) => update(k, f, db),
  };
}
