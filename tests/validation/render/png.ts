/** Writes a rendering's image(s) as PNG files, to look at a case (the validation run does this on request). */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { encodePng } from '../../../src/report/png.ts';
import type { Image } from '../../../src/image/types.ts';
import type { Rendering } from './scene.ts';

function pngOf(img: Image): Uint8Array {
  const n = img.width * img.height, c = img.channels, max = img.bitDepth === 16 ? 65535 : 255;
  const data = img.bitDepth === 16 ? new Uint16Array(n * c) : new Uint8Array(n * c);
  for (let i = 0; i < n; i++) for (let k = 0; k < c; k++) data[i * c + k] = Math.round(img.planes[k][i] * max);
  return encodePng({ width: img.width, height: img.height, channels: c, data });
}

/** Writes DIR/NAME.png (and NAME-B.png for a pair, NAME-S0.png ... for an angle series); returns the paths. */
export function writeRenderingPngs(r: Rendering, dir: string, name: string): string[] {
  const out = [join(dir, `${name}.png`)];
  writeFileSync(out[0], pngOf(r.image));
  if (r.imageB) { out.push(join(dir, `${name}-B.png`)); writeFileSync(out[1], pngOf(r.imageB)); }
  r.series?.forEach((img, k) => { const f = join(dir, `${name}-S${k}.png`); out.push(f); writeFileSync(f, pngOf(img)); });
  return out;
}
