import type { Vec3 } from './colorimetry.ts';

/**
 * A 3x5 pixel font for labels burnt into exported pictures (chart numbers and title), so that a PNG
 * reads on its own without a font library. Upper case only: lower-case letters are drawn as capitals.
 * Each glyph is five rows, top to bottom, of three bits (4 = left column, 1 = right column).
 */
const GLYPHS: Record<string, number[]> = {
  '0': [7, 5, 5, 5, 7], '1': [2, 6, 2, 2, 7], '2': [7, 1, 7, 4, 7], '3': [7, 1, 7, 1, 7], '4': [5, 5, 7, 1, 1],
  '5': [7, 4, 7, 1, 7], '6': [7, 4, 7, 5, 7], '7': [7, 1, 1, 1, 1], '8': [7, 5, 7, 5, 7], '9': [7, 5, 7, 1, 7],
  A: [2, 5, 7, 5, 5], B: [6, 5, 6, 5, 6], C: [3, 4, 4, 4, 3], D: [6, 5, 5, 5, 6], E: [7, 4, 6, 4, 7], F: [7, 4, 6, 4, 4],
  G: [3, 4, 5, 5, 3], H: [5, 5, 7, 5, 5], I: [7, 2, 2, 2, 7], J: [1, 1, 1, 5, 2], K: [5, 5, 6, 5, 5], L: [4, 4, 4, 4, 7],
  M: [5, 7, 7, 5, 5], N: [6, 5, 5, 5, 5], O: [2, 5, 5, 5, 2], P: [6, 5, 6, 4, 4], Q: [2, 5, 5, 6, 3], R: [6, 5, 6, 5, 5],
  S: [3, 4, 2, 1, 6], T: [7, 2, 2, 2, 2], U: [5, 5, 5, 5, 7], V: [5, 5, 5, 5, 2], W: [5, 5, 7, 7, 5], X: [5, 5, 2, 5, 5],
  Y: [5, 5, 2, 2, 2], Z: [7, 1, 2, 4, 7],
  ' ': [0, 0, 0, 0, 0], '/': [1, 1, 2, 4, 4], '-': [0, 0, 7, 0, 0], ':': [0, 2, 0, 2, 0], '.': [0, 0, 0, 0, 2],
  ',': [0, 0, 0, 2, 4], '(': [1, 2, 2, 2, 1], ')': [4, 2, 2, 2, 4], '+': [0, 2, 7, 2, 0], '=': [0, 7, 0, 7, 0],
  '?': [7, 1, 2, 0, 2],
};

/** Height of a line of text, px, at a scale (5 rows of glyph). */
export const textHeightPx = (scale: number): number => 5 * scale;

/** Width of a text, px, at a scale: 3 columns per glyph and one column of space between glyphs. */
export const textWidthPx = (text: string, scale: number): number => (text.length > 0 ? (4 * text.length - 1) * scale : 0);

/**
 * Draws text into an RGB byte buffer (row-major, 3 bytes per pixel) with its top-left corner at (x0, y0);
 * pixels outside the buffer are skipped. Characters without a glyph are drawn as "?".
 */
export function drawText(data: Uint8Array, width: number, height: number, x0: number, y0: number, text: string, scale: number, colour: Vec3): void {
  const s = Math.max(1, Math.round(scale));
  [...text.toUpperCase()].forEach((ch, k) => {
    const rows = GLYPHS[ch] ?? GLYPHS['?'];
    for (let r = 0; r < 5; r++) for (let c = 0; c < 3; c++) {
      if (!(rows[r] & (4 >> c))) continue;
      for (let dy = 0; dy < s; dy++) for (let dx = 0; dx < s; dx++) {
        const x = x0 + (4 * k + c) * s + dx, y = y0 + r * s + dy;
        if (x < 0 || y < 0 || x >= width || y >= height) continue;
        const i = 3 * (y * width + x);
        data[i] = colour[0]; data[i + 1] = colour[1]; data[i + 2] = colour[2];
      }
    }
  });
}
