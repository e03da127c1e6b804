/**
 * The analyses of the image shown: the worker (its start, progress and Stop), the pictures the viewer shows
 * (made when first needed, freed when replaced), the field in use (texture or an optical reading) and the runs of
 * the orientation analysis, the walls and the channel profile. Requests are plain data (requests.ts); no
 * closure is kept in the state.
 */
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import type { ProfileRequest } from '../../src/analyses/index.ts';
import { AnalysisClient, CancelledError, tileHelperCount, type ImageSource, type ProgressFn } from '../worker/client.ts';
import type { DecodeSummary, Glyph, OpticalViewName, Picture, StepTimes } from '../worker/protocol.ts';
import { isQuotaError } from '../storage/index.ts';
import type { Layer, Mark, OverlayMode } from '../components/Viewer.tsx';
import type { OpticalField } from '../components/MoreAnalyses.tsx';
import { opticalProfile, readingKeys } from './calls.ts';
import { orientOptionsOf, profileRequestOf, type OpticalRequest } from './requests.ts';
import type { Sessions } from '../session/useSessions.ts';
import type { Say } from '../messages.ts';

export interface Busy { stage: string; fraction: number; what: string }

/**
 * What the viewer shows for the active image. The coherency picture and the direction lines are made when first
 * shown (null until then), from the texture field of `fieldOptions` (the options the colour map was made with).
 */
export interface Shown {
  imageId: string; summary: DecodeSummary; image: Layer; colour: Layer | null; coherency: Layer | null; glyphs: Glyph[] | null;
  fieldOptions: { sigmaPx: number } | null;
}

/** The worker sends ready-made bitmaps; the page only wraps them. */
export const layerOf = (p: Picture): Layer => ({ levels: p.levels, width: p.width, height: p.height, scale: p.scale });

