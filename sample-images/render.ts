/**
 * Rendering helpers for the demo images: seeded noise, smoothed random fields, line-integral
 * convolution for rod textures, and PNG writing.
 */
import { seededRandom, normalRandom } from '../src/order/index.ts';
import { encode } from 'fast-png';
import { writeFileSync } from 'node:fs';

/** Separable Gaussian blur (reflecting borders), in place. */
export function blur(data: Float32Array, width: number, height: number, sigma: number): Float32Array {
  const r = Math.ceil(3 * sigma);
  const k = Float64Array.from({ length: 2 * r + 1 }, (_, i) => Math.exp(-0.5 * ((i - r) / sigma) ** 2));
  const ks = k.reduce((a, b) => a + b, 0);
  for (let i = 0; i < k.length; i++) k[i] /= ks;
  const tmp = new Float32Array(data.length);
  const refl = (i: number, n: number) => (i < 0 ? -i - 1 : i >= n ? 2 * n - i - 1 : i);
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) {
    let s = 0;
    for (let j = -r; j <= r; j++) s += k[j + r] * data[y * width + refl(x + j, width)];
    tmp[y * width + x] = s;
  }
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) {
    let s = 0;
    for (let j = -r; j <= r; j++) s += k[j + r] * tmp[refl(y + j, height) * width + x];
    data[y * width + x] = s;
  }
  return data;
}

/** Zero-mean, unit-variance random field with correlation length sigma (smoothed white noise). */
export function smoothNoise(width: number, height: number, sigma: number, seed: number): Float32Array {
  const g = normalRandom(seededRandom(seed));
  const d = Float32Array.from({ length: width * height }, g);
  blur(d, width, height, sigma);
  let m = 0, v = 0;
  for (const x of d) m += x;
  m /= d.length;
  for (const x of d) v += (x - m) ** 2;
  const sd = Math.sqrt(v / d.length);
  return d.map((x) => (x - m) / sd);
}

/**
 * Line-integral convolution: white noise averaged along the local direction (radians, CCW on screen)
 * over +-halfLength px, giving streaks that follow the orientation field.
 */
export function lic(angle: Float32Array, width: number, height: number, halfLength: number, seed: number): Float32Array {
  const rand = seededRandom(seed);
  const noise = Float32Array.from({ length: width * height }, () => rand());
  const out = new Float32Array(width * height);
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) {
    const a = angle[y * width + x];
    const dx = Math.cos(a), dy = -Math.sin(a); // y down on screen
    let s = 0, n = 0;
    for (let t = -halfLength; t <= halfLength; t++) {
      const xi = Math.round(x + t * dx), yi = Math.round(y + t * dy);
      if (xi < 0 || yi < 0 || xi >= width || yi >= height) continue;
      s += noise[yi * width + xi]; n++;
    }
    out[y * width + x] = s / n;
  }
  return out;
}

/** Writes grey (1 plane) or RGB (3 planes) values in [0, 1] as an 8- or 16-bit PNG. */
export function writePng(path: string, width: number, height: number, planes: Float32Array[], bitDepth: 8 | 16): void {
  const ch = planes.length;
  const max = bitDepth === 16 ? 65535 : 255;
  const data = bitDepth === 16 ? new Uint16Array(width * height * ch) : new Uint8Array(width * height * ch);
  for (let i = 0; i < width * height; i++) {
    for (let c = 0; c < ch; c++) data[i * ch + c] = Math.round(Math.min(1, Math.max(0, planes[c][i])) * max);
  }
  writeFileSync(path, encode({ width, height, data, channels: ch, depth: bitDepth }));
}
