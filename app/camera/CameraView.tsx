/**
 * The microscope camera: choose the camera and resolution, see the live picture, read order and
 * director of the whole frame or a drawn rectangle several times a second, and freeze a frame to
 * keep it as an image of the session.
 */
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { formatCell } from '../../src/report/index.ts';
import { BLOCK_CORRELATION_LENGTHS } from '../../src/order/index.ts';
import type { Weighting } from '../../src/order/index.ts';
import { AnalysisClient } from '../worker/client.ts';
import { ColourKey } from '../components/ColourKey.tsx';
import { defaultStep, planReadout, readoutHaloPx, sizeSteps, type FrameRect } from './frames.ts';
import { Undetermined } from '../components/Results.tsx';
import { LiveReadout, type GrabbedFrame, type LiveReading } from './liveReadout.ts';
import { orientationColourTable, angleIndex } from '../../src/report/index.ts';

interface Props {
  sigmaPx: number;
  weighting: Weighting;
  /** Adds a kept frame to the session (as a PNG file). */
  onKeep(file: File): Promise<void>;
  onClose(): void;
}

const RESOLUTIONS = [
  { label: '640 × 480', width: 640, height: 480 },
  { label: '1280 × 720', width: 1280, height: 720 },
  { label: '1920 × 1080', width: 1920, height: 1080 },
  { label: '2592 × 1944', width: 2592, height: 1944 },
];

/** Two workers take frames in turn: on two cores that doubles the readings per second. */
const LIVE_WORKERS = 2;

const makeEngine = (i: number) => new AnalysisClient(() => new Worker(new URL('../worker/analysis.worker.ts', import.meta.url), { type: 'module', name: `live-readout-${i + 1}` }));

const f = (v: number | null | undefined) => formatCell(v ?? null);

/** Video-pixel to screen mapping of a video shown with object-fit: contain. */
function fitOf(vw: number, vh: number, cw: number, ch: number) {
  const k = Math.min(cw / vw, ch / vh);
  return { k, ox: (cw - vw * k) / 2, oy: (ch - vh * k) / 2 };
}

