/**
 * Draws the app icon (SVG and PNG at 192/512 px, plus a maskable 512 px version) from one design:
 * a ring in the orientation colours (each colour twice, since orientation repeats every 180 deg)
 * around three parallel bars on a dark slate square. Run: node bin/run-ts.mjs app/scripts/make-icons.ts
 */
import { writeFileSync, mkdirSync } from 'node:fs';
import { encode } from 'fast-png';
import { cyclicSrgb8, angleIndex } from '../../src/report/index.ts';

const OUT = new URL('../../public/icons/', import.meta.url);
mkdirSync(OUT, { recursive: true });
const table = cyclicSrgb8(256);
const BG = [0x23, 0x31, 0x3f];
const BAR = [0xf2, 0xf2, 0xf2];
const BAR_DEG = 30;
const colourAt = (deg: number) => { const k = 3 * angleIndex(deg); return [table[k], table[k + 1], table[k + 2]]; };
const hex = (c: number[]) => '#' + c.map((v) => v.toString(16).padStart(2, '0')).join('');

/** Design in a unit square: ring radii, bar half-length and half-width, bar offsets. */
const D = { rOut: 0.42, rIn: 0.31, barHalfLen: 0.2, barHalfW: 0.028, offsets: [-0.1, 0, 0.1], corner: 0.18 };

function svg(): string {
  const parts: string[] = [];
  const n = 72;
  for (let i = 0; i < n; i++) {
    const a0 = (i / n) * 2 * Math.PI, a1 = ((i + 1.02) / n) * 2 * Math.PI;
    const p = (r: number, a: number) => `${(0.5 + r * Math.cos(a)).toFixed(4)} ${(0.5 - r * Math.sin(a)).toFixed(4)}`;
    const c = colourAt(((i + 0.5) / n) * 360);
    parts.push(`<path d="M${p(D.rIn, a0)} L${p(D.rOut, a0)} A${D.rOut} ${D.rOut} 0 0 0 ${p(D.rOut, a1)} L${p(D.rIn, a1)} A${D.rIn} ${D.rIn} 0 0 1 ${p(D.rIn, a0)}Z" fill="${hex(c)}"/>`);
  }
  const a = (BAR_DEG * Math.PI) / 180, ux = Math.cos(a), uy = -Math.sin(a), nx = -uy, ny = ux;
  for (const o of D.offsets) {
    const cx = 0.5 + o * nx, cy = 0.5 + o * ny;
    parts.push(`<line x1="${(cx - D.barHalfLen * ux).toFixed(4)}" y1="${(cy - D.barHalfLen * uy).toFixed(4)}" x2="${(cx + D.barHalfLen * ux).toFixed(4)}" y2="${(cy + D.barHalfLen * uy).toFixed(4)}" stroke="${hex(BAR)}" stroke-width="${2 * D.barHalfW}" stroke-linecap="round"/>`);
  }
  return `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 1 1"><rect width="1" height="1" rx="${D.corner}" fill="${hex(BG)}"/>${parts.join('')}</svg>\n`;
}

function png(size: number, maskable: boolean): Uint8Array {
  const data = new Uint8Array(size * size * 4);
  const shrink = maskable ? 0.8 : 1; // maskable icons keep their design inside the central 80 %
  const a = (BAR_DEG * Math.PI) / 180, ux = Math.cos(a), uy = -Math.sin(a), nx = -uy, ny = ux;
  const ss = 4; // supersampling per axis
  for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) {
    const acc = [0, 0, 0, 0];
    for (let sy = 0; sy < ss; sy++) for (let sx = 0; sx < ss; sx++) {
      const u = (x + (sx + 0.5) / ss) / size, v = (y + (sy + 0.5) / ss) / size;
      const du = (u - 0.5) / shrink, dv = (v - 0.5) / shrink;
      let c: number[] | null = null;
      const cr = D.corner, qx = Math.max(Math.abs(u - 0.5) - (0.5 - cr), 0), qy = Math.max(Math.abs(v - 0.5) - (0.5 - cr), 0);
      if (maskable || Math.hypot(qx, qy) <= cr) c = BG;
      const r = Math.hypot(du, dv);
      if (r >= D.rIn && r <= D.rOut) c = colourAt((Math.atan2(-dv, du) * 180) / Math.PI);
      for (const o of D.offsets) {
        const px = du - o * nx, py = dv - o * ny;
        const along = Math.max(Math.abs(px * ux + py * uy) - D.barHalfLen, 0), across = px * nx + py * ny;
        if (Math.hypot(along, across) <= D.barHalfW) c = BAR;
      }
      if (c) { acc[0] += c[0]; acc[1] += c[1]; acc[2] += c[2]; acc[3] += 255; }
    }
    const k = ss * ss, o = 4 * (y * size + x);
    const alpha = acc[3] / k;
    data[o] = alpha ? Math.round((acc[0] / k) * (255 / alpha)) : 0;
    data[o + 1] = alpha ? Math.round((acc[1] / k) * (255 / alpha)) : 0;
    data[o + 2] = alpha ? Math.round((acc[2] / k) * (255 / alpha)) : 0;
    data[o + 3] = Math.round(alpha);
  }
  return encode({ width: size, height: size, data, channels: 4, depth: 8 });
}

writeFileSync(new URL('icon.svg', OUT), svg());
writeFileSync(new URL('icon-192.png', OUT), png(192, false));
writeFileSync(new URL('icon-512.png', OUT), png(512, false));
writeFileSync(new URL('icon-512-maskable.png', OUT), png(512, true));
console.log('icons written to public/icons/');
