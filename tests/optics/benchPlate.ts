/**
 * Speed of the plate reader on a 12-megapixel image (4000 x 3000), for `npm run bench`: a smooth synthetic
 * orientation/retardance field rendered by the forward model (precomputed colour per lookup entry), with
 * sensor noise, read with the default options. Run: node bin/run-ts.mjs tests/optics/benchPlate.ts
 */
import { makeImage, type Image } from '../../src/image/types.ts';
import { buildPlateLookup, colourModel, readPlate, srgbEncode } from '../../src/optics/index.ts';
import { seededRandom } from '../../src/order/random.ts';

/** The bench's compensator image (8-bit sRGB codes), width x height. */
export function benchPlateImage(width = 4000, height = 3000): Image {
  const model = colourModel({});
  const lut = buildPlateLookup(model, { fullRange: true });
  const nR = lut.retardancesNm.length, nA = lut.anglesDeg.length;
  const planes = [new Float32Array(width * height), new Float32Array(width * height), new Float32Array(width * height)];
  const rand = seededRandom(42);
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) {
    // Orientation sweeping across the frame, retardance rising from 0 to 600 nm down it.
    const j = Math.floor(((x / width) * 0.999) * nA), k = Math.min(nR - 1, Math.round((600 * y) / height / 2));
    const o = 3 * (j * nR + k), i = y * width + x;
    for (let c = 0; c < 3; c++) {
      const v = srgbEncode(Math.min(1, Math.max(0, 0.75 * lut.linearRgb[o + c]))) + 0.005 * (rand() + rand() + rand() - 1.5);
      planes[c][i] = Math.round(255 * Math.min(1, Math.max(0, v))) / 255;
    }
  }
  return makeImage({ width, height, channels: 3, planes, bitDepth: 8, encoding: 'srgb', source: { name: 'bench-12MP' } });
}

export async function benchPlateRead(width = 4000, height = 3000): Promise<{ pixels: number; seconds: number; cells: number }> {
  const img = benchPlateImage(width, height);
  const t0 = performance.now();
  const r = readPlate(img, { camera: { gains: [1, 1, 1], exposure: 0.75 } });
  const seconds = (performance.now() - t0) / 1000;
  return { pixels: width * height, seconds, cells: r.cellsMatched };
}

// Run directly (not when bundled into another file, whose own name is then argv[1]).
if (process.argv[1]?.endsWith('/benchPlate.ts')) {
  const r = await benchPlateRead();
  console.log(`plate read ${(r.pixels / 1e6).toFixed(1)} MP: ${r.seconds.toFixed(2)} s (${r.cells} colour cells searched)`);
}
