/**
 * The image viewer: a canvas with zoom (wheel, pinch-free buttons, keys + - 0) and pan (drag), the
 * orientation picture laid over the image, the two channel walls, which can be drawn by dragging
 * and adjusted by dragging their ends, and rectangles a panel asks for (drawn by dragging, Esc cancels) or
 * shows. Coordinates follow docs/methods.md §1.1: image pixels, x right, y down, origin at the centre of the
 * top-left pixel.
 */
import { useCallback, useEffect, useImperativeHandle, useRef, useState, type Ref } from 'react';
import type { Channel, Segment } from '../../src/channel/index.ts';
import type { Glyph } from '../worker/protocol.ts';
import { orientationColourTable, angleIndex } from '../../src/report/index.ts';
import { STATION_COLOUR, type StationDrawing } from './stationMarks.ts';
import { rectBetween, type RectRequest, type ViewerBox } from './imageRectangles.ts';
import type { Rect } from '../../src/common/index.ts';

/**
 * A picture to draw: `levels[0]` at full picture size, each further level half the one before (so
 * drawing a zoomed-out view copies few pixels); `scale` = image pixels per full-level pixel.
 */
export interface Layer { levels: ImageBitmap[]; width: number; height: number; scale: number }

export type OverlayMode = 'none' | 'colour' | 'coherency' | 'glyphs' | 'retardance';

/** A line drawn over the image in image pixels (found fibre edges, station widths), with its colour. */
export interface Mark { x1: number; y1: number; x2: number; y2: number; colour: string }

export interface ViewerHandle { zoomBy(f: number): void; fit(): void }

interface Props {
  image: Layer | null;
  imageWidth: number;
  imageHeight: number;
  colour: Layer | null;
  coherency: Layer | null;
  /** Retardance picture of an optical field, for mode 'retardance'. */
  retardance?: Layer | null;
  glyphs: Glyph[];
  /** Lines over the image, drawn in every mode. */
  marks?: Mark[];
  mode: OverlayMode;
  opacity: number;
  walls: Channel | null;
  /** A profile's station boundaries and numbers (drawn when the profile has more than one station). */
  stations?: StationDrawing | null;
  drawing: boolean;
  /** A rectangle a panel asked for: dragging draws it (before anything else), Esc cancels. */
  rectRequest?: RectRequest | null;
  /** Rectangles shown on the image with their labels. */
  boxes?: ViewerBox[];
  onWalls(channel: Channel): void;
  onDrawingDone(): void;
  handle?: Ref<ViewerHandle>;
}

interface View { scale: number; tx: number; ty: number }

const WALL_COLOURS = ['#f2f2f2', '#ffd23f'];
const BOX_COLOUR = '#4fd1ff';

