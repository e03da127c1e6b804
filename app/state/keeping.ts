/**
 * Keeping the open session on the device: when its changes are written, which tab may write it, and what the
 * user is told when a change cannot be kept (storage full, the session open in another tab).
 *
 * - Changes are written by a debounced saver (app/storage/saver.ts) at most `MAX_WAIT_MS` after they are made,
 *   so a tab killed at any moment loses at most the last second of work.
 * - A tab writes a session only while it holds the session's lock (app/storage/sessionLock.ts); a second tab
 *   that opens the same session writes nothing and is offered a copy. The store's revision check refuses a save
 *   over another tab's (browsers without Web Locks), which puts this tab in the same state.
 * - A write refused because the storage is full leaves every saved record as it was (the failed transaction
 *   writes nothing); the user is told, offered a backup, and the write is tried again until it succeeds.
 */
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { createSaver, StorageError, type SessionRecord, type SessionStore } from '../storage/index.ts';
import type { SessionLocks } from '../storage/sessionLock.ts';

/** Quiet time after the last change before it is written, ms. */
export const SAVE_DELAY_MS = 400;
/** Longest a change waits to be written while changes keep coming, ms (keeps the loss of a killed tab under 1 s). */
export const MAX_WAIT_MS = 600;
/** How often a write refused for lack of room is tried again, ms. */
export const RETRY_MS = 10_000;

/**
 * How this tab stands to the open session: it writes it (`own`), another tab holds it (`elsewhere`), or another
 * tab saved it after it was opened here (`changed`). `edited`: changes were made here that are not written.
 */
export interface Ownership { id: string; name: string; mode: 'own' | 'elsewhere' | 'changed'; edited: boolean }

export type SaveState = 'saved' | 'waiting' | 'failed' | 'full' | 'notHere';

/** The save-state line in the page's header. */
export function saveStateWords(s: SaveState): string {
  switch (s) {
    case 'saved': return 'Saved on this device';
    case 'waiting': return 'Saving…';
    case 'failed': return 'Not saved!';
    case 'full': return 'Not saved: storage full';
    case 'notHere': return 'Not saved: open in another tab';
  }
}

/** What a tab that may not write the session tells the user (the two buttons are offered beside it). */
export function ownershipWords(o: Ownership): string {
  const name = `“${o.name}”`;
  if (o.mode === 'elsewhere') {
    return `${name} is open in another tab. So that the two tabs never overwrite each other's work, nothing you change here is saved. `
      + 'Work on a copy here, or close the session in the other tab and open it here.';
  }
  if (o.mode === 'changed') {
    return `${name} was saved from another tab after it was opened here. So that neither tab overwrites the other's work, changes made here are no longer saved. `
      + 'Work on a copy here to keep them, or open the saved version.';
  }
  return '';
}

/** The message when a change cannot be written because the storage is full. */
export function fullWords(name: string): string {
  return `Your latest changes to “${name}” could not be saved: the storage this browser allows the app is full. `
    + 'Everything saved before is safe, and this page keeps your changes while it stays open. '
    + 'Save a backup now, then make room by deleting sessions you no longer need; saving starts again by itself.';
}

export interface KeepingOptions {
  store: SessionStore;
  locks: SessionLocks;
  say(kind: 'error' | 'info', text: string, action?: { label: string; run(): void }): void;
  /** Saves a backup of everything (offered when the storage is full). */
  backup(): void;
}

