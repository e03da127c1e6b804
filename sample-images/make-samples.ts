/**
 * Renders the Kestrel demo images (an invented scenario, see README.md) into sample-images/.
 * Run: npm run samples. Deterministic: the same files every time.
 */
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { CHANNEL, FIBRES, MICROMETER, PIXEL_SIZE_UM } from './scenario.ts';
import { blur, lic, smoothNoise, writePng } from './render.ts';
import { normalRandom as normal, seededRandom as seeded } from '../src/order/index.ts';
import { angleSetRetardanceNm, renderAngleSetPlate, renderPlateImages } from './plateScene.ts';

const here = dirname(fileURLToPath(import.meta.url));
const DEG = Math.PI / 180;

export interface ChannelPixel { inside: boolean; wall: boolean; s: number; directorRad: number; retardanceNm: number; texture: number }

/** The channel scene in its own frame (axis near +x), one value set per pixel. */
export function channelScene(): { width: number; height: number; at: (x: number, y: number) => ChannelPixel } {
  const { width: W, height: H, wallTop, wallBottom, coreSpreadDeg, skinSpreadDeg, retardanceNm } = CHANNEL;
  const angleNoise = smoothNoise(W, H, 4, 11);
  const top = (x: number) => wallTop[0] + ((wallTop[1] - wallTop[0]) * x) / (W - 1);
  const bottom = (x: number) => wallBottom[0] + ((wallBottom[1] - wallBottom[0]) * x) / (W - 1);
  const topAng = Math.atan2(-(wallTop[1] - wallTop[0]), W - 1), botAng = Math.atan2(-(wallBottom[1] - wallBottom[0]), W - 1);
  const smooth = (a: number, b: number, t: number) => { const u = Math.min(1, Math.max(0, (t - a) / (b - a))); return u * u * (3 - 2 * u); };
  const director = new Float32Array(W * H), sOf = new Float32Array(W * H).fill(NaN);
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
    const t = top(x), b = bottom(x);
    if (y <= t || y >= b) continue;
    const s = -1 + (2 * (y - t)) / (b - t);
    const flow = ((1 - s) / 2) * topAng + ((1 + s) / 2) * botAng;
    const spread = (coreSpreadDeg + (skinSpreadDeg - coreSpreadDeg) * smooth(0.45, 0.85, Math.abs(s))) * DEG;
    director[y * W + x] = flow + spread * angleNoise[y * W + x];
    sOf[y * W + x] = s;
  }
  const streaks = lic(director, W, H, 7, 12);
  return {
    width: W, height: H,
    at(x, y) {
      const xi = Math.min(W - 1, Math.max(0, Math.round(x))), yi = Math.min(H - 1, Math.max(0, Math.round(y)));
      const i = yi * W + xi;
      const inside = Number.isFinite(sOf[i]) && x >= 0 && y >= 0 && x <= W - 1 && y <= H - 1;
      const wall = !inside && (Math.abs(y - top(x)) < 6 || Math.abs(y - bottom(x)) < 6);
      const s = inside ? sOf[i] : NaN;
      const spread = inside ? (coreSpreadDeg + (skinSpreadDeg - coreSpreadDeg) * smooth(0.45, 0.85, Math.abs(s))) * DEG : 0;
      // Wrapped-normal director spread: local order <cos 2 phi> = exp(-2 sigma^2) sets the retardance.
      return { inside, wall, s, directorRad: director[i], retardanceNm: inside ? retardanceNm * Math.exp(-2 * spread * spread) : 0, texture: streaks[i] };
    },
  };
}

function textureImage(scene: ReturnType<typeof channelScene>): Float32Array {
  const { width: W, height: H } = scene;
  const g = normal(seeded(21));
  const out = new Float32Array(W * H);
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
    const p = scene.at(x, y);
    out[y * W + x] = (p.inside ? 0.55 + 2.6 * (p.texture - 0.5) : p.wall ? 0.08 : 0.3) + 0.01 * g();
  }
  return out;
}

