/**
 * The open session and the saved ones: the session state and its reducer, writing it (debounced, by the one tab
 * that holds it: state/keeping.ts), the session list, backups, and what the Sessions panel asks for. The rest of
 * the app changes the session only through `change`.
 */
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import {
  BackupError, browserKeyValue, createSessionStore, createSetupStore, exportBackup, importBackup, type SessionRecord, type SessionSummary,
} from '../storage/index.ts';
import { sessionLocks } from '../storage/sessionLock.ts';
import { storageState, type StorageState } from '../storage/persistence.ts';
import { sessionReducer, type SessionAction } from '../state/session.ts';
import { useSessionKeeping } from '../state/keeping.ts';
import { download } from '../export/rows.ts';
import type { Say } from '../messages.ts';

export const sessionName = () => `Session ${new Date().toLocaleString(undefined, { dateStyle: 'medium', timeStyle: 'short' })}`;

/**
 * `onShow` is called whenever another session (or another version of this one) becomes the open one, so the
 * pictures of the one before are let go.
 */
export function useSessions(say: Say, onShow: () => void) {
  const store = useMemo(() => createSessionStore(browserKeyValue()), []);
  const setupStore = useMemo(() => createSetupStore(browserKeyValue()), []);
  const locks = useMemo(() => sessionLocks(navigator.locks), []);
  const [session, setSession] = useState<SessionRecord | null>(null);
  const sessionRef = useRef<SessionRecord | null>(null);
  const [listing, setListing] = useState<{ sessions: SessionSummary[]; asideCount: number }>({ sessions: [], asideCount: 0 });
  const [panelOpen, setPanelOpen] = useState(false);
  /** Whether the browser keeps the app's storage, and the space used (shown in the session list). */
  const [storage, setStorage] = useState<StorageState | null>(null);
  const showRef = useRef(onShow);
  showRef.current = onShow;

  // Writing the open session: debounced, only by the tab that holds it, and saying so when it cannot.
  const backupRef = useRef<() => void>(() => undefined);
  const keeping = useSessionKeeping({ store, locks, say, backup: () => backupRef.current() });
  /** Shows a session as the open one (after `keeping.enter` or its copy / open-saved actions). */
  const show = useCallback((s: SessionRecord) => { sessionRef.current = s; setSession(s); showRef.current(); }, []);
  /** Makes a session the open one without letting the pictures go (a session just started for images being added). */
  const adopt = useCallback((s: SessionRecord) => { sessionRef.current = s; setSession(s); }, []);

  const change = useCallback((a: SessionAction) => {
    const cur = sessionRef.current;
    if (!cur) return;
    const next = sessionReducer(cur, a);
    if (next === cur) return;
    sessionRef.current = next;
    setSession(next);
    // Dragging wall ends and typing settings or a screen's form change the session many times a second: those
    // wait for the debounce. Everything else (images, results, names) is written at once, so a reload right
    // after it loses nothing.
    keeping.changed(next, a.type !== 'walls' && a.type !== 'settings' && a.type !== 'screenState');
  }, [keeping.changed]);

  const refreshList = useCallback(async () => {
    try {
      const l = await store.list();
      setListing({ sessions: l.sessions, asideCount: l.asideCount });
      for (const m of l.setAside) say('error', `A stored record could not be read (${m.reason}); it was kept aside unchanged and is included in backups.`);
      return l;
    } catch (e) {
      say('error', `The saved sessions could not be read: ${(e as Error).message}. Private browsing or full storage can cause this.`);
      return null;
    }
  }, [store, say]);

  const openSession = useCallback(async (id: string) => {
    await keeping.flush();
    const s = await store.open(id).catch((e: Error) => { say('error', e.message); return null; });
    if (!s) { say('error', 'That session could not be opened; it may have been deleted in another tab.'); return; }
    await keeping.enter(s);
    show(s);
    setPanelOpen(false);
  }, [store, keeping.flush, keeping.enter, say, show]);

  // Start: the saved sessions (open the latest), writing on pagehide, asking before closing with unsaved changes.
  useEffect(() => {
    void refreshList().then((l) => { if (l?.sessions[0] && !sessionRef.current) void openSession(l.sessions[0].id); });
    const flush = () => { void keeping.flush(); };
    const hidden = () => { if (document.visibilityState === 'hidden') flush(); };
    // Changes this tab cannot store (storage full, session open in another tab): the browser asks before closing.
    const leaving = (e: BeforeUnloadEvent) => { if (keeping.unsaved()) e.preventDefault(); };
    window.addEventListener('pagehide', flush);
    window.addEventListener('beforeunload', leaving);
    document.addEventListener('visibilitychange', hidden);
    // Ask the browser to keep the sessions until the user deletes them; the answer is shown in the session list.
    void storageState(navigator.storage, true).then(setStorage);
    return () => { window.removeEventListener('pagehide', flush); window.removeEventListener('beforeunload', leaving); document.removeEventListener('visibilitychange', hidden); };
  }, []); // eslint-disable-line react-hooks/exhaustive-deps

  const backup = async () => {
    try {
      await keeping.flush();
      download(`retarda-backup-${new Date().toISOString().slice(0, 10)}.json`, await exportBackup(store), 'application/json');
    } catch (e) { say('error', `The backup could not be made: ${(e as Error).message}`); }
  };
  backupRef.current = () => void backup();

  /** Refuses to change a session that another tab has open (it would overwrite that tab's work), saying so. */
  const heldElsewhere = async (id: string, what: string) => {
    if (!(await locks.heldElsewhere(id))) return false;
    say('error', `That session is open in another tab, so it was not ${what} here. Close it there first.`);
    return true;
  };

  /** What the Sessions panel does. `report` shows an error of a storage call in plain words. */
  const actions = (report: (e: unknown, what: string) => void) => ({
    open: (id: string) => void openSession(id),
    create: async () => {
      await keeping.flush();
      const s = await store.create(sessionName()).catch((e) => { report(e, 'A new session could not be started'); return null; });
      if (!s) return;
      await keeping.enter(s); show(s); setPanelOpen(false); void refreshList();
    },
    rename: async (id: string, name: string) => {
      if (id === sessionRef.current?.id) change({ type: 'rename', name });
      else if (!(await heldElsewhere(id, 'renamed'))) await store.rename(id, name).catch((e) => report(e, 'The session was not renamed'));
      await keeping.flush(); void refreshList();
    },
    duplicate: async (id: string) => { await keeping.flush(); await store.duplicate(id).catch((e) => report(e, 'The session was not duplicated')); void refreshList(); },
    remove: async (id: string) => {
      if (id !== sessionRef.current?.id && await heldElsewhere(id, 'deleted')) return;
      if (id === sessionRef.current?.id) { keeping.leave(); sessionRef.current = null; setSession(null); showRef.current(); }
      await store.remove(id).catch((e) => report(e, 'The session was not deleted'));
      // Room was made: a change refused for lack of it is written now.
      void keeping.flush(); void refreshList(); void storageState(navigator.storage).then(setStorage);
    },
    backup: () => void backup(),
    restore: async (file: File) => {
      try {
        const r = await importBackup(store, await file.text());
        say('info', `Restored ${r.sessions} session(s) with ${r.images} image(s)${r.setAside ? `; ${r.setAside} record(s) kept aside` : ''}.${r.notes.length ? ' ' + r.notes.join('; ') : ''}`);
        await refreshList();
      } catch (e) { say('error', e instanceof BackupError ? `${file.name}: ${e.message}.` : `${file.name} could not be restored: ${(e as Error).message}`); }
    },
  });

  /** Opens the Sessions panel with a fresh list and storage state. */
  const openPanel = () => { setPanelOpen(true); void refreshList(); void storageState(navigator.storage).then(setStorage); };

  return {
    store, setupStore, session, sessionRef, listing, storage, keeping, show, adopt, change, refreshList, openPanel, actions,
    panelOpen, setPanelOpen, backup: () => backupRef.current(),
  };
}

export type Sessions = ReturnType<typeof useSessions>;