export function useSessionKeeping(o: KeepingOptions) {
  const { store, locks } = o;
  const opts = useRef(o);
  opts.current = o;
  const [saveState, setSaveState] = useState<SaveState>('saved');
  const stateRef = useRef<SaveState>('saved');
  const [ownership, setOwnership] = useState<Ownership | null>(null);
  const ownRef = useRef<Ownership | null>(null);

  const setState = useCallback((s: SaveState) => { stateRef.current = s; setSaveState(s); }, []);
  const setOwn = useCallback((x: Ownership | null) => { ownRef.current = x; setOwnership(x); }, []);

  const saver = useMemo(() => {
    const sv = createSaver<SessionRecord>((s) => store.save(s), {
    delayMs: SAVE_DELAY_MS, maxWaitMs: MAX_WAIT_MS,
    onSaved: () => {
      const was = stateRef.current;
      setState(sv.dirty() ? 'waiting' : 'saved');
      if (was === 'full' || was === 'failed') opts.current.say('info', 'Saved again: your changes are stored on this device.');
    },
    onError: (e) => {
      const own = ownRef.current;
      if (e instanceof StorageError && e.kind === 'conflict') {
        sv.cancel();
        if (own) setOwn({ ...own, mode: 'changed', edited: true });
        setState('notHere');
        return;
      }
      const was = stateRef.current;
      if (e instanceof StorageError && e.kind === 'quota') {
        setState('full');
        if (was !== 'full') opts.current.say('error', fullWords(own?.name ?? 'this session'), { label: 'Save a backup', run: () => opts.current.backup() });
        return;
      }
      setState('failed');
      if (was !== 'failed') opts.current.say('error', `Your changes could not be saved on this device (${(e as Error).message}). Keep the page open and save a backup from the session list.`);
    },
    });
    return sv;
  }, [store, setState, setOwn]);

  // A write refused for lack of room (or for another reason) is tried again now and then.
  useEffect(() => {
    if (saveState !== 'full' && saveState !== 'failed') return;
    const t = setInterval(() => { void saver.flush(); }, RETRY_MS);
    return () => clearInterval(t);
  }, [saveState, saver]);

  /** Makes `s` the open session: this tab writes it when it can take its lock, else only tells. */
  const enter = useCallback(async (s: SessionRecord): Promise<Ownership> => {
    const before = ownRef.current;
    if (before && before.id !== s.id) { await saver.flush(); locks.release(before.id); }
    saver.cancel();
    const held = await locks.claim(s.id);
    const own: Ownership = { id: s.id, name: s.name, mode: held ? 'own' : 'elsewhere', edited: false };
    setOwn(own);
    setState(held ? 'saved' : 'notHere');
    return own;
  }, [locks, saver, setOwn, setState]);

  /** Closes the open session in this tab (after deleting it): nothing more is written, its lock is let go. */
  const leave = useCallback(() => {
    const own = ownRef.current;
    saver.cancel();
    if (own) locks.release(own.id);
    setOwn(null);
    setState('saved');
  }, [locks, saver, setOwn, setState]);

  /** A change to the open session: written soon (at once with `now`) when this tab writes it. */
  const changed = useCallback((next: SessionRecord, now: boolean) => {
    const own = ownRef.current;
    if (!own || own.id !== next.id) return;
    if (own.mode !== 'own') { if (!own.edited || own.name !== next.name) setOwn({ ...own, edited: true, name: next.name }); return; }
    if (own.name !== next.name) setOwn({ ...own, name: next.name });
    if (stateRef.current === 'saved') setState('waiting');
    saver.schedule(next);
    if (now) void saver.flush();
  }, [saver, setOwn, setState]);

  /** Writes what is waiting; true when every change made in this tab is stored. */
  const flush = useCallback(async (): Promise<boolean> => {
    await saver.flush();
    const own = ownRef.current;
    return !own || (own.mode === 'own' ? !saver.dirty() : !own.edited);
  }, [saver]);

  /** Whether this tab holds changes that are not stored (and could be lost by closing or reloading it). */
  const unsaved = useCallback(() => {
    const own = ownRef.current;
    return !!own && (own.mode === 'own' ? saver.dirty() : own.edited);
  }, [saver]);

  /** Whether this tab may write the session `id` now. */
  const writes = useCallback((id: string) => ownRef.current?.id === id && ownRef.current.mode === 'own', []);

  /**
   * Copies the open session as this tab holds it (changes not saved included) to a new session, with its own
   * copy of the images, and makes the copy the one this tab works on. Null when the copy could not be made.
   */
  const workOnCopy = useCallback(async (current: SessionRecord): Promise<SessionRecord | null> => {
    try {
      const { copy, missing } = await store.copy(current);
      await enter(copy);
      opts.current.say('info', `You are now working on “${copy.name}” in this tab; the other tab keeps “${current.name}”.`
        + (missing.length ? ` ${missing.join(', ')} could not be copied: the stored file is missing.` : ''));
      return copy;
    } catch (e) {
      opts.current.say('error', `The copy could not be made: ${(e as Error).message}.`, { label: 'Save a backup', run: () => opts.current.backup() });
      return null;
    }
  }, [store, enter]);

  /** Opens the saved version of the session here when no other tab holds it (changes made in this tab are dropped). */
  const openSaved = useCallback(async (id: string): Promise<SessionRecord | null> => {
    if (!(await locks.claim(id))) {
      opts.current.say('error', 'The session is still open in the other tab. Close it there first, or work on a copy here.');
      return null;
    }
    try {
      const s = await store.open(id);
      if (!s) { locks.release(id); opts.current.say('error', 'The session is no longer on this device; it may have been deleted in another tab.'); return null; }
      await enter(s);
      return s;
    } catch (e) {
      locks.release(id);
      opts.current.say('error', (e as Error).message);
      return null;
    }
  }, [store, locks, enter]);

  return { saveState, ownership, enter, leave, changed, flush, unsaved, writes, workOnCopy, openSaved };
}

export type SessionKeeping = ReturnType<typeof useSessionKeeping>;