export function CameraView(p: Props) {
  const video = useRef<HTMLVideoElement>(null);
  const overlay = useRef<HTMLCanvasElement>(null);
  const [devices, setDevices] = useState<MediaDeviceInfo[]>([]);
  const [deviceId, setDeviceId] = useState('');
  const [resolution, setResolution] = useState(1);
  const [stream, setStream] = useState<MediaStream | null>(null);
  const [frameSize, setFrameSize] = useState({ w: 0, h: 0 });
  const [problem, setProblem] = useState('');
  const [step, setStep] = useState(2);
  const [rect, setRect] = useState<FrameRect | null>(null);
  const [drawingRect, setDrawingRect] = useState(false);
  const [draft, setDraft] = useState<FrameRect | null>(null);
  const [reading, setReading] = useState<LiveReading | null>(null);
  const [readingCount, setReadingCount] = useState(0);
  const [readoutError, setReadoutError] = useState('');
  const [showColours, setShowColours] = useState(false);
  const [live, setLive] = useState(true);
  const [frozen, setFrozen] = useState<{ url: string; blob: Blob; width: number; height: number } | null>(null);
  const [keeping, setKeeping] = useState(false);
  const [kept, setKept] = useState<string[]>([]);
  const settingsRef = useRef({ sigmaPx: p.sigmaPx, weighting: p.weighting, picture: showColours });
  settingsRef.current = { sigmaPx: p.sigmaPx, weighting: p.weighting, picture: showColours };
  const planInputs = useRef({ step, rect });
  planInputs.current = { step, rect };
  /** Readings replaced by a newer one, whose pictures are closed once the newer one is on screen. */
  const retired = useRef<LiveReading[]>([]);
  const lastReading = useRef<LiveReading | null>(null);
  /** Counts frames the camera delivered, so the same frame is never analysed twice. */
  const frameSerial = useRef({ delivered: 0, grabbed: -1 });

  // The camera: ask for it, then list the cameras (their names are only given once one is open).
  useEffect(() => {
    if (!navigator.mediaDevices?.getUserMedia) { setProblem('This browser gives no access to cameras here (it needs a secure page: https or localhost).'); return; }
    let stop = false;
    let opened: MediaStream | null = null;
    const r = RESOLUTIONS[resolution];
    navigator.mediaDevices.getUserMedia({ video: { ...(deviceId ? { deviceId: { exact: deviceId } } : {}), width: { ideal: r.width }, height: { ideal: r.height }, frameRate: { ideal: 30 } }, audio: false })
      .then(async (s) => {
        if (stop) { s.getTracks().forEach((t) => t.stop()); return; }
        opened = s;
        setStream(s);
        setProblem('');
        const list = (await navigator.mediaDevices.enumerateDevices()).filter((d) => d.kind === 'videoinput');
        if (!stop) {
          setDevices(list);
          const current = s.getVideoTracks()[0]?.getSettings().deviceId;
          if (current && !deviceId) setDeviceId(current);
        }
      })
      .catch((e: Error) => {
        if (stop) return;
        setStream(null);
        setProblem(e.name === 'NotAllowedError' ? 'The browser was not allowed to use the camera. Allow it in the address bar, then choose the camera again.'
          : e.name === 'NotFoundError' ? 'No camera was found. Connect the microscope camera and choose it again.'
          : e.name === 'OverconstrainedError' ? 'This camera cannot give that resolution; choose another.'
          : `The camera could not be opened: ${e.message}`);
      });
    return () => { stop = true; opened?.getTracks().forEach((t) => t.stop()); };
  }, [deviceId, resolution]);

  useEffect(() => {
    const v = video.current;
    if (!v || !stream) return;
    v.srcObject = stream;
    const onSize = () => {
      setFrameSize({ w: v.videoWidth, h: v.videoHeight });
      setStep(defaultStep(v.videoWidth, v.videoHeight));
    };
    v.addEventListener('loadedmetadata', onSize);
    v.addEventListener('resize', onSize);
    void v.play().catch(() => undefined);
    let handle = 0;
    const counted = 'requestVideoFrameCallback' in v;
    const onFrame = () => { frameSerial.current.delivered++; handle = v.requestVideoFrameCallback(onFrame); };
    if (counted) handle = v.requestVideoFrameCallback(onFrame);
    return () => {
      v.removeEventListener('loadedmetadata', onSize); v.removeEventListener('resize', onSize);
      if (counted) v.cancelVideoFrameCallback(handle);
    };
  }, [stream]);

  // The newest frame, whole: the worker crops, scales and reads it, so the page's thread does no pixel work
  // (a VideoFrame only wraps the camera's buffer; browsers without VideoFrame give a bitmap).
  const grab = useCallback(async (): Promise<GrabbedFrame | null> => {
    const v = video.current;
    if (!v || v.readyState < 2 || !v.videoWidth) return null;
    const serial = frameSerial.current;
    // Browsers without frame callbacks: every grab counts as a new frame.
    if ('requestVideoFrameCallback' in v) { if (serial.delivered === serial.grabbed) return null; serial.grabbed = serial.delivered; }
    const { step: s, rect: r } = planInputs.current;
    let plan;
    try { plan = planReadout(v.videoWidth, v.videoHeight, s, r, readoutHaloPx(settingsRef.current.sigmaPx)); } catch (e) { setReadoutError((e as Error).message); return null; }
    const source = typeof VideoFrame === 'function' ? new VideoFrame(v) : await createImageBitmap(v);
    return { source, plan };
  }, []);

  const readout = useMemo(() => new LiveReadout({
    engines: Array.from({ length: LIVE_WORKERS }, (_, i) => makeEngine(i)),
    grab,
    settings: () => settingsRef.current,
    onReading: (r) => {
      // The replaced reading may still be the one React is about to draw: it is closed after the next draw.
      if (lastReading.current) retired.current.push(lastReading.current);
      lastReading.current = r;
      setReading(r);
      setReadingCount((n) => n + 1);
      setReadoutError('');
    },
    onError: (m) => setReadoutError(m),
  }), [grab]);

  useEffect(() => () => {
    readout.dispose();
    for (const x of [...retired.current, lastReading.current]) x?.colour?.levels.forEach((b) => b.close());
    retired.current = [];
  }, [readout]);

  useEffect(() => {
    if (!stream || !live || frozen) { void readout.stop(); return; }
    readout.start().catch((e: Error) => setReadoutError(`The analysis engine for the readout could not start: ${e.message}`));
    return () => { void readout.stop(); };
  }, [stream, live, frozen, readout]);

  // Overlay: the chosen rectangle, the director as a bar, and optionally the orientation colours.
  useEffect(() => {
    const r = reading;
    // Pictures of readings older than the one drawn now are no longer needed.
    retired.current = retired.current.filter((x) => { if (x === r) return true; x.colour?.levels.forEach((b) => b.close()); return false; });
    const c = overlay.current, v = video.current;
    if (!c || !v) return;
    const cw = c.clientWidth, ch = c.clientHeight, dpr = window.devicePixelRatio || 1;
    // Resizing a canvas reallocates it: only when the layout changed.
    if (c.width !== Math.round(cw * dpr) || c.height !== Math.round(ch * dpr)) { c.width = Math.round(cw * dpr); c.height = Math.round(ch * dpr); }
    const g = c.getContext('2d')!;
    g.setTransform(dpr, 0, 0, dpr, 0, 0);
    g.clearRect(0, 0, cw, ch);
    if (!frameSize.w || frozen) return;
    const { k, ox, oy } = fitOf(frameSize.w, frameSize.h, cw, ch);
    if (r && showColours && r.colour?.levels[0]?.width) {
      g.save();
      // The picture covers the rectangle and the filters' margin around it; only the rectangle was read.
      const s = r.plan.source, q = r.plan.region, f = s.width / r.plan.width;
      if (q) { g.beginPath(); g.rect(ox + (s.x + q.x * f) * k, oy + (s.y + q.y * f) * k, q.width * f * k, q.height * f * k); g.clip(); }
      g.globalAlpha = 0.65;
      g.drawImage(r.colour.levels[0], ox + s.x * k, oy + s.y * k, s.width * k, s.height * k);
      g.restore();
    }
    const box = draft ?? rect;
    if (box) {
      g.strokeStyle = '#000'; g.lineWidth = 4; g.strokeRect(ox + box.x * k, oy + box.y * k, box.width * k, box.height * k);
      g.strokeStyle = '#ffd23f'; g.lineWidth = 2; g.strokeRect(ox + box.x * k, oy + box.y * k, box.width * k, box.height * k);
    }
    if (r && Number.isFinite(r.result.directorDeg)) {
      const area = rect ?? { x: 0, y: 0, width: frameSize.w, height: frameSize.h };
      const cx = ox + (area.x + area.width / 2) * k, cy = oy + (area.y + area.height / 2) * k;
      const half = 0.35 * Math.min(area.width, area.height) * k * Math.max(0.15, r.result.order2D);
      const a = (r.result.directorDeg * Math.PI) / 180;
      const table = orientationColourTable(), t = 3 * angleIndex(r.result.directorDeg);
      g.lineCap = 'round';
      g.strokeStyle = '#000'; g.lineWidth = 8;
      g.beginPath(); g.moveTo(cx - half * Math.cos(a), cy + half * Math.sin(a)); g.lineTo(cx + half * Math.cos(a), cy - half * Math.sin(a)); g.stroke();
      g.strokeStyle = `rgb(${table[t]},${table[t + 1]},${table[t + 2]})`; g.lineWidth = 5;
      g.beginPath(); g.moveTo(cx - half * Math.cos(a), cy + half * Math.sin(a)); g.lineTo(cx + half * Math.cos(a), cy - half * Math.sin(a)); g.stroke();
    }
  }, [reading, rect, draft, frameSize, showColours, frozen]);

  const toFrame = (e: React.PointerEvent) => {
    const c = overlay.current!, b = c.getBoundingClientRect();
    const { k, ox, oy } = fitOf(frameSize.w, frameSize.h, b.width, b.height);
    return { x: Math.min(frameSize.w, Math.max(0, (e.clientX - b.left - ox) / k)), y: Math.min(frameSize.h, Math.max(0, (e.clientY - b.top - oy) / k)) };
  };
  const dragStart = useRef<{ x: number; y: number } | null>(null);
  const onDown = (e: React.PointerEvent) => {
    if (!drawingRect || !frameSize.w) return;
    (e.target as Element).setPointerCapture(e.pointerId);
    dragStart.current = toFrame(e);
  };
  const onMove = (e: React.PointerEvent) => {
    const a = dragStart.current;
    if (!a) return;
    const b = toFrame(e);
    setDraft({ x: Math.min(a.x, b.x), y: Math.min(a.y, b.y), width: Math.abs(b.x - a.x), height: Math.abs(b.y - a.y) });
  };
  const onUp = () => {
    dragStart.current = null;
    if (draft && draft.width >= 8 && draft.height >= 8) { setRect({ x: Math.round(draft.x), y: Math.round(draft.y), width: Math.round(draft.width), height: Math.round(draft.height) }); setDrawingRect(false); }
    setDraft(null);
  };

  const freeze = async () => {
    const v = video.current;
    if (!v || !v.videoWidth) return;
    const c = document.createElement('canvas');
    c.width = v.videoWidth; c.height = v.videoHeight;
    c.getContext('2d')!.drawImage(v, 0, 0);
    const blob = await new Promise<Blob | null>((res) => c.toBlob(res, 'image/png'));
    if (!blob) { setReadoutError('The frame could not be captured; try again.'); return; }
    setFrozen({ url: URL.createObjectURL(blob), blob, width: c.width, height: c.height });
  };
  const unfreeze = () => { if (frozen) URL.revokeObjectURL(frozen.url); setFrozen(null); };
  const keep = async () => {
    if (!frozen) return;
    const stamp = new Date().toISOString().replace(/[-:]/g, '').replace('T', '-').slice(0, 15);
    const name = `camera-${stamp}.png`;
    setKeeping(true);
    try {
      await p.onKeep(new File([frozen.blob], name, { type: 'image/png' }));
      setKept((k) => [...k, name]);
      unfreeze();
    } finally { setKeeping(false); }
  };

  // Space freezes the live picture or goes back to it (not while typing in a field).
  const freezeRef = useRef({ freeze, unfreeze, frozen });
  freezeRef.current = { freeze, unfreeze, frozen };
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if (e.key !== ' ' || (e.target as HTMLElement).closest('input, textarea, select, button, [contenteditable]')) return;
      e.preventDefault();
      const x = freezeRef.current;
      if (x.frozen) x.unfreeze(); else void x.freeze();
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, []);

  const track = stream?.getVideoTracks()[0];
  const steps = frameSize.w ? sizeSteps(frameSize.w, frameSize.h) : [1, 2, 4];
  const r = reading?.result;
  const analysed = reading ? `${reading.plan.width} × ${reading.plan.height} px` : '';

  return (
    <main className="camera" aria-label="Microscope camera">
      <section className="camera-stage">
        <div className="camera-picture">
          <video ref={video} muted playsInline aria-label="Live camera picture" style={{ visibility: frozen ? 'hidden' : 'visible' }} />
          {frozen && <img src={frozen.url} alt="Frozen camera frame" className="camera-frozen" />}
          <canvas ref={overlay} className="camera-overlay" style={{ cursor: drawingRect ? 'crosshair' : 'default', touchAction: 'none' }}
            onPointerDown={onDown} onPointerMove={onMove} onPointerUp={onUp} onPointerCancel={onUp} aria-label="Live picture overlay" />
          {drawingRect && <span className="camera-hint">Drag a rectangle over the part to read</span>}
          {frozen && <span className="camera-hint">Frozen frame, {frozen.width} × {frozen.height} px: keep it as an image of the session, or go back to the live picture.</span>}
          {problem && <p className="camera-problem" role="alert">{problem}</p>}
        </div>
        <div className="toolbar" role="toolbar" aria-label="Camera">
          {!frozen ? <button className="primary" disabled={!stream} onClick={() => void freeze()} title="Shortcut: Space">Freeze frame</button>
            : <><button className="primary" disabled={keeping} onClick={() => void keep()}>Keep this frame</button><button onClick={unfreeze}>Back to live</button></>}
          <button className={drawingRect ? 'on' : ''} aria-pressed={drawingRect} disabled={!stream || !!frozen} onClick={() => setDrawingRect((d) => !d)}>{drawingRect ? 'Cancel rectangle' : 'Read a rectangle'}</button>
          {rect && <button className="quiet" onClick={() => setRect(null)}>Read the whole frame</button>}
          <label className="group"><input type="checkbox" checked={showColours} onChange={(e) => setShowColours(e.target.checked)} /> orientation colours</label>
          <label className="group"><input type="checkbox" checked={live} onChange={(e) => setLive(e.target.checked)} /> live readout</label>
          {kept.length > 0 && <span className="note" data-testid="kept-frames">Kept: {kept.join(', ')}</span>}
        </div>
      </section>

      <aside className="panel" aria-label="Camera settings and readout">
        <header className="camera-head">
          <h2>Microscope camera</h2>
          <button className="quiet" onClick={p.onClose}>Close the camera</button>
        </header>
        <label className="field">
          <span>Camera</span>
          <select value={deviceId} onChange={(e) => { setDeviceId(e.target.value); setRect(null); }} aria-label="Camera">
            {devices.length === 0 && <option value="">(asking the browser…)</option>}
            {devices.map((d, i) => <option key={d.deviceId || i} value={d.deviceId}>{d.label || `camera ${i + 1}`}</option>)}
          </select>
        </label>
        <label className="field">
          <span>Resolution asked</span>
          <select value={resolution} onChange={(e) => { setResolution(Number(e.target.value)); setRect(null); }} aria-label="Resolution">
            {RESOLUTIONS.map((r, i) => <option key={r.label} value={i}>{r.label}</option>)}
          </select>
        </label>
        <p className="note" data-testid="camera-size">{frameSize.w ? `The camera gives ${frameSize.w} × ${frameSize.h} px${track?.getSettings().frameRate ? ` at ${Math.round(track.getSettings().frameRate!)} frames/s` : ''}.` : 'Waiting for the camera…'}</p>
        <label className="field">
          <span>Readout size</span>
          <select value={step} onChange={(e) => setStep(Number(e.target.value))} aria-label="Readout size">
            {steps.map((s) => <option key={s} value={s}>{s === 1 ? 'full size' : `1/${s} size`}{frameSize.w ? ` (${Math.round(frameSize.w / s)} × ${Math.round(frameSize.h / s)})` : ''}</option>)}
          </select>
        </label>

        <section className="readout" aria-live="off">
          <h3>Live readout {rect ? 'of the rectangle' : 'of the whole frame'}</h3>
          {r ? (
            <table className="results" data-testid="live-readout" data-readings={readingCount} data-worker-ms={reading ? JSON.stringify(reading.timesMs) : undefined}>
              <tbody>
                <tr><th scope="row">Order S_2D</th><td data-testid="live-order">{f(r.order2D)}</td><td>95 %: {f(r.order2DCiLow)} – {f(r.order2DCiHigh)}</td></tr>
                <tr><th scope="row">Director</th><Undetermined why={r.notDetermined?.directorDeg} testId="live-director">{f(r.directorDeg)}</Undetermined>{!r.notDetermined?.directorDeg && <td>deg, CCW from +x</td>}</tr>
                <tr><th scope="row">Mean coherency</th><td>{f(r.coherencyMean)}</td><td>n {f(r.n)} px</td></tr>
                <tr><th scope="row">Readings</th><td data-testid="live-fps">{reading?.fps != null ? reading.fps.toFixed(1) : '–'}</td><td>per second, {LIVE_WORKERS} workers taking frames in turn</td></tr>
                <tr><th scope="row">Latency</th><td data-testid="live-latency">{reading?.latencyMs != null ? Math.round(reading.latencyMs) : '–'}</td><td>ms from frame to numbers</td></tr>
              </tbody>
            </table>
          ) : <p className="note">{stream ? (live ? 'Starting the readout…' : 'Live readout is off.') : 'No camera picture yet.'}</p>}
          {reading && (
            <p className="note" data-testid="live-basis">
              Analysed at {analysed}{reading.plan.step > 1 ? `: the frame reduced to 1/${reading.plan.step} size, so σ = ${p.sigmaPx} px here is ${p.sigmaPx * reading.plan.step} camera px` : ' (full size)'};
              texture scale σ {p.sigmaPx} px, weights {p.weighting}, 95 % interval from blocks of {BLOCK_CORRELATION_LENGTHS} correlation lengths. A kept frame is analysed at full size.
              The bar on the picture points along the director; it is longer the higher S_2D. Readings cannot come faster than the camera's frames.
            </p>
          )}
          {readoutError && <p className="note warn" role="status">{readoutError}</p>}
          {showColours && <ColourKey size={110} />}
        </section>
        <p className="caution" role="note">
          <strong>Eyes first.</strong> Turn the lamp down before you switch from the camera to the eyepieces: a brightness that suits the camera can dazzle. Your lab's rules come first.
        </p>
      </aside>
    </main>
  );
}
