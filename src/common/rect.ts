import { InputError } from './errors.ts';

/**
 * A rectangle in image pixels: `x`, `y` of the top-left pixel (x to the right, y down, the top-left pixel's centre
 * at 0,0), `width` and `height` in px. The one rectangle of the project: sample-free areas, regions, readout
 * rectangles, tiles' parts.
 */
export interface Rect { x: number; y: number; width: number; height: number }

/**
 * Parses "x,y,w,h": whole pixels, the corner at or right of and below 0,0, each side at least 1 px.
 * `what` names the rectangle in the message (an option such as "--sample-free", or a form field).
 * @throws InputError saying how to write it
 */
export function parseRect(text: string, what = 'rectangle'): Rect {
  const parts = text.split(',').map((s) => s.trim());
  const v = parts.map(Number);
  if (parts.length !== 4 || parts.some((p) => p === '') || v.some((n) => !Number.isInteger(n)) || v[0] < 0 || v[1] < 0 || v[2] < 1 || v[3] < 1) {
    throw new InputError(`${what} "${text}" is not x,y,w,h in whole pixels`, 'Give the top-left corner and then the width and height, e.g. "10,10,50,40"');
  }
  return { x: v[0], y: v[1], width: v[2], height: v[3] };
}

/** The rectangle as the command line and the forms write it: "x,y,w,h". */
export const rectText = (r: Rect): string => `${r.x},${r.y},${r.width},${r.height}`;

/** @throws InputError when the rectangle reaches outside a width x height image */
export function checkRectInside(r: Rect, width: number, height: number, what = 'rectangle'): void {
  if (r.x < 0 || r.y < 0 || r.x + r.width > width || r.y + r.height > height) {
    throw new InputError(`${what} ${rectText(r)} reaches outside the ${width}x${height} image`, 'Pick a rectangle inside the image');
  }
}

/**
 * Mask (1 inside) of a rectangle clipped to the image, its edges rounded to whole pixels (fractional rectangles,
 * such as a camera readout's region in analysed pixels, are allowed).
 * @throws InputError when nothing of it lies inside the image
 */
export function rectMask(r: Rect, width: number, height: number, what = 'region'): Uint8Array {
  const x0 = Math.max(0, Math.round(r.x)), y0 = Math.max(0, Math.round(r.y));
  const x1 = Math.min(width, Math.round(r.x + r.width)), y1 = Math.min(height, Math.round(r.y + r.height));
  if (r.width <= 0 || r.height <= 0 || x1 <= x0 || y1 <= y0) {
    throw new InputError(`${what} ${r.x},${r.y},${r.width},${r.height} lies outside the ${width}x${height} image`, 'Give a rectangle inside the image');
  }
  const m = new Uint8Array(width * height);
  for (let y = y0; y < y1; y++) m.fill(1, y * width + x0, y * width + x1);
  return m;
}
