/**
 * The bench app: bring images in, look at them, run the orientation and channel-profile analyses in
 * the worker, see and export the numbers, and keep everything in sessions on the device.
 */
import { WallsEditor } from './components/WallsEditor.tsx';
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import type { Channel } from '../src/channel/index.ts';
import { AnalysisClient, tileHelperCount, CancelledError, type ImageSource } from './worker/client.ts';
import type { DecodeSummary, Glyph, OpticalViewName, Picture, StepTimes } from './worker/protocol.ts';
import {
  BackupError, browserKeyValue, createSessionStore, createSetupStore, exportBackup, importBackup, isQuotaError,
  type AnalysisSettings, type SessionRecord, type SessionSummary,
} from './storage/index.ts';
import { sessionLocks } from './storage/sessionLock.ts';
import { storageState, type StorageState } from './storage/persistence.ts';
import { sessionReducer, orientIsStale, profileIsStale, type SessionAction } from './state/session.ts';
import { ownershipWords, saveStateWords, useSessionKeeping } from './state/keeping.ts';
import { Viewer, type Layer, type OverlayMode, type ViewerHandle } from './components/Viewer.tsx';
import { ColourKey } from './components/ColourKey.tsx';
import { ProfilePlot } from './components/ProfilePlot.tsx';
import { OrientTable, ProfileTable } from './components/Results.tsx';
import { SessionsPanel } from './components/SessionsPanel.tsx';
import { LampCaution, ResultCaution, SampleCaution } from './components/Cautions.tsx';
import { MoreAnalyses, type MoreAnalysesHandle, type OpticalField } from './components/MoreAnalyses.tsx';
import { diameterMarks } from './components/FibrePanels.tsx';
import type { Mark } from './components/Viewer.tsx';
import { stationDrawing } from './components/stationMarks.ts';
import type { ProgressFn } from './worker/client.ts';
import { CameraView } from './camera/CameraView.tsx';
import { ScreenGuard } from './components/ScreenGuard.tsx';
import { SetupsPanel } from './setups/SetupsPanel.tsx';
import { CompareView } from './compare/CompareView.tsx';
import { ViewExports } from './export/ViewExports.tsx';
import { ReportView } from './export/ReportView.tsx';
import { reportContent, type ReportContent } from './export/reportContent.ts';
import { requestFieldTiff } from './export/fieldTiff.ts';
import { viewPicturePng, type ViewPictureInput } from './export/viewPicture.ts';
import { applied } from './setups/setup.ts';
import { withinLimit } from '../src/common/index.ts';
import { SETTING_LIMITS } from './storage/records.ts';
import { calibrationChange, calibrationOf, calibrationShort, calibrationWords } from './setups/calibration.ts';
import { useImageRectangles } from './components/imageRectangles.ts';
import {
  download, orientCsv, profileBinsCsv, profileCsv,
} from './export/rows.ts';
import { snapWalls, wallsText } from '../src/channel/index.ts';
import {
  opticalCommandLine, orientCommandLine, orientOptionsOf, profileRequestOf, textureProfileCommandLine, type OpticalRequest,
} from './analysis/requests.ts';
import { opticalProfile, readingKeys } from './analysis/calls.ts';
import type { ProfileRequest } from '../src/analyses/index.ts';

/** The app's version (vite.config.ts). */
declare const __RETARDA_VERSION__: string;

interface Message { id: number; kind: 'error' | 'info'; text: string; action?: { label: string; run(): void } }
interface Busy { stage: string; fraction: number; what: string }
/**
 * What the viewer shows for the active image. The coherency picture and the glyphs are made when first
 * shown (null until then), from the texture field of `fieldOptions` (the options the colour map was made with).
 */
interface Shown {
  imageId: string; summary: DecodeSummary; image: Layer; colour: Layer | null; coherency: Layer | null; glyphs: Glyph[] | null;
  fieldOptions: { sigmaPx: number } | null;
}
interface DemoEntry { file: string; title: string; about: string; set?: string[] }

const ACCEPT = '.png,.jpg,.jpeg,.tif,.tiff,image/png,image/jpeg,image/tiff';
const LARGE_FILE = 20 * 1024 * 1024;

/** The worker sends ready-made bitmaps; the page only wraps them. */
const layerOf = async (p: Picture): Promise<Layer> => ({ levels: p.levels, width: p.width, height: p.height, scale: p.scale });

/** Reads a file with progress (large files take a moment from slow storage). */
function readFile(file: Blob, onProgress: (f: number) => void): Promise<ArrayBuffer> {
  if (file.size < LARGE_FILE) return file.arrayBuffer();
  return new Promise((resolve, reject) => {
    const r = new FileReader();
    r.onprogress = (e) => { if (e.lengthComputable) onProgress(e.loaded / e.total); };
    r.onload = () => resolve(r.result as ArrayBuffer);
    r.onerror = () => reject(new Error(`could not read the file: ${r.error?.message ?? 'unknown reason'}`));
    r.readAsArrayBuffer(file);
  });
}

const newId = () => crypto.randomUUID();
const sessionName = () => `Session ${new Date().toLocaleString(undefined, { dateStyle: 'medium', timeStyle: 'short' })}`;

