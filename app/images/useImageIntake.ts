/**
 * Bringing images in: files chosen, dropped or pasted, and the demo images. A file is decoded first, and only a
 * file the analysis can read is added to the session (a new session is started when none is open).
 */
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import type { Sessions } from '../session/useSessions.ts';
import { sessionName } from '../session/useSessions.ts';
import type { Analysis } from '../analysis/useAnalysis.ts';
import type { Say } from '../messages.ts';
import type { PlateSuggestion } from '../analysis/requests.ts';

/** A demo image as app/build/demoImages.ts offers it (`plate`: an angle series' compensator image, the last of its set). */
export interface DemoEntry { file: string; title: string; about: string; set?: string[]; plate?: string; plateSampleFree?: string }

/** The compensator images the demo sets name, for the angle-series form. */
export function demoPlates(demos: DemoEntry[]): PlateSuggestion[] {
  return demos.filter((d) => d.plate && d.file === d.plate && d.set)
    .map((d) => ({ angles: d.set!.filter((f) => f !== d.plate), plate: d.plate!, ...(d.plateSampleFree ? { sampleFree: d.plateSampleFree } : {}) }));
}

/** The files the file chooser offers. */
export const ACCEPT = '.png,.jpg,.jpeg,.tif,.tiff,image/png,image/jpeg,image/tiff';
const LARGE_FILE = 20 * 1024 * 1024;

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

export function useImageIntake(sessions: Sessions, analysis: Analysis, say: Say) {
  const { store, keeping, sessionRef, change, adopt } = sessions;
  const { client, progress, report, setBusy, blobs, decoded } = analysis;
  const [demos, setDemos] = useState<DemoEntry[]>([]);
  const [dragOver, setDragOver] = useState(false);
  const fileInput = useRef<HTMLInputElement>(null);

  useEffect(() => {
    fetch('./demo/index.json').then((r) => (r.ok ? r.json() : [])).then((d) => setDemos(Array.isArray(d) ? d : [])).catch(() => setDemos([]));
  }, []);

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
      adopt(s);
    }
    const added = [];
    for (const file of files) {
      const id = crypto.randomUUID();
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
  }, [store, client, progress, change, say, report, keeping.writes, keeping.enter]); // eslint-disable-line react-hooks/exhaustive-deps

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

  // Paste anywhere on the page.
  useEffect(() => {
    const onPaste = (e: ClipboardEvent) => {
      const files = [...(e.clipboardData?.files ?? [])];
      if (files.length) { e.preventDefault(); void addFiles(files); }
    };
    window.addEventListener('paste', onPaste);
    return () => window.removeEventListener('paste', onPaste);
  }, [addFiles]);

  /** Drop anywhere on the page. */
  const dropHandlers = {
    onDragOver: (e: React.DragEvent) => { if ([...e.dataTransfer.types].includes('Files')) { e.preventDefault(); setDragOver(true); } },
    onDragLeave: (e: React.DragEvent) => { if (e.currentTarget === e.target) setDragOver(false); },
    onDrop: (e: React.DragEvent) => { e.preventDefault(); setDragOver(false); void addFiles([...e.dataTransfer.files]); },
  };

  const plates = useMemo(() => demoPlates(demos), [demos]);

  return { demos, plates, addFiles, openDemo, fileInput, chooseFiles: () => fileInput.current?.click(), dragOver, dropHandlers };
}

export type ImageIntake = ReturnType<typeof useImageIntake>;
