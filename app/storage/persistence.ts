/**
 * Whether the browser keeps the app's storage until the user deletes it ("persistent" in the WHATWG Storage
 * Standard, asked for with `navigator.storage.persist()`), and how much is stored, in plain words for the
 * sessions list. Browsers clear non-persistent ("best-effort") storage on their own when the device runs
 * short of space; persistent storage only when the user clears it.
 */

/** The part of navigator.storage (StorageManager) used here. */
export interface StorageManagerLike {
  persisted?(): Promise<boolean>;
  persist?(): Promise<boolean>;
  estimate?(): Promise<{ usage?: number; quota?: number }>;
}

/** What the browser says about the app's storage: null where it does not say. */
export interface StorageState { persisted: boolean | null; usageBytes: number | null; quotaBytes: number | null }

const orNull = <T>(p: Promise<T> | undefined): Promise<T | null> => (p ? p.catch(() => null) : Promise.resolve(null));

/** Reads the state; with `ask`, first asks the browser to keep the storage (once is enough: a grant lasts). */
export async function storageState(sm: StorageManagerLike | undefined | null, ask = false): Promise<StorageState> {
  let persisted = await orNull(sm?.persisted?.());
  if (ask && persisted === false) persisted = (await orNull(sm?.persist?.())) ?? persisted;
  const est = await orNull(sm?.estimate?.());
  const n = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) && v >= 0 ? v : null);
  return { persisted, usageBytes: n(est?.usage), quotaBytes: n(est?.quota) };
}

/** Bytes in the unit people read: 1 kB = 1000 B (SI, as browsers' storage settings show them). */
export function bytesWords(b: number): string {
  const units = ['bytes', 'kB', 'MB', 'GB', 'TB'];
  let v = b, i = 0;
  while (v >= 1000 && i < units.length - 1) { v /= 1000; i++; }
  return i === 0 ? `${Math.round(v)} bytes` : `${v < 10 ? v.toFixed(1) : Math.round(v)} ${units[i]}`;
}

/** The state in plain words: whether the sessions are kept, what to do if not, and the space used. */
export function keepingWords(s: StorageState): { kept: boolean | null; text: string; space: string | null } {
  const text = s.persisted === true
    ? 'This browser keeps your sessions until you delete them: it will not clear them to make room.'
    : s.persisted === false
      ? 'This browser may clear your sessions on its own if the device runs short of space. Save a backup to keep them safe; installing the app may let the browser keep them.'
      : 'This browser does not say whether it keeps your sessions. Save a backup to keep them safe.';
  const space = s.usageBytes === null ? null
    : `Stored here: ${bytesWords(s.usageBytes)} (the app itself and your sessions)${s.quotaBytes ? ` of about ${bytesWords(s.quotaBytes)} this browser allows` : ''}.`;
  return { kept: s.persisted, text, space };
}
