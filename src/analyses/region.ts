import { InputError } from '../common/errors.ts';

/** A rectangle in pixel coordinates: x, y of the top-left pixel, width and height. */
export interface Rect { x: number; y: number; w: number; h: number }

/** Parses "x,y,w,h" (pixels). */
export function parseRect(text: string, what = 'region'): Rect {
  const v = text.split(',').map((s) => Number(s.trim()));
  if (v.length !== 4 || v.some((n) => !Number.isFinite(n))) {
    throw new InputError(`${what} "${text}" is not four numbers`, 'Write it as "x,y,w,h" in pixels');
  }
  const [x, y, w, h] = v;
  return { x, y, w, h };
}

/** Mask of a rectangle clipped to the image; an InputError if nothing of it lies inside. */
export function rectMask(r: Rect, width: number, height: number, what = 'region'): Uint8Array {
  const x0 = Math.max(0, Math.round(r.x)), y0 = Math.max(0, Math.round(r.y));
  const x1 = Math.min(width, Math.round(r.x + r.w)), y1 = Math.min(height, Math.round(r.y + r.h));
  if (r.w <= 0 || r.h <= 0 || x1 <= x0 || y1 <= y0) {
    throw new InputError(`${what} ${r.x},${r.y},${r.w},${r.h} lies outside the ${width}x${height} image`, 'Give a rectangle inside the image');
  }
  const m = new Uint8Array(width * height);
  for (let y = y0; y < y1; y++) m.fill(1, y * width + x0, y * width + x1);
  return m;
}