export function Viewer(p: Props) {
  const wrap = useRef<HTMLDivElement>(null);
  const canvas = useRef<HTMLCanvasElement>(null);
  const [size, setSize] = useState({ w: 300, h: 200 });
  const [view, setView] = useState<View>({ scale: 1, tx: 0, ty: 0 });
  const [draft, setDraft] = useState<Segment[]>([]);
  const drag = useRef<null | { kind: 'pan'; x: number; y: number; view: View } | { kind: 'draw'; seg: Segment } | { kind: 'end'; wall: 0 | 1; end: 1 | 2 }
    | { kind: 'rect'; x: number; y: number }>(null);
  const [rectDraft, setRectDraft] = useState<Rect | null>(null);
  const rectRequest = p.rectRequest ?? null;
  const [cursor, setCursor] = useState<{ x: number; y: number } | null>(null);

  const fit = useCallback(() => {
    if (!p.imageWidth) return;
    const s = Math.min(size.w / p.imageWidth, size.h / p.imageHeight) * 0.96;
    setView({ scale: s, tx: (size.w - p.imageWidth * s) / 2, ty: (size.h - p.imageHeight * s) / 2 });
  }, [p.imageWidth, p.imageHeight, size.w, size.h]);

  const zoomAt = useCallback((f: number, sx: number, sy: number) => {
    setView((v) => {
      const scale = Math.min(64, Math.max(0.01, v.scale * f));
      const k = scale / v.scale;
      return { scale, tx: sx - (sx - v.tx) * k, ty: sy - (sy - v.ty) * k };
    });
  }, []);

  useImperativeHandle(p.handle, () => ({ zoomBy: (f) => zoomAt(f, size.w / 2, size.h / 2), fit }), [zoomAt, fit, size]);

  useEffect(() => {
    const el = wrap.current;
    if (!el) return;
    const ro = new ResizeObserver(() => setSize({ w: el.clientWidth, h: el.clientHeight }));
    ro.observe(el);
    return () => ro.disconnect();
  }, []);

  // Fit when a new image (size) arrives or the viewer is resized a lot.
  useEffect(() => { fit(); }, [fit]);
  useEffect(() => { if (!p.drawing) setDraft([]); }, [p.drawing]);
  // A rectangle asked for: the viewer comes into view (on a narrow screen it may be above the panel that asked), Esc cancels.
  useEffect(() => {
    setRectDraft(null);
    if (!rectRequest) return;
    wrap.current?.scrollIntoView?.({ block: 'nearest' });
    const onKey = (e: KeyboardEvent) => { if (e.key === 'Escape') rectRequest.done(null); };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [rectRequest]);

  const toImage = (sx: number, sy: number) => ({ x: (sx - view.tx) / view.scale - 0.5, y: (sy - view.ty) / view.scale - 0.5 });
  const toScreen = (x: number, y: number) => ({ x: view.tx + (x + 0.5) * view.scale, y: view.ty + (y + 0.5) * view.scale });

  // Drawing.
  useEffect(() => {
    const c = canvas.current;
    if (!c) return;
    const dpr = window.devicePixelRatio || 1;
    c.width = Math.round(size.w * dpr); c.height = Math.round(size.h * dpr);
    const g = c.getContext('2d')!;
    g.setTransform(dpr, 0, 0, dpr, 0, 0);
    g.fillStyle = '#1d1f22'; g.fillRect(0, 0, size.w, size.h);
    const drawLayer = (l: Layer | null, alpha: number) => {
      if (!l) return;
      // Coarsest level that still has at least one picture pixel per device pixel.
      const devicePerPicture = view.scale * l.scale * dpr;
      const level = Math.max(0, Math.min(l.levels.length - 1, Math.floor(Math.log2(1 / devicePerPicture))));
      // A picture replaced a moment ago may already be closed (width 0): skip it until the new one is drawn.
      if (!l.levels[level].width) return;
      g.globalAlpha = alpha;
      g.imageSmoothingEnabled = view.scale < 1;
      g.drawImage(l.levels[level], view.tx, view.ty, l.width * l.scale * view.scale, l.height * l.scale * view.scale);
      g.globalAlpha = 1;
    };
    drawLayer(p.image, 1);
    if (p.mode === 'colour') drawLayer(p.colour, p.opacity);
    if (p.mode === 'coherency') drawLayer(p.coherency, p.opacity);
    if (p.mode === 'retardance') drawLayer(p.retardance ?? null, p.opacity);
    if (p.mode === 'glyphs' && p.glyphs.length) {
      const table = orientationColourTable();
      const cell = p.glyphs.length > 1 ? Math.hypot(p.glyphs[1].x - p.glyphs[0].x, p.glyphs[1].y - p.glyphs[0].y) || 8 : 8;
      g.lineCap = 'round';
      for (const gl of p.glyphs) {
        const c0 = toScreen(gl.x, gl.y), half = 0.45 * cell * view.scale * Math.max(0.25, gl.order2D);
        const a = (gl.angleDeg * Math.PI) / 180;
        // CCW on screen with y down: screen dy = -sin.
        const dx = half * Math.cos(a), dy = -half * Math.sin(a);
        const k = 3 * angleIndex(gl.angleDeg);
        g.strokeStyle = `rgba(${table[k]},${table[k + 1]},${table[k + 2]},${p.opacity})`;
        g.lineWidth = Math.max(1.5, Math.min(4, cell * view.scale * 0.12));
        g.beginPath(); g.moveTo(c0.x - dx, c0.y - dy); g.lineTo(c0.x + dx, c0.y + dy); g.stroke();
      }
    }
    if (p.marks?.length) {
      g.lineCap = 'round';
      for (const m of p.marks) {
        const a = toScreen(m.x1, m.y1), b = toScreen(m.x2, m.y2);
        g.strokeStyle = 'rgba(0,0,0,0.7)'; g.lineWidth = 3.5; g.beginPath(); g.moveTo(a.x, a.y); g.lineTo(b.x, b.y); g.stroke();
        g.strokeStyle = m.colour; g.lineWidth = 1.75; g.beginPath(); g.moveTo(a.x, a.y); g.lineTo(b.x, b.y); g.stroke();
      }
    }
    if (p.stations && !p.drawing) {
      g.lineCap = 'butt';
      g.setLineDash([10, 5]);
      for (const b of p.stations.boundaries) {
        const a = toScreen(b.x1, b.y1), c = toScreen(b.x2, b.y2);
        g.strokeStyle = 'rgba(0,0,0,0.75)'; g.lineWidth = 4.5; g.beginPath(); g.moveTo(a.x, a.y); g.lineTo(c.x, c.y); g.stroke();
        g.strokeStyle = STATION_COLOUR; g.lineWidth = 2.5; g.beginPath(); g.moveTo(a.x, a.y); g.lineTo(c.x, c.y); g.stroke();
      }
      g.setLineDash([]);
      g.font = '600 13px system-ui, sans-serif';
      for (const l of p.stations.labels) {
        const q = toScreen(l.x, l.y), text = `station ${l.text}`, tw = g.measureText(text).width;
        g.fillStyle = 'rgba(0,0,0,0.8)'; g.fillRect(q.x - tw / 2 - 5, q.y - 10, tw + 10, 19);
        g.fillStyle = STATION_COLOUR; g.fillText(text, q.x - tw / 2, q.y + 4);
      }
    }
    const segs = p.drawing ? draft : p.walls?.walls ?? [];
    segs.forEach((s, i) => {
      const a = toScreen(s.x1, s.y1), b = toScreen(s.x2, s.y2);
      g.strokeStyle = '#000'; g.lineWidth = 5; g.beginPath(); g.moveTo(a.x, a.y); g.lineTo(b.x, b.y); g.stroke();
      g.strokeStyle = WALL_COLOURS[i]; g.lineWidth = 2.5; g.beginPath(); g.moveTo(a.x, a.y); g.lineTo(b.x, b.y); g.stroke();
      for (const e of [a, b]) { g.fillStyle = WALL_COLOURS[i]; g.beginPath(); g.arc(e.x, e.y, 6, 0, 2 * Math.PI); g.fill(); g.strokeStyle = '#000'; g.lineWidth = 1.5; g.stroke(); }
      const m = { x: (a.x + b.x) / 2, y: (a.y + b.y) / 2 };
      const label = i === 0 ? 'first wall, s = −1' : 'second wall, s = +1';
      g.font = '600 13px system-ui, sans-serif';
      const tw = g.measureText(label).width;
      g.fillStyle = 'rgba(0,0,0,0.8)'; g.fillRect(m.x - tw / 2 - 5, m.y - 24, tw + 10, 19);
      g.fillStyle = WALL_COLOURS[i]; g.fillText(label, m.x - tw / 2, m.y - 10);
    });
    const shownBoxes = [...(rectRequest ? [] : p.boxes ?? []), ...(rectDraft ? [{ rect: rectDraft, label: `${rectDraft.width} × ${rectDraft.height} px` }] : [])];
    for (const b of shownBoxes) {
      const a = toScreen(b.rect.x - 0.5, b.rect.y - 0.5), w = b.rect.width * view.scale, h = b.rect.height * view.scale;
      g.setLineDash([8, 4]);
      g.strokeStyle = '#000'; g.lineWidth = 4; g.strokeRect(a.x, a.y, w, h);
      g.strokeStyle = BOX_COLOUR; g.lineWidth = 2; g.strokeRect(a.x, a.y, w, h);
      g.setLineDash([]);
      g.font = '600 13px system-ui, sans-serif';
      const tw = g.measureText(b.label).width;
      const ly = a.y > 22 ? a.y - 5 : a.y + h + 17;
      g.fillStyle = 'rgba(0,0,0,0.8)'; g.fillRect(a.x - 1, ly - 14, tw + 10, 19);
      g.fillStyle = BOX_COLOUR; g.fillText(b.label, a.x + 4, ly);
    }
  }, [size, view, p.image, p.colour, p.coherency, p.retardance, p.glyphs, p.marks, p.mode, p.opacity, p.walls, p.stations, p.drawing, draft, p.boxes, rectDraft, rectRequest]);

  // Whether what the mode shows has arrived (pictures and glyphs can follow the numbers).
  const overlayReady = p.mode === 'none' || (p.mode === 'colour' ? !!p.colour : p.mode === 'coherency' ? !!p.coherency : p.mode === 'retardance' ? !!p.retardance : p.glyphs.length > 0);

  const local = (e: React.PointerEvent | React.WheelEvent) => {
    const r = canvas.current!.getBoundingClientRect();
    return { x: e.clientX - r.left, y: e.clientY - r.top };
  };

  const hitEnd = (sx: number, sy: number): { wall: 0 | 1; end: 1 | 2 } | null => {
    if (!p.walls || p.drawing) return null;
    for (const wall of [0, 1] as const) for (const end of [1, 2] as const) {
      const s = p.walls.walls[wall];
      const q = toScreen(end === 1 ? s.x1 : s.x2, end === 1 ? s.y1 : s.y2);
      if (Math.hypot(q.x - sx, q.y - sy) < 12) return { wall, end };
    }
    return null;
  };

  const onDown = (e: React.PointerEvent) => {
    const l = local(e);
    (e.target as Element).setPointerCapture(e.pointerId);
    if (rectRequest) {
      const q = toImage(l.x, l.y);
      drag.current = { kind: 'rect', x: q.x, y: q.y };
      return;
    }
    const hit = hitEnd(l.x, l.y);
    if (hit) { drag.current = { kind: 'end', ...hit }; return; }
    if (p.drawing && draft.length < 2) {
      const q = toImage(l.x, l.y);
      const seg = { x1: q.x, y1: q.y, x2: q.x, y2: q.y };
      drag.current = { kind: 'draw', seg };
      setDraft((d) => [...d, seg]);
      return;
    }
    drag.current = { kind: 'pan', x: l.x, y: l.y, view };
  };

  const clampX = (x: number) => Math.min(p.imageWidth - 0.5, Math.max(-0.5, x));
  const clampY = (y: number) => Math.min(p.imageHeight - 0.5, Math.max(-0.5, y));

  const onMove = (e: React.PointerEvent) => {
    const l = local(e);
    const q = toImage(l.x, l.y);
    setCursor(q.x >= -0.5 && q.y >= -0.5 && q.x <= p.imageWidth - 0.5 && q.y <= p.imageHeight - 0.5 ? q : null);
    const d = drag.current;
    if (!d) return;
    if (d.kind === 'pan') setView({ ...d.view, tx: d.view.tx + l.x - d.x, ty: d.view.ty + l.y - d.y });
    if (d.kind === 'rect') setRectDraft(rectBetween(d, q, p.imageWidth, p.imageHeight, 1));
    if (d.kind === 'draw') {
      const seg = { ...d.seg, x2: clampX(q.x), y2: clampY(q.y) };
      d.seg = seg;
      setDraft((dr) => [...dr.slice(0, -1), seg]);
    }
    if (d.kind === 'end' && p.walls) {
      const walls = p.walls.walls.map((s) => ({ ...s })) as [Segment, Segment];
      const s = walls[d.wall];
      if (d.end === 1) { s.x1 = clampX(q.x); s.y1 = clampY(q.y); } else { s.x2 = clampX(q.x); s.y2 = clampY(q.y); }
      p.onWalls({ walls });
    }
  };

  const onUp = (e: React.PointerEvent) => {
    const d = drag.current;
    drag.current = null;
    if (d?.kind === 'rect') {
      const l = local(e);
      const r = rectBetween(d, toImage(l.x, l.y), p.imageWidth, p.imageHeight);
      setRectDraft(null);
      // A click without a drag leaves the request open.
      if (r && rectRequest) rectRequest.done(r);
      return;
    }
    if (d?.kind === 'draw') {
      const short = Math.hypot(d.seg.x2 - d.seg.x1, d.seg.y2 - d.seg.y1) < 3;
      const next = short ? draft.slice(0, -1) : draft;
      setDraft(next);
      if (next.length === 2) {
        p.onWalls({ walls: [round(next[0]), round(next[1])] });
        p.onDrawingDone();
      }
    }
  };

  const onWheel = (e: React.WheelEvent) => {
    const l = local(e);
    zoomAt(Math.exp(-e.deltaY * 0.0015), l.x, l.y);
  };

  return (
    <div className="viewer" ref={wrap} data-overlay={overlayReady ? p.mode : 'waiting'}>
      <canvas
        ref={canvas}
        style={{ width: size.w, height: size.h, cursor: p.drawing || rectRequest ? 'crosshair' : 'grab', touchAction: 'none' }}
        onPointerDown={onDown} onPointerMove={onMove} onPointerUp={onUp} onPointerCancel={onUp}
        onPointerLeave={() => setCursor(null)} onWheel={onWheel}
        aria-label="image viewer"
      />
      <div className="viewer-status" aria-live="polite">
        {rectRequest ? <span className="hint-strong" data-testid="rect-hint">{rectRequest.hint} <button className="small" onClick={() => rectRequest.done(null)}>Cancel</button></span>
          : p.drawing ? <span className="hint-strong">{draft.length === 0 ? 'Drag along the first wall (s = −1)' : draft.length === 1 ? 'Now drag along the second wall (s = +1)' : ''}</span> : null}
        <span>{cursor ? `x ${cursor.x.toFixed(0)}, y ${cursor.y.toFixed(0)} px` : ' '}</span>
        <span>zoom {(view.scale * 100).toFixed(0)} %</span>
      </div>
    </div>
  );
}

const r1 = (v: number) => Math.round(v * 10) / 10;
const round = (s: Segment): Segment => ({ x1: r1(s.x1), y1: r1(s.y1), x2: r1(s.x2), y2: r1(s.y2) });
