/**
 * Colours for retardance maps: a sequential scale whose CIELAB lightness rises linearly from 18 to 94
 * (so equal steps in nm look like equal steps in brightness), with the hue moving from deep blue through
 * green to pale yellow so that neighbouring values stay distinguishable. Our own path through CIELAB. Where the
 * path leaves the sRGB gamut (the darkest blues and the palest yellows) the colour is clipped to it: lightness then
 * departs from the line by up to 2 L* but never falls (tests/report/retardanceColours.test.ts).
 */
import { labToSrgb8, type Lab } from './colourMap.ts';

/** (a*, b*) at the start, middle and end of the scale; L* is linear in between. */
const AB: [number, number][] = [[18, -52], [-38, 12], [-4, 62]];
const L0 = 18, L1 = 94;

let table: Uint8Array | null = null;

/** 256 sRGB8 colours (r, g, b per entry), entry 0 = the lowest retardance. */
export function retardanceColourTable(): Uint8Array {
  if (table) return table;
  const t = new Uint8Array(256 * 3);
  for (let k = 0; k < 256; k++) {
    const u = k / 255;
    const [p, q, w] = u < 0.5 ? [AB[0], AB[1], u / 0.5] : [AB[1], AB[2], (u - 0.5) / 0.5];
    const lab: Lab = [L0 + (L1 - L0) * u, p[0] + (q[0] - p[0]) * w, p[1] + (q[1] - p[1]) * w];
    t.set(labToSrgb8(lab), 3 * k);
  }
  table = t;
  return t;
}

/** Index into the table for a retardance in a range (clipped at both ends). */
export function retardanceIndex(nm: number, [lo, hi]: [number, number]): number {
  const u = (nm - lo) / (hi - lo);
  return Math.max(0, Math.min(255, Math.round(255 * (Number.isFinite(u) ? u : 0))));
}

/**
 * Colour-bar range for a field's retardance: 0 to the 99th percentile of the usable pixels, rounded up
 * to a whole 50 nm (at least 50 nm), so one bright outlier does not flatten the map.
 */
export function retardanceRange(retardanceNm: Float32Array, mask: Uint8Array): [number, number] {
  const v: number[] = [];
  const stride = Math.max(1, Math.floor(retardanceNm.length / 200_000));
  for (let i = 0; i < retardanceNm.length; i += stride) if (mask[i] && Number.isFinite(retardanceNm[i])) v.push(retardanceNm[i]);
  v.sort((a, b) => a - b);
  const top = v.length ? v[Math.floor(0.99 * (v.length - 1))] : 0;
  return [0, Math.max(50, Math.ceil(top / 50) * 50)];
}
