/**
 * Rectangles on the image: a panel asks the viewer for one (the user drags it, Esc cancels) and shows the
 * rectangles its form holds (e.g. the sample-free area of a compensator reading). The page holds this state
 * between the panels and the viewer; rectangles are in image pixels, `x,y` the top-left pixel, as the
 * command line's `--sample-free x,y,w,h` takes them (src/common Rect).
 */
import { useCallback, useMemo, useRef, useState } from 'react';
import type { Rect } from '../../src/common/index.ts';

/** A rectangle being drawn: what to tell the user, and where the answer goes (null when cancelled). */
export interface RectRequest { hint: string; done(r: Rect | null): void }

/** A rectangle shown on the image with its label. */
export interface ViewerBox { rect: Rect; label: string }

/**
 * The rectangle drawn between two points in image coordinates (pixel centres at whole numbers, so pixel i covers
 * i - 0.5 .. i + 0.5), clipped to the image: every pixel the drag covers at least half of. Null when it covers
 * less than `minSide` pixels either way.
 */
export function rectBetween(a: { x: number; y: number }, b: { x: number; y: number }, width: number, height: number, minSide = 2): Rect | null {
  const clip = (v: number, hi: number) => Math.min(hi, Math.max(0, v));
  const x0 = clip(Math.round(Math.min(a.x, b.x) + 0.5), width), x1 = clip(Math.round(Math.max(a.x, b.x) + 0.5), width);
  const y0 = clip(Math.round(Math.min(a.y, b.y) + 0.5), height), y1 = clip(Math.round(Math.max(a.y, b.y) + 0.5), height);
  return x1 - x0 >= minSide && y1 - y0 >= minSide ? { x: x0, y: y0, width: x1 - x0, height: y1 - y0 } : null;
}


export function useImageRectangles() {
  const [request, setRequest] = useState<RectRequest | null>(null);
  const [boxes, setBoxes] = useState<ViewerBox[]>([]);
  const pending = useRef<RectRequest | null>(null);
  /** Asks the viewer for a rectangle; a request still open is answered with null first. */
  const drawRect = useCallback((hint: string) => new Promise<Rect | null>((resolve) => {
    pending.current?.done(null);
    const req: RectRequest = {
      hint,
      done: (r) => { if (pending.current === req) { pending.current = null; setRequest(null); } resolve(r); },
    };
    pending.current = req;
    setRequest(req);
  }), []);
  const cancel = useCallback(() => pending.current?.done(null), []);
  const viewer = useMemo(() => ({ rectRequest: request, boxes }), [request, boxes]);
  return { drawRect, showBoxes: setBoxes, cancel, viewer };
}