export function App() {
  const store = useMemo(() => createSessionStore(browserKeyValue()), []);
  const setupStore = useMemo(() => createSetupStore(browserKeyValue()), []);
  const locks = useMemo(() => sessionLocks(navigator.locks), []);
  // Helpers (one per spare core, or as `?workers=N` says) share the tiles of large images; each holds its own opencv.js.
  const client = useMemo(() => new AnalysisClient(() => new Worker(new URL('./worker/analysis.worker.ts', import.meta.url), { type: 'module', name: 'analysis' }),
    { tileHelpers: tileHelperCount(location.search, navigator.hardwareConcurrency || 2) }), []);
  const [session, setSession] = useState<SessionRecord | null>(null);
  const sessionRef = useRef<SessionRecord | null>(null);
  const [listing, setListing] = useState<{ sessions: SessionSummary[]; asideCount: number }>({ sessions: [], asideCount: 0 });
  const [showSessions, setShowSessions] = useState(false);
  const [showSetups, setShowSetups] = useState(false);
  /** Whether the analysis worker can hand over a field as a float TIFF (asked once it has started). */
  const [printable, setPrintable] = useState<{ content: ReportContent; view: { imageId: string; url: string } | null } | null>(null);
  const [messages, setMessages] = useState<Message[]>([]);
  const [busy, setBusy] = useState<Busy | null>(null);
  const [shown, setShown] = useState<Shown | null>(null);
  /** Milliseconds of each step of the last orientation run in the worker (read by the browser benchmark). */
  const [workerTimes, setWorkerTimes] = useState<StepTimes>({});
  const [helperTiles, setHelperTiles] = useState(0);
  /** Helper workers sharing the tiles of large images (0 until they have started). */
  const [helperCount, setHelperCount] = useState(0);
  /** Coherency pictures and glyph sets being made, so one is asked for only once. */
  const making = useRef(new Set<string>());
  const [mode, setMode] = useState<OverlayMode>('colour');
  const [opacity, setOpacity] = useState(0.7);
  const [drawing, setDrawing] = useState(false);
  /** Whether the browser keeps the app's storage, and the space used (shown in the session list). */
  const [storage, setStorage] = useState<StorageState | null>(null);
  const [engine, setEngine] = useState<'starting' | 'ready' | 'failed'>('starting');
  const [demos, setDemos] = useState<DemoEntry[]>([]);
  const [update, setUpdate] = useState<null | (() => void)>(null);
  /** Whether the app works without a network: only once a service worker holds its files; otherwise why not. */
  const [offline, setOffline] = useState<{ state: 'waiting' | 'ready' | 'unavailable'; why?: string }>({ state: 'waiting' });
  const [dragOver, setDragOver] = useState(false);
  const [help, setHelp] = useState(false);
  /** The last optical field (compensator / angle-series reading) and the diameter marks, for the image they belong to. */
  const [optical, setOptical] = useState<OpticalField | null>(null);
  const [marks, setMarks] = useState<{ imageId: string; marks: Mark[] } | null>(null);
  /** Which field the viewer shows and the channel profile uses: the texture field or the optical one. */
  const [fieldChoice, setFieldChoice] = useState<'texture' | 'optical'>('texture');
  /** Command lines of profiles made on an optical field (the stored result does not say which reading made it). */
  const [profileReading, setProfileReading] = useState<Record<string, { reading: OpticalRequest; request: ProfileRequest }>>({});
  /** Which screen fills the page: the images of the session, the camera, or the compare view. */
  const [screen, setScreen] = useState<'images' | 'camera' | 'compare'>('images');
  const blobs = useRef(new Map<string, Blob>());
  /** Summaries of images just brought in, so showing them does not decode them twice. */
  const decoded = useRef(new Map<string, DecodeSummary>());
  const fileInput = useRef<HTMLInputElement>(null);
  const viewer = useRef<ViewerHandle>(null);
  const more = useRef<MoreAnalysesHandle>(null);
  const msgId = useRef(0);

  // Free the bitmaps of pictures no longer shown (large images hold tens of MB each).
  const lastShown = useRef<Shown | null>(null);
  useEffect(() => {
    const before = lastShown.current;
    lastShown.current = shown;
    if (!before) return;
    const keep = new Set([shown?.image, shown?.colour, shown?.coherency]);
    for (const l of [before.image, before.colour, before.coherency]) if (l && !keep.has(l)) l.levels.forEach((b) => b.close());
  }, [shown]);

  const say = useCallback((kind: Message['kind'], text: string, action?: Message['action']) => {
    const id = ++msgId.current;
    // One short-lived note at a time; errors stay until dismissed (the last four are kept).
    setMessages((m) => [...m.filter((x) => x.kind === 'error').slice(-3), ...m.filter((x) => x.kind === 'info' && kind === 'error'), { id, kind, text, action }]);
    if (kind === 'info') setTimeout(() => setMessages((m) => m.filter((x) => x.id !== id)), 5000);
  }, []);

  // Writing the open session: debounced, only by the tab that holds it, and saying so when it cannot.
  const backupRef = useRef<() => void>(() => undefined);
  const keeping = useSessionKeeping({ store, locks, say, backup: () => backupRef.current() });
  /** Shows a session as the open one (after `keeping.enter` or its copy / open-saved actions). */
  const show = useCallback((s: SessionRecord) => { sessionRef.current = s; setSession(s); setShown(null); }, []);

  const change = useCallback((a: SessionAction) => {
    const cur = sessionRef.current;
    if (!cur) return;
    const next = sessionReducer(cur, a);
    if (next === cur) return;
    sessionRef.current = next;
    setSession(next);
    // Dragging wall ends and typing settings change the session many times a second: those wait for
    // the debounce. Everything else (images, results, names) is written at once, so a reload right
    // after it loses nothing.
    keeping.changed(next, a.type !== 'walls' && a.type !== 'settings');
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
    setShowSessions(false);
  }, [store, keeping.flush, keeping.enter, say, show]);

  // Start: engine, saved sessions (open the latest), demo list, flush on pagehide.
  useEffect(() => {
    client.ready().then(() => setEngine('ready'), (e: Error) => { setEngine('failed'); say('error', e.message); });
    void client.helpersLinked.then(setHelperCount);
    void refreshList().then((l) => { if (l?.sessions[0] && !sessionRef.current) void openSession(l.sessions[0].id); });
    fetch('./demo/index.json').then((r) => (r.ok ? r.json() : [])).then((d) => setDemos(Array.isArray(d) ? d : [])).catch(() => setDemos([]));
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

  // Service worker: a new version waits until the user chooses to reload, and only after the work is saved;
  // the page is never reloaded under the user (also when another tab started the new version).
  useEffect(() => {
    if (!import.meta.env.PROD) { setOffline({ state: 'unavailable', why: 'the development server keeps no offline copy; the built app does' }); return; }
    if (!('serviceWorker' in navigator)) { setOffline({ state: 'unavailable', why: 'this browser keeps no offline copy of web apps (no service workers)' }); return; }
    let cancelled = false;
    let stop = () => undefined as void;
    void import('workbox-window').then(({ Workbox }) => {
      if (cancelled) return;
      const wb = new Workbox('./sw.js');
      let taken = false, reloading = false;
      wb.addEventListener('controlling', () => { taken = true; if (reloading) window.location.reload(); });
      wb.addEventListener('waiting', () => setUpdate(() => async () => {
        if (!(await keeping.flush())) {
          say('error', 'The new version was not started, so that nothing is lost: your latest changes are not saved on this device. Save a backup or work on a copy first.');
          return;
        }
        reloading = true;
        if (taken) window.location.reload(); else wb.messageSkipWaiting();
      }));
      wb.register().catch((e: Error) => {
        setOffline({ state: 'unavailable', why: `the offline copy could not be set up: ${e.message}` });
        say('error', `Offline use is not available: ${e.message}`);
      });
      // Offline only once a service worker holds the app's files.
      void navigator.serviceWorker.ready.then(() => { if (!cancelled) setOffline({ state: 'ready' }); });
      // A tab left open for days still hears of a new version: look hourly and whenever the tab is shown again.
      const look = () => { if (document.visibilityState === 'visible') void wb.update().catch(() => undefined); };
      const timer = setInterval(look, 60 * 60 * 1000);
      document.addEventListener('visibilitychange', look);
      stop = () => { clearInterval(timer); document.removeEventListener('visibilitychange', look); };
    });
    return () => { cancelled = true; stop(); };
  }, [keeping.flush, say]);

  const progress = useCallback((what: string) => (stage: string, fraction: number) => setBusy({ what, stage, fraction }), []);

  const sourceOf = useCallback((id: string): ImageSource | null => {
    const meta = sessionRef.current?.images.find((i) => i.id === id);
    if (!meta) return null;
    return {
      key: id, name: meta.name, page: meta.page,
      bytes: async () => {
        let b = blobs.current.get(id);
        if (!b) {
          const rec = await store.image(id);
          if (!rec) throw new Error(`the stored copy of ${meta.name} is missing or unreadable; add the file again`);
          b = rec.blob;
          blobs.current.set(id, b);
        }
        return b.arrayBuffer();
      },
    };
  }, [store]);

  /** The session, its active image and that image's bytes source, or null when there is nothing to analyse. */
  const activeTarget = useCallback(() => {
    const s = sessionRef.current;
    const id = s?.activeImageId;
    const src = id ? sourceOf(id) : null;
    return s && id && src ? { s, id, src } : null;
  }, [sourceOf]);

  const report = useCallback((e: unknown, what: string) => {
    if (e instanceof CancelledError) { say('info', `${what} stopped.`); return; }
    if (isQuotaError(e)) {
      say('error', `${what}: the storage this browser allows the app is full. Everything saved before is safe. Save a backup, then make room by deleting sessions you no longer need.`,
        { label: 'Save a backup', run: () => backupRef.current() });
      return;
    }
    const err = e as Error & { hint?: string };
    say('error', `${what}: ${err.message}`);
  }, [say]);

  /** Runs a panel's job with the progress bar and Stop; errors are shown and give null. */
  const runJob = useCallback(async <T,>(what: string, job: (p: ProgressFn) => Promise<T>): Promise<T | null> => {
    try { return await job(progress(what)); } catch (e) { report(e, what); return null; } finally { setBusy(null); }
  }, [progress, report]);

  // Free the bitmaps of an optical field that was replaced.
  const lastOptical = useRef<OpticalField | null>(null);
  useEffect(() => {
    const before = lastOptical.current;
    lastOptical.current = optical;
    // A view made later gives a new object with the same pictures: only pictures no longer shown are closed.
    const kept = [optical?.colour, optical?.confidence, optical?.retardance];
    if (before && before !== optical) for (const l of [before.colour, before.confidence, before.retardance]) if (l && !kept.includes(l)) l.levels.forEach((b) => b.close());
  }, [optical]);

  const settings = session?.settings;
  const active = session?.images.find((i) => i.id === session.activeImageId) ?? null;
  const opticalHere = optical && active && optical.imageId === active.id ? optical : null;
  const showOptical = fieldChoice === 'optical' && opticalHere !== null;
  const work = active ? session?.work[active.id] ?? null : null;
  // The one calibration state of the image shown: status line, header, panels, exports and messages all use it.
  const filePx = shown && active && shown.imageId === active.id ? shown.summary.pixelSizeUmPerPx : null;
  const calibration = calibrationOf(session, filePx);
  /** Applies a calibration change and says what the session's lengths now use. */
  const recalibrate = (a: SessionAction, what: string) => {
    const before = calibrationOf(sessionRef.current, filePx);
    change(a);
    say('info', `${what}${calibrationChange(before, calibrationOf(sessionRef.current, filePx))}`);
  };
  const rects = useImageRectangles();
  // The kept diameters' edges are drawn again after a reload (until a new run sets the marks).
  const keptDiameter = work?.diameter ?? null;
  const keptMarks = useMemo(() => (keptDiameter ? diameterMarks(keptDiameter) : undefined), [keptDiameter]);

  const runOrient = useCallback(async (quiet = false) => {
    const target = activeTarget();
    if (!target) return;
    const { s, id, src } = target;
    try {
      await client.ensure(src, progress('Opening the image'));
      const o = s.settings;
      const options = orientOptionsOf(o);
      // Marks on the page's clock for the app bench: request sent, numbers back from the worker.
      performance.mark('retarda:orient-sent');
      // The numbers come first (shown and saved at once), the colour map after them.
      const reply = await client.callInParts('orient', { key: id, options }, (early) => {
        performance.mark('retarda:orient-numbers');
        change({ type: 'orient', id, result: early.result });
        setWorkerTimes(early.timesMs);
        setHelperTiles(early.helperTiles);
      }, progress('Orientation'));
      const colour = await layerOf(reply.colour);
      const fieldOptions = { sigmaPx: o.sigmaPx };
      // A new map: the coherency picture and glyphs of the old one are remade when shown.
      setShown((sh) => (sh && sh.imageId === id ? { ...sh, colour, coherency: null, glyphs: null, fieldOptions } : sh));
      setWorkerTimes(reply.timesMs);
      setMode((m) => (m === 'none' ? 'colour' : m));
      if (!quiet) { setFieldChoice('texture'); say('info', 'Orientation analysis done.'); }
    } catch (e) { report(e, 'Orientation analysis'); } finally { setBusy(null); }
  }, [client, activeTarget, progress, change, say, report]);

  const runProfile = useCallback(async () => {
    const target = activeTarget();
    if (!target) return;
    const { s, id, src } = target;
    const w = s.work[id];
    if (!w?.walls) { say('error', 'A profile needs the two channel walls: draw them (W) or let the app find them (F) first.'); return; }
    const o = s.settings;
    try {
      await client.ensure(src, progress('Opening the image'));
      // On the current field: the texture one, or the optical reading's (same command as its `retarda` line with the channel options).
      const opt = fieldChoice === 'optical' && optical?.imageId === id ? optical : null;
      // Optical readings are unweighted by default, as on the command line (their confidence would bias S);
      // the pixel-weights setting belongs to the texture field.
      const request = profileRequestOf(o, w.walls, w.wallsFound, !opt);
      let result;
      if (opt) {
        for (const key of readingKeys(opt.request)) {
          const other = sourceOf(key);
          if (!other) throw new Error('an image of this reading is no longer in the session');
          await client.ensure(other, progress('Opening the image'));
        }
        result = await opticalProfile(client, opt.request, request, progress('Profile'));
        setProfileReading((c) => ({ ...c, [id]: { reading: opt.request, request } }));
      } else {
        result = await client.call('profile', { key: id, texture: { sigmaPx: o.sigmaPx }, request }, progress('Profile'));
      }
      change({ type: 'profile', id, result });
      say('info', 'Profile done.');
    } catch (e) { report(e, 'Profile'); } finally { setBusy(null); }
  }, [client, activeTarget, sourceOf, progress, change, say, report, fieldChoice, optical]);

  const runFindWalls = useCallback(async () => {
    const target = activeTarget();
    if (!target) return;
    const { id, src } = target;
    try {
      await client.ensure(src, progress('Opening the image'));
      const found = await client.call('findWalls', { key: id }, progress('Walls'));
      change({ type: 'walls', id, channel: found.channel, found: true, fit: found.fit });
      say('info', `Walls found on the channel's inner edges (points off their line by ${found.fit[0].residualPx.toFixed(1)} px and ${found.fit[1].residualPx.toFixed(1)} px RMS). Check them on the image; drag the ends to correct them.`);
    } catch (e) { report(e, 'Finding the walls'); } finally { setBusy(null); }
  }, [client, activeTarget, progress, change, say, report]);

  // Show the active image when it changes (and redraw its orientation map if it had one).
  useEffect(() => {
    const id = session?.activeImageId;
    if (!id) { setShown(null); return; }
    if (shown?.imageId === id) return;
    const src = sourceOf(id);
    if (!src) return;
    let stop = false;
    (async () => {
      try {
        const ready = decoded.current.get(id);
        decoded.current.clear();
        const summary = ready && client.holds(id) ? ready : await client.decode(src, progress('Opening the image'));
        const image = await layerOf(summary.picture);
        if (stop) return;
        setShown({ imageId: id, summary, image, colour: null, coherency: null, glyphs: null, fieldOptions: null });
        setBusy(null);
        if (sessionRef.current?.work[id]?.orient) await runOrient(true);
      } catch (e) { setBusy(null); report(e, 'Opening the image'); }
    })();
    return () => { stop = true; };
  }, [session?.activeImageId]); // eslint-disable-line react-hooks/exhaustive-deps

  // An optical reading's confidence, retardance and direction lines are made the first time they are shown.
  useEffect(() => {
    const o = showOptical ? opticalHere : null;
    if (!o) return;
    const view: OpticalViewName | null = mode === 'coherency' && !o.confidence ? 'confidence' : mode === 'glyphs' && !o.glyphs ? 'glyphs'
      : mode === 'retardance' && !o.retardance && o.retardanceRangeNm ? 'retardance' : null;
    if (!view) return;
    const job = `optical:${view}:${o.viewKey}`;
    if (making.current.has(job)) return;
    making.current.add(job);
    (async () => {
      try {
        const r = await client.call('opticalView', { key: o.viewKey, view }, progress(view === 'glyphs' ? 'Direction lines' : `${view[0].toUpperCase()}${view.slice(1)} picture`));
        const layer = r.picture ? await layerOf(r.picture) : null;
        // Still the same reading (a new one has other colour bitmaps)?
        setOptical((cur) => {
          if (!cur || cur.colour !== o.colour) { layer?.levels.forEach((b) => b.close()); return cur; }
          return view === 'glyphs' ? { ...cur, glyphs: r.glyphs } : view === 'confidence' ? { ...cur, confidence: layer } : { ...cur, retardance: layer };
        });
      } catch (e) { report(e, view === 'glyphs' ? 'Direction lines' : `${view} picture`); } finally { making.current.delete(job); setBusy(null); }
    })();
  }, [mode, showOptical, opticalHere, client, progress, report]);

  // The coherency picture and the direction lines are made the first time they are shown.
  useEffect(() => {
    if (!shown?.colour || !shown.fieldOptions || showOptical) return;
    const what = mode === 'coherency' && !shown.coherency ? 'coherency' : mode === 'glyphs' && !shown.glyphs ? 'glyphs' : null;
    const src = what ? sourceOf(shown.imageId) : null;
    if (!what || !src) return;
    const { imageId, fieldOptions } = shown;
    const job = `${what}:${imageId}:${fieldOptions.sigmaPx}`;
    if (making.current.has(job)) return;
    making.current.add(job);
    const same = (sh: Shown | null): sh is Shown => !!sh && sh.imageId === imageId && sh.fieldOptions === fieldOptions;
    (async () => {
      try {
        await client.ensure(src, progress('Opening the image'));
        if (what === 'coherency') {
          const r = await client.call('coherencyPicture', { key: imageId, options: fieldOptions }, progress('Coherency picture'));
          const coherency = await layerOf(r.picture);
          setShown((sh) => { if (same(sh)) return { ...sh, coherency }; coherency.levels.forEach((b) => b.close()); return sh; });
        } else {
          const r = await client.call('glyphs', { key: imageId, options: fieldOptions }, progress('Direction lines'));
          setShown((sh) => (same(sh) ? { ...sh, glyphs: r.glyphs } : sh));
        }
      } catch (e) { report(e, what === 'coherency' ? 'Coherency picture' : 'Direction lines'); } finally { making.current.delete(job); setBusy(null); }
    })();
  }, [mode, shown, showOptical, client, sourceOf, progress, report]);

  const addFiles = useCallback(async (files: File[]) => {
    if (!files.length) return;
    let s = sessionRef.current;
    if (s && !keeping.writes(s.id)) {
      say('error', 'Images cannot be added here while the session is open in another tab. Choose “Work on a copy here” first.');
      return;
    }
    if (!s) {
      try { s = await store.create(sessionName()); } catch (e) { report(e, 'A new session could not be started'); return; }
      await keeping.enter(s);
      sessionRef.current = s;
      setSession(s);
    }
    const added = [];
    for (const file of files) {
      const id = newId();
      try {
        setBusy({ what: `Bringing in ${file.name}`, stage: 'reading the file', fraction: 0 });
        const bytes = await readFile(file, (f) => setBusy({ what: `Bringing in ${file.name}`, stage: 'reading the file', fraction: f * 0.3 }));
        // Decode first: a file the analysis cannot read is not added to the session.
        const summary = await client.decode({ key: id, name: file.name, bytes: async () => bytes.slice(0) }, progress(`Bringing in ${file.name}`));
        decoded.current.set(id, summary);
        const blob = new Blob([bytes], { type: file.type });
        blobs.current.set(id, blob);
        added.push(await store.addImage({ id, name: file.name, type: file.type, blob }));
      } catch (e) {
        report(e, `${file.name} was not added`);
      }
    }
    setBusy(null);
    if (added.length) {
      change({ type: 'addImages', images: added });
      say('info', `${added.length} image(s) added to "${sessionRef.current?.name}".`);
    }
  }, [store, client, progress, change, say, report, keeping.writes, keeping.enter]);

  const openDemo = useCallback(async (d: DemoEntry, whole = false) => {
    try {
      const files = [];
      for (const name of whole && d.set ? d.set : [d.file]) {
        const r = await fetch(`./demo/${name}`);
        if (!r.ok) throw new Error(`the demo image could not be loaded (${r.status})`);
        const b = await r.blob();
        files.push(new File([b], name, { type: b.type }));
      }
      await addFiles(files);
    } catch (e) { report(e, 'Demo'); }
  }, [addFiles, report]);

  // Paste and drop anywhere on the page.
  useEffect(() => {
    const onPaste = (e: ClipboardEvent) => {
      const files = [...(e.clipboardData?.files ?? [])];
      if (files.length) { e.preventDefault(); void addFiles(files); }
    };
    window.addEventListener('paste', onPaste);
    return () => window.removeEventListener('paste', onPaste);
  }, [addFiles]);

  // Keyboard shortcuts.
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      const t = e.target as HTMLElement;
      if (t.closest('input, textarea, select, [contenteditable]') || e.ctrlKey || e.metaKey || e.altKey) return;
      const k = e.key;
      if (k === 'Escape') { if (busy) client.cancel(); setDrawing(false); rects.cancel(); setShowSessions(false); setShowSetups(false); setPrintable(null); setHelp(false); return; }
      if (busy || screen !== 'images') return;
      const actions: Record<string, () => void> = {
        o: () => void runOrient(), w: () => setDrawing((d) => !d), f: () => void runFindWalls(), p: () => void runProfile(),
        i: () => fileInput.current?.click(), s: () => { setShowSessions((v) => !v); void refreshList(); }, '?': () => setHelp((h) => !h),
        '1': () => setMode('none'), '2': () => setMode('colour'), '3': () => setMode('coherency'), '4': () => setMode('glyphs'),
        m: () => more.current?.stepTab(e.shiftKey ? -1 : 1), r: () => more.current?.runShown(),
        '+': () => viewer.current?.zoomBy(1.25), '=': () => viewer.current?.zoomBy(1.25), '-': () => viewer.current?.zoomBy(0.8), '0': () => viewer.current?.fit(),
      };
      const a = actions[k.toLowerCase()] ?? actions[k];
      if (a && (active || 'is?'.includes(k))) { e.preventDefault(); a(); }
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [busy, client, runOrient, runFindWalls, runProfile, refreshList, active, screen]);

  const setSetting = (c: Partial<AnalysisSettings>) => change({ type: 'settings', change: c });
  /** Walls drawn or dragged by hand, kept to a tenth of a pixel so their --walls text is exact and short. */
  const setWalls = (id: string, channel: Channel | null) => change({ type: 'walls', id, channel: channel && snapWalls(channel), found: false });
  /** A number setting with the range the analysis checks (SETTING_LIMITS); a value outside it is not taken. */
  const numberField = (label: string, key: keyof typeof SETTING_LIMITS, step: number) => {
    const l = SETTING_LIMITS[key];
    return (
      <label className="field">
        <span>{label}</span>
        <input type="number" min={l.min} max={l.max} step={step} value={settings?.[key] ?? ''}
          onChange={(e) => { const v = Number(e.target.value); if (e.target.value !== '' && withinLimit(l, v)) setSetting({ [key]: v }); }} />
        {'unit' in l && l.unit && <span className="unit">{l.unit}</span>}
      </label>
    );
  };

  const orient = work?.orient ?? null;
  const profile = work?.profile ?? null;
  const walls: Channel | null = work?.walls ?? null;
  const base = active ? active.name.replace(/\.[^.]+$/, '') : 'result';
  // The stations of a profile along the channel, drawn on the image to match the station table.
  const stationLines = useMemo(() => {
    // The profile was made with these walls, so they passed channelFrame's checks already.
    return profile && profile.stations.length > 1 ? stationDrawing(profile) : null;
  }, [profile]);

  /** The current view as the PNG export draws it (image, shown overlay, walls, scale bar, legend). */
  const viewPicture = (): ViewPictureInput | null => {
    if (!shown || !active || shown.imageId !== active.id) return null;
    const overlay = mode === 'colour' ? (showOptical ? opticalHere!.colour : shown.colour) : mode === 'coherency' ? (showOptical ? opticalHere!.confidence : shown.coherency) : null;
    const what = overlay ? (mode === 'colour' ? `orientation${showOptical ? ` (${opticalHere!.label})` : `, σ ${settings?.sigmaPx} px`}` : showOptical ? 'confidence' : 'coherency') : 'image';
    return {
      image: shown.image, overlay, overlayKind: overlay ? (mode === 'colour' ? 'orientation' : 'coherency') : null, opacity,
      imageWidth: shown.summary.width, imageHeight: shown.summary.height,
      pixelSizeUmPerPx: calibration.umPerPx,
      walls: walls?.walls ?? null, stations: drawing ? null : stationLines, caption: `${active.name}: ${what}; ${calibrationWords(calibration)}`,
    };
  };

  /** A displayable copy of a stored image for the report (browsers show PNG and JPEG, not TIFF). */
  const pictureOf = useCallback(async (id: string): Promise<string | null> => {
    const rec = await store.image(id);
    return rec && /png|jpe?g/i.test(rec.type || rec.name) ? URL.createObjectURL(rec.blob) : null;
  }, [store]);

  const openReport = async () => {
    const s = sessionRef.current;
    if (!s) return;
    await keeping.flush();
    const pic = viewPicture();
    let view: { imageId: string; url: string } | null = null;
    if (pic && active) {
      try { view = { imageId: active.id, url: URL.createObjectURL(await viewPicturePng(pic)) }; } catch { view = null; }
    }
    setPrintable({ content: reportContent(s), view });
  };

  const dropHandlers = {
    onDragOver: (e: React.DragEvent) => { if ([...e.dataTransfer.types].includes('Files')) { e.preventDefault(); setDragOver(true); } },
    onDragLeave: (e: React.DragEvent) => { if (e.currentTarget === e.target) setDragOver(false); },
    onDrop: (e: React.DragEvent) => { e.preventDefault(); setDragOver(false); void addFiles([...e.dataTransfer.files]); },
  };

  const doBackup = async () => {
    try {
      await keeping.flush();
      download(`retarda-backup-${new Date().toISOString().slice(0, 10)}.json`, await exportBackup(store), 'application/json');
    } catch (e) { say('error', `The backup could not be made: ${(e as Error).message}`); }
  };
  backupRef.current = () => void doBackup();
  /** Refuses to change a session that another tab has open (it would overwrite that tab's work), saying so. */
  const heldElsewhere = async (id: string, what: string) => {
    if (!(await locks.heldElsewhere(id))) return false;
    say('error', `That session is open in another tab, so it was not ${what} here. Close it there first.`);
    return true;
  };
  const doRestore = async (file: File) => {
    try {
      const r = await importBackup(store, await file.text());
      say('info', `Restored ${r.sessions} session(s) with ${r.images} image(s)${r.setAside ? `; ${r.setAside} record(s) kept aside` : ''}.${r.notes.length ? ' ' + r.notes.join('; ') : ''}`);
      await refreshList();
    } catch (e) { say('error', e instanceof BackupError ? `${file.name}: ${e.message}.` : `${file.name} could not be restored: ${(e as Error).message}`); }
  };

  return (
    <div className={`app${dragOver ? ' drag-over' : ''}`} {...dropHandlers}>
      <header className="top">
        <h1>Retarda</h1>
        <span className="session-title" data-testid="session-name">{session ? session.name : 'No session yet'}</span>
        <span className={`save-state ${keeping.saveState}`} data-testid="save-state">{session ? saveStateWords(keeping.saveState) : ''}</span>
        <span className="spacer" />
        <span className={`engine ${engine}`} data-helpers={helperCount} data-offline={offline.state}
          title={[offline.why ? `Not available offline: ${offline.why}.` : '', helperCount ? `Large images are shared between ${helperCount + 1} analysis workers (the numbers are the same as with one).` : ''].filter(Boolean).join(' ') || undefined}>
          {engine === 'starting' ? 'Analysis engine starting…' : engine === 'failed' ? 'Analysis engine failed' : offline.state === 'ready' ? 'Works offline' : offline.state === 'unavailable' ? 'Ready (online only)' : 'Ready'}</span>
        <button onClick={() => fileInput.current?.click()} title="Shortcut: I">Add images…</button>
        <button className={screen === 'camera' ? 'on' : ''} aria-pressed={screen === 'camera'} onClick={() => setScreen((v) => (v === 'camera' ? 'images' : 'camera'))}>Camera</button>
        <button className={screen === 'compare' ? 'on' : ''} aria-pressed={screen === 'compare'} onClick={() => { void keeping.flush(); setScreen((v) => (v === 'compare' ? 'images' : 'compare')); }}>Compare</button>
        <button onClick={() => setShowSetups((v) => !v)} data-testid="setup-button" title={`The microscope's optical train, pixel size and sample sign. Lengths: ${calibrationWords(calibration)}`}>
          Set-up: {session?.setup?.name ?? 'none'}{session && <> · <span className={`calibration-state ${calibration.origin}`} data-testid="calibration-state">{calibrationShort(calibration)}</span></>}</button>
        <button onClick={() => { setShowSessions(true); void refreshList(); void storageState(navigator.storage).then(setStorage); }} title="Shortcut: S">Sessions</button>
        <button className="quiet" onClick={() => setHelp((h) => !h)} aria-label="Keyboard shortcuts" title="Shortcut: ?">?</button>
        <input ref={fileInput} type="file" accept={ACCEPT} multiple hidden data-testid="file-input"
          onChange={(e) => { void addFiles([...(e.target.files ?? [])]); e.target.value = ''; }} />
      </header>

      {update && <div className="banner" data-testid="update-banner">A new version of the app is ready. <button onClick={update}>Save my work and reload</button></div>}
      {session && keeping.ownership && keeping.ownership.id === session.id && keeping.ownership.mode !== 'own' && (
        <div className="banner warn" role="alert" data-testid="session-elsewhere">
          <span>{ownershipWords(keeping.ownership)}</span>{' '}
          <button onClick={async () => { const c = await keeping.workOnCopy(session); if (c) { show(c); void refreshList(); } }}>Work on a copy here</button>{' '}
          <button onClick={async () => { const s = await keeping.openSaved(session.id); if (s) show(s); }}>
            {keeping.ownership.edited ? 'Open the saved version (drops the changes made here)' : 'Open it here'}</button>
        </div>
      )}
      <div className="messages" aria-live="polite">
        {messages.map((m) => (
          <div key={m.id} className={`message ${m.kind}`} role={m.kind === 'error' ? 'alert' : 'status'}>
            <span>{m.text}</span>
            {m.action && <button onClick={m.action.run}>{m.action.label}</button>}
            <button className="quiet" aria-label="Dismiss" onClick={() => setMessages((l) => l.filter((x) => x.id !== m.id))}>×</button>
          </div>
        ))}
      </div>

      {showSessions && (
        <SessionsPanel
          sessions={listing.sessions} currentId={session?.id ?? null} asideCount={listing.asideCount} storage={storage}
          onOpen={(id) => void openSession(id)}
          onNew={async () => {
            await keeping.flush();
            const s = await store.create(sessionName()).catch((e) => { report(e, 'A new session could not be started'); return null; });
            if (!s) return;
            await keeping.enter(s); show(s); setShowSessions(false); void refreshList();
          }}
          onRename={async (id, name) => {
            if (id === session?.id) change({ type: 'rename', name });
            else if (!(await heldElsewhere(id, 'renamed'))) await store.rename(id, name).catch((e) => report(e, 'The session was not renamed'));
            await keeping.flush(); void refreshList();
          }}
          onDuplicate={async (id) => { await keeping.flush(); await store.duplicate(id).catch((e) => report(e, 'The session was not duplicated')); void refreshList(); }}
          onDelete={async (id) => {
            if (id !== session?.id && await heldElsewhere(id, 'deleted')) return;
            if (id === session?.id) { keeping.leave(); sessionRef.current = null; setSession(null); setShown(null); }
            await store.remove(id).catch((e) => report(e, 'The session was not deleted'));
            // Room was made: a change refused for lack of it is written now.
            void keeping.flush(); void refreshList(); void storageState(navigator.storage).then(setStorage);
          }}
          onBackup={() => void doBackup()} onRestore={(f) => void doRestore(f)} onClose={() => setShowSessions(false)}
        />
      )}

      {printable && (
        <ReportView content={printable.content} view={printable.view} onClose={() => { if (printable.view) URL.revokeObjectURL(printable.view.url); setPrintable(null); }}
          picture={pictureOf} />
      )}

      {showSetups && (
        <SetupsPanel store={setupStore} applied={session?.setup ?? null} canApply={!!session} lengths={session ? calibrationWords(calibration) : null}
          onApply={(s) => recalibrate({ type: 'applySetup', setup: s ? applied(s) : null }, s ? `Set-up "${s.name}" applied to every image of this session. ` : 'The set-up was removed from this session. ')}
          onError={(m) => say('error', m)} onClose={() => setShowSetups(false)} />
      )}

      {help && (
        <section className="help" aria-label="Keyboard shortcuts">
          <h2>Keyboard shortcuts</h2>
          <dl>
            <dt>I</dt><dd>add images</dd><dt>O</dt><dd>orientation analysis</dd><dt>W</dt><dd>draw the two walls</dd><dt>F</dt><dd>find the walls</dd>
            <dt>P</dt><dd>profile across the channel</dd>
            <dt>M</dt><dd>next tab of “More analyses” (Shift+M: the previous one)</dd><dt>R</dt><dd>run the analysis of the tab shown in “More analyses”, with its settings</dd><dt>1 2 3 4</dt><dd>show: image only, orientation colours, coherency, direction lines</dd>
            <dt>+ − 0</dt><dd>zoom in, out, fit</dd><dt>S</dt><dd>saved sessions</dd><dt>Esc</dt><dd>stop the running analysis, close panels</dd><dt>Ctrl+V</dt><dd>paste an image</dd>
          </dl>
          <p className="note" data-testid="app-version">Retarda version {__RETARDA_VERSION__}</p>
        </section>
      )}

      {screen === 'compare' ? (
        <ScreenGuard key="compare" screen="comparison" onBack={() => setScreen('images')}>
          <CompareView store={store} current={session} onError={(m) => say('error', m)} onClose={() => setScreen('images')} />
        </ScreenGuard>
      ) : screen === 'camera' ? (
        <ScreenGuard key="camera" screen="camera" onBack={() => setScreen('images')}>
          <CameraView sigmaPx={settings?.sigmaPx ?? 2} weighting={settings?.weighting ?? 'coherency'}
            onKeep={(file) => addFiles([file])} onClose={() => setScreen('images')} />
        </ScreenGuard>
      ) : !active ? (
        <main className="welcome">
          <section className="drop-target">
            <h2>Bring in a microscope image</h2>
            <p>Drop PNG, JPEG or TIFF files here (8/16-bit, 32-bit float TIFF), <button onClick={() => fileInput.current?.click()}>choose files…</button> or paste one with Ctrl+V.</p>
            <p className="note">Everything stays on this device. The analyses run here, without a network.</p>
            {demos.length > 0 && (
              <div className="demos">
                <h3>Or try a demo image</h3>
                <ul>{demos.map((d) => (
                  <li key={d.file}><button onClick={() => void openDemo(d)}>{d.title}</button> <span className="note">{d.about}</span>
                    {d.set && d.set[d.set.length - 1] === d.file && <> <button className="small" onClick={() => void openDemo(d, true)}>Open these {d.set.length} together</button></>}
                  </li>
                ))}</ul>
              </div>
            )}
          </section>
          <LampCaution />
          <SampleCaution />
        </main>
      ) : (
        <ScreenGuard key="images" screen="images">
        <main className="work">
          <aside className="images" aria-label="Images in this session">
            <h2>Images</h2>
            <ul>
              {session!.images.map((m) => (
                <li key={m.id} className={m.id === active.id ? 'current' : ''}>
                  <button onClick={() => change({ type: 'select', id: m.id })} title={m.name}>{m.name}</button>
                  <span className="marks">{session!.work[m.id]?.orient ? 'O' : ''}{session!.work[m.id]?.profile ? 'P' : ''}</span>
                  <button className="quiet small" aria-label={`Remove ${m.name} from the session`} onClick={() => {
                    const writes = keeping.writes(session!.id);
                    change({ type: 'removeImage', id: m.id });
                    // The session is written without the image first, then its bytes go (never a session listing missing bytes).
                    if (writes) void keeping.flush().then((done) => { if (done) void store.removeImage(m.id); });
                    client.call('forget', { key: m.id }).catch(() => undefined);
                  }}>×</button>
                </li>
              ))}
            </ul>
            <button onClick={() => fileInput.current?.click()}>Add images…</button>
            <LampCaution />
          </aside>

          <section className="stage">
            <div className="toolbar" role="toolbar" aria-label="View">
              <span className="group">
                Show:
                {(['none', 'colour', 'coherency', 'glyphs', ...(showOptical && opticalHere!.retardanceRangeNm ? ['retardance'] : [])] as OverlayMode[]).map((m, i) => (
                  <button key={m} className={mode === m ? 'on' : ''} aria-pressed={mode === m} onClick={() => setMode(m)} title={m === 'retardance' ? 'Retardance map (colour bar in the reading panel)' : `Shortcut: ${i + 1}`}>
                    {m === 'none' ? 'image' : m === 'colour' ? 'orientation' : m === 'coherency' ? (showOptical ? 'confidence' : 'coherency') : m === 'retardance' ? 'retardance' : 'direction lines'}
                  </button>
                ))}
              </span>
              {opticalHere && (
                <span className="group" role="group" aria-label="Field shown and used for the profile">
                  Field:
                  <button className={!showOptical ? 'on' : ''} aria-pressed={!showOptical} onClick={() => { setFieldChoice('texture'); if (mode === 'retardance') setMode('colour'); }}>texture</button>
                  <button className={showOptical ? 'on' : ''} aria-pressed={showOptical} onClick={() => setFieldChoice('optical')}>{opticalHere.label}</button>
                </span>
              )}
              <label className="group">opacity <input type="range" min={0} max={1} step={0.05} value={opacity} onChange={(e) => setOpacity(Number(e.target.value))} /></label>
              <span className="group">
                <button onClick={() => viewer.current?.zoomBy(0.8)} aria-label="Zoom out">−</button>
                <button onClick={() => viewer.current?.fit()}>Fit</button>
                <button onClick={() => viewer.current?.zoomBy(1.25)} aria-label="Zoom in">+</button>
              </span>
              <ViewExports picture={viewPicture()} baseName={base} onError={(m) => say('error', m)}
                onReport={() => void openReport()}
                fieldTiff={orient && !showOptical ? async () => {
                  const src = sourceOf(active.id);
                  if (!src) throw new Error('the image is no longer in the session');
                  await client.ensure(src);
                  // Same description as `retarda orient NAME --field-out FILE.tif`, so the bytes match.
                  return requestFieldTiff(client, { key: active.id, options: { sigmaPx: Number(orient.options.sigmaPx) }, description: `retarda orient ${active.name}` });
                } : undefined} />
            </div>
            {shown && shown.imageId === active.id ? (
              <Viewer
                handle={viewer} image={shown.image} imageWidth={shown.summary.width} imageHeight={shown.summary.height}
                colour={showOptical ? opticalHere!.colour : shown.colour} coherency={showOptical ? opticalHere!.confidence : shown.coherency}
                glyphs={(showOptical ? opticalHere!.glyphs : shown.glyphs) ?? []} retardance={showOptical ? opticalHere!.retardance : null} mode={mode} opacity={opacity}
                marks={marks && marks.imageId === active.id ? marks.marks : keptMarks}
                walls={walls} stations={stationLines} drawing={drawing} {...rects.viewer}
                onWalls={(channel) => setWalls(active.id, channel)}
                onDrawingDone={() => setDrawing(false)}
              />
            ) : <div className="viewer placeholder">Opening {active.name}…</div>}
            {shown && shown.imageId === active.id && (
              <p className="image-facts" data-testid="image-facts">
                {shown.summary.width} × {shown.summary.height} px, {shown.summary.channels === 1 ? 'grey' : 'RGB'}, {shown.summary.bitDepth}-bit, <span data-testid="image-calibration">{calibrationWords(calibration)}</span>
                {shown.summary.displayNote ? `; ${shown.summary.displayNote}` : ''}
              </p>
            )}
          </section>

          <aside className="panel" aria-label="Analysis">
            <section data-testid="orient-section" data-worker-ms={JSON.stringify(workerTimes)} data-helper-tiles={helperTiles}>
              <h2>Orientation</h2>
              {numberField('Texture scale σ', 'sigmaPx', 0.5)}
              <label className="field">
                <span>Pixel weights</span>
                <select value={settings!.weighting} onChange={(e) => setSetting({ weighting: e.target.value as AnalysisSettings['weighting'] })}>
                  <option value="coherency">coherency</option><option value="none">equal</option><option value="strength">texture strength</option><option value="strength-coherency">texture strength × coherency</option>
                </select>
              </label>
              <label className="field">
                <span>Reference axis</span>
                <input type="number" step={1} min={-90} max={180} placeholder="none" value={settings!.axisDeg ?? ''}
                  onChange={(e) => setSetting({ axisDeg: e.target.value === '' ? null : Number(e.target.value) })} />
                <span className="unit">deg</span>
              </label>
              <button className="primary" disabled={!!busy || engine === 'failed'} onClick={() => void runOrient()} title="Shortcut: O">Analyse orientation</button>
              {mode !== 'none' && orient && <ColourKey />}
              {orient && <OrientTable r={orient} stale={orientIsStale(orient, settings!)} />}
              {orient && <p className="cli" title="Run this to get the same numbers from the command line"><code>{orientCommandLine(active.name, orientOptionsOf(settings!))}</code></p>}
              {orient && (
                <p className="exports">
                  Save: <button onClick={() => download(`${base}-orient.json`, JSON.stringify(orient, null, 2), 'application/json')}>JSON</button>
                  <button onClick={() => download(`${base}-orient.csv`, orientCsv(orient), 'text/csv')}>CSV</button>
                </p>
              )}
            </section>

            <MoreAnalyses
              handle={more}
              ctx={{ client, images: session!.images, activeId: active.id, sourceOf, runJob, disabled: !!busy || engine === 'failed', drawRect: rects.drawRect, showBoxes: rects.showBoxes }}
              work={work} pixelSize={session?.pixelSize ?? null} opticalMapShown={opticalHere !== null}
              onField={(f) => { setOptical(f); setFieldChoice('optical'); setMode((m) => (m === 'none' || m === 'glyphs' ? 'colour' : m)); }}
              onMarks={(imageId, m) => setMarks({ imageId, marks: m })}
              onDiameter={(id, d, run) => change({ type: 'diameter', id, result: d, run })}
              onOptics={(id, reading) => change({ type: 'optics', id, reading })}
              onMicrometer={(id, calibration) => change({ type: 'micrometer', id, calibration })}
              onPixelSize={(pixelSize) => recalibrate({ type: 'pixelSize', pixelSize }, '')} calibration={calibration}
            />

            <section>
              <h2>Across the channel</h2>
              <p className="note" data-testid="profile-field">Field: {showOptical ? `${opticalHere!.label} (the reading above)` : 'texture (structure tensor)'}{opticalHere ? '; switch with “Field” above the image.' : ''}</p>
              <p className="buttons">
                <button className={drawing ? 'on' : ''} aria-pressed={drawing} disabled={!shown} onClick={() => setDrawing((d) => !d)} title="Shortcut: W">{drawing ? 'Cancel drawing' : 'Draw walls'}</button>
                <button disabled={!!busy || !shown} onClick={() => void runFindWalls()} title="Shortcut: F">Find walls</button>
                {walls && <button className="quiet" onClick={() => change({ type: 'walls', id: active.id, channel: null, found: false })}>Clear walls</button>}
              </p>
              {walls && <WallsEditor key={wallsText(walls.walls)} walls={walls} found={!!work?.wallsFound} fit={work?.wallFit} onChange={(channel) => setWalls(active.id, channel)} />}
              {numberField('Bins across', 'bins', 1)}
              {numberField('Stations along', 'stations', 1)}
              {numberField('Core: position |s| below', 'coreMax', 0.05)}
              {numberField('Skin: position |s| above', 'skinMin', 0.05)}
              <button className="primary" disabled={!!busy || !walls} onClick={() => void runProfile()} title="Shortcut: P">Profile across the channel</button>
              {profile && <ProfilePlot r={profile} />}
              {profile && <ProfileTable r={profile} stale={profileIsStale(profile, settings!)} onRemedy={profile.fieldMethod === 'plate' ? (r) => more.current?.remedy(r) : undefined} />}
              {profile && walls && <p className="cli"><code data-testid="profile-cli">{profile.fieldMethod === 'texture' ? textureProfileCommandLine(active.name, orientOptionsOf(settings!), profileRequestOf(settings!, walls, !!work?.wallsFound, true)) : profileReading[active.id] ? opticalCommandLine(profileReading[active.id].reading, profileReading[active.id].request) : `retarda ${profile.fieldMethod === 'plate' ? 'profile --source plate' : profile.fieldMethod} … with the reading's options`}</code></p>}
              {profile && (
                <p className="exports">
                  Save: <button onClick={() => download(`${base}-profile.json`, JSON.stringify(profile, null, 2), 'application/json')}>JSON</button>
                  <button onClick={() => download(`${base}-profile.csv`, profileCsv(profile), 'text/csv')}>CSV (summary)</button>
                  <button onClick={() => download(`${base}-profile-bins.csv`, profileBinsCsv(profile), 'text/csv')}>CSV (bins)</button>
                </p>
              )}
            </section>
            <ResultCaution />
          </aside>
        </main>
        </ScreenGuard>
      )}

      {busy && (
        <div className="busy" role="status" aria-live="polite" data-testid="busy">
          <span>{busy.what}: {busy.stage}</span>
          <progress max={1} value={busy.fraction} />
          <button onClick={() => client.cancel()}>Stop (Esc)</button>
        </div>
      )}
    </div>
  );
}