export function useAnalysis(sessions: Sessions, say: Say) {
  const { sessionRef, store, change, session } = sessions;
  // Helpers (one per spare core, or as `?workers=N` says) share the tiles of large images; each holds its own opencv.js.
  const client = useMemo(() => new AnalysisClient(() => new Worker(new URL('../worker/analysis.worker.ts', import.meta.url), { type: 'module', name: 'analysis' }),
    { tileHelpers: tileHelperCount(location.search, navigator.hardwareConcurrency || 2) }), []);
  const [engine, setEngine] = useState<'starting' | 'ready' | 'failed'>('starting');
  /** Helper workers sharing the tiles of large images (0 until they have started). */
  const [helperCount, setHelperCount] = useState(0);
  const [busy, setBusy] = useState<Busy | null>(null);
  const [shown, setShown] = useState<Shown | null>(null);
  /** Milliseconds of each step of the last orientation run in the worker (read by the browser benchmark). */
  const [workerTimes, setWorkerTimes] = useState<StepTimes>({});
  const [helperTiles, setHelperTiles] = useState(0);
  const [mode, setMode] = useState<OverlayMode>('colour');
  const [opacity, setOpacity] = useState(0.7);
  const [drawing, setDrawing] = useState(false);
  /** The last optical field (plate reading, plate pair or angle series) and the diameter marks, for the image they belong to. */
  const [optical, setOptical] = useState<OpticalField | null>(null);
  const [marks, setMarks] = useState<{ imageId: string; marks: Mark[] } | null>(null);
  /** Which field the viewer shows and the channel profile uses: the texture field or the optical one. */
  const [fieldChoice, setFieldChoice] = useState<'texture' | 'optical'>('texture');
  /** The reading and request of each profile made on an optical field (the stored result does not say which reading made it). */
  const [profileReading, setProfileReading] = useState<Record<string, { reading: OpticalRequest; request: ProfileRequest }>>({});
  /** Coherency pictures and direction-line sets being made, so one is asked for only once. */
  const making = useRef(new Set<string>());
  const blobs = useRef(new Map<string, Blob>());
  /** Summaries of images just brought in, so showing them does not decode them twice. */
  const decoded = useRef(new Map<string, DecodeSummary>());

  useEffect(() => {
    client.ready().then(() => setEngine('ready'), (e: Error) => { setEngine('failed'); say('error', e.message); });
    void client.helpersLinked.then(setHelperCount);
  }, []); // eslint-disable-line react-hooks/exhaustive-deps

  // Free the bitmaps of pictures no longer shown (large images hold tens of MB each).
  const lastShown = useRef<Shown | null>(null);
  useEffect(() => {
    const before = lastShown.current;
    lastShown.current = shown;
    if (!before) return;
    const keep = new Set([shown?.image, shown?.colour, shown?.coherency]);
    for (const l of [before.image, before.colour, before.coherency]) if (l && !keep.has(l)) l.levels.forEach((b) => b.close());
  }, [shown]);

  // Free the bitmaps of an optical field that was replaced.
  const lastOptical = useRef<OpticalField | null>(null);
  useEffect(() => {
    const before = lastOptical.current;
    lastOptical.current = optical;
    // A view made later gives a new object with the same pictures: only pictures no longer shown are closed.
    const kept = [optical?.colour, optical?.confidence, optical?.retardance];
    if (before && before !== optical) for (const l of [before.colour, before.confidence, before.retardance]) if (l && !kept.includes(l)) l.levels.forEach((b) => b.close());
  }, [optical]);

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
  }, [store, sessionRef]);

  /** The session, its active image and that image's bytes source, or null when there is nothing to analyse. */
  const activeTarget = useCallback(() => {
    const s = sessionRef.current;
    const id = s?.activeImageId;
    const src = id ? sourceOf(id) : null;
    return s && id && src ? { s, id, src } : null;
  }, [sourceOf, sessionRef]);

  const report = useCallback((e: unknown, what: string) => {
    if (e instanceof CancelledError) { say('info', `${what} stopped.`); return; }
    if (isQuotaError(e)) {
      say('error', `${what}: the storage this browser allows the app is full. Everything saved before is safe. Save a backup, then make room by deleting sessions you no longer need.`,
        { label: 'Save a backup', run: () => sessions.backup() });
      return;
    }
    say('error', `${what}: ${(e as Error).message}`);
  }, [say]); // eslint-disable-line react-hooks/exhaustive-deps

  /** Runs a panel's job with the progress bar and Stop; errors are shown and give null. */
  const runJob = useCallback(async <T,>(what: string, job: (p: ProgressFn) => Promise<T>): Promise<T | null> => {
    try { return await job(progress(what)); } catch (e) { report(e, what); return null; } finally { setBusy(null); }
  }, [progress, report]);

  const runOrient = useCallback(async (quiet = false) => {
    const target = activeTarget();
    if (!target) return;
    const { s, id, src } = target;
    try {
      await client.ensure(src, progress('Opening the image'));
      const o = s.settings;
      // Marks on the page's clock for the app bench: request sent, numbers back from the worker.
      performance.mark('retarda:orient-sent');
      // The numbers come first (shown and saved at once), the colour map after them.
      const reply = await client.callInParts('orient', { key: id, options: orientOptionsOf(o) }, (early) => {
        performance.mark('retarda:orient-numbers');
        change({ type: 'orient', id, result: early.result });
        setWorkerTimes(early.timesMs);
        setHelperTiles(early.helperTiles);
      }, progress('Orientation'));
      const colour = layerOf(reply.colour);
      const fieldOptions = { sigmaPx: o.sigmaPx };
      // A new map: the coherency picture and direction lines of the old one are remade when shown.
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
      // On the current field: the texture one, or the optical reading's (the same command as its `retarda` line with the channel options).
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
        const image = layerOf(summary.picture);
        if (stop) return;
        setShown({ imageId: id, summary, image, colour: null, coherency: null, glyphs: null, fieldOptions: null });
        setBusy(null);
        if (sessionRef.current?.work[id]?.orient) await runOrient(true);
      } catch (e) { setBusy(null); report(e, 'Opening the image'); }
    })();
    return () => { stop = true; };
  }, [session?.activeImageId]); // eslint-disable-line react-hooks/exhaustive-deps

  const active = session?.images.find((i) => i.id === session.activeImageId) ?? null;
  const opticalHere = optical && active && optical.imageId === active.id ? optical : null;
  const showOptical = fieldChoice === 'optical' && opticalHere !== null;

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
        const layer = r.picture ? layerOf(r.picture) : null;
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
          const coherency = layerOf(r.picture);
          setShown((sh) => { if (same(sh)) return { ...sh, coherency }; coherency.levels.forEach((b) => b.close()); return sh; });
        } else {
          const r = await client.call('glyphs', { key: imageId, options: fieldOptions }, progress('Direction lines'));
          setShown((sh) => (same(sh) ? { ...sh, glyphs: r.glyphs } : sh));
        }
      } catch (e) { report(e, what === 'coherency' ? 'Coherency picture' : 'Direction lines'); } finally { making.current.delete(job); setBusy(null); }
    })();
  }, [mode, shown, showOptical, client, sourceOf, progress, report]);

  /** An optical reading just made: shown, and used by the channel profile. */
  const chooseOptical = (f: OpticalField) => { setOptical(f); setFieldChoice('optical'); setMode((m) => (m === 'none' || m === 'glyphs' ? 'colour' : m)); };
  /** Back to the texture field (the retardance map belongs to the optical one). */
  const chooseTexture = () => { setFieldChoice('texture'); if (mode === 'retardance') setMode('colour'); };

  return {
    client, engine, helperCount, busy, setBusy, progress, report, runJob, sourceOf, blobs, decoded, shown, resetShown: () => setShown(null),
    workerTimes, helperTiles, mode, setMode, opacity, setOpacity, drawing, setDrawing, optical, opticalHere, showOptical, chooseOptical, setFieldChoice,
    chooseTexture, marks, setMarks, profileReading, runOrient, runProfile, runFindWalls, active,
  };
}

export type Analysis = ReturnType<typeof useAnalysis>;