function angleImages(scene: ReturnType<typeof channelScene>): Float32Array[] {
  const { width: W, height: H } = scene;
  const lambda = 546;
  return [0, 22.5, 45, 67.5].map((alphaDeg, k) => {
    const g = normal(seeded(31 + k));
    const out = new Float32Array(W * H);
    for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
      const p = scene.at(x, y);
      const gamma = angleSetRetardanceNm(p);
      const a = p.inside ? 0.9 * Math.sin(2 * (p.directorRad - alphaDeg * DEG)) ** 2 * Math.sin((Math.PI * gamma) / lambda) ** 2 : 0;
      out[y * W + x] = 0.04 + a + (p.wall ? 0.05 : 0) + 0.004 * g();
    }
    return out;
  });
}

function fibreImage(): Float32Array {
  const { width: W, height: H, list } = FIBRES;
  const g = normal(seeded(41));
  const out = new Float32Array(W * H);
  const erf = (z: number) => { // Abramowitz & Stegun 7.1.26
    const t = 1 / (1 + 0.3275911 * Math.abs(z));
    const y = 1 - ((((1.061405429 * t - 1.453152027) * t + 1.421413741) * t - 0.284496736) * t + 0.254829592) * t * Math.exp(-z * z);
    return z >= 0 ? y : -y;
  };
  const psf = 1.2;
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
    const lamp = 0.82 + 0.08 * (x / W) - 0.25 * ((y - H / 2) / H) ** 2 - 0.1 * ((x - W / 2) / W) ** 2;
    let t = 1;
    for (const f of list) {
      const a = f.angleDeg * DEG, ux = Math.cos(a), uy = -Math.sin(a);
      const along = (x - f.x0) * ux + (y - f.y0) * uy, across = -(x - f.x0) * uy + (y - f.y0) * ux;
      const dPx = (f.diameterUm + (f.taperUmPerMm * along * PIXEL_SIZE_UM) / 1000) / PIXEL_SIZE_UM;
      const inside = 0.5 * (erf((dPx / 2 - Math.abs(across)) / (Math.SQRT2 * psf)) + 1);
      t *= 1 - 0.55 * inside;
    }
    out[y * W + x] = lamp * t + 0.008 * g();
  }
  return out;
}

function micrometerImage(): Float32Array {
  const { width: W, height: H, divisionUm, tiltDeg } = MICROMETER;
  const period = divisionUm / PIXEL_SIZE_UM, a = tiltDeg * DEG;
  const g = normal(seeded(51));
  const sigma = 3 / 2.3548; // lines of 3 px FWHM
  const out = new Float32Array(W * H);
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
    const u = (x - W / 2) * Math.cos(a) - (y - H / 2) * Math.sin(a), v = (x - W / 2) * Math.sin(a) + (y - H / 2) * Math.cos(a);
    const m = Math.round(u / period), d = u - m * period;
    const len = m % 10 === 0 ? 110 : m % 5 === 0 ? 85 : 60;
    const onTick = Math.abs(v) < len && Math.abs(m * period) < 0.45 * W;
    const line = onTick ? Math.exp(-0.5 * (d / sigma) ** 2) : 0;
    out[y * W + x] = 0.85 - 0.6 * line + 0.01 * g();
  }
  return blur(out, W, H, 0.6);
}

async function main() {
  const scene = channelScene();
  const { width: W, height: H } = scene;
  writePng(join(here, 'kestrel-channel-texture.png'), W, H, [textureImage(scene)], 8);
  angleImages(scene).forEach((img, k) => writePng(join(here, `kestrel-angle-${['00.0', '22.5', '45.0', '67.5'][k]}deg.png`), W, H, [img], 16));
  await renderPlateImages(scene, here);
  renderAngleSetPlate(scene, here);
  writePng(join(here, 'kestrel-fibres.png'), FIBRES.width, FIBRES.height, [fibreImage()], 16);
  writePng(join(here, 'kestrel-micrometer.png'), MICROMETER.width, MICROMETER.height, [micrometerImage()], 16);
  console.log(`demo images written to ${here}`);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) await main();
