import { KernelArena, loadedTensorKernel } from '../wasm/index.ts';

/**
 * Interleaved samples (as decoders return them) to one Float32Array plane per colour channel.
 * Integer data are divided by the largest code (255 or 65535) so they lie in [0, 1]; float data
 * are copied as stored.
 */

type Samples = ArrayLike<number>;

/** Code-to-value tables, so each sample costs one lookup; built once per bit depth. */
const unitTables = new Map<number, Float32Array>();

/** code / maxCode as float32, by code (maxCode 255 or 65535, or 2^depth - 1 for PNG's lower depths). */
export function unitTable(maxCode: number): Float32Array {
  let table = unitTables.get(maxCode);
  if (!table) {
    table = new Float32Array(maxCode + 1);
    for (let v = 0; v <= maxCode; v++) table[v] = v / maxCode;
    unitTables.set(maxCode, table);
  }
  return table;
}

/**
 * Splits `samples` (pixel after pixel, `samplesPerPixel` samples each) into `colourChannels`
 * planes, dropping any further samples (alpha). `maxCode` 255 or 65535 scales integers to [0, 1];
 * `maxCode` 0 keeps float values as stored.
 */
export function toPlanes(samples: Samples, pixelCount: number, samplesPerPixel: number,
  colourChannels: number, maxCode: number): Float32Array[] {
  const planes: Float32Array[] = [];
  const table = maxCode > 0 ? unitTable(maxCode) : undefined;
  for (let c = 0; c < colourChannels; c++) {
    const plane = new Float32Array(pixelCount);
    if (table) {
      for (let i = 0, j = c; i < pixelCount; i++, j += samplesPerPixel) plane[i] = table[samples[j]];
    } else {
      for (let i = 0, j = c; i < pixelCount; i++, j += samplesPerPixel) plane[i] = samples[j];
    }
    planes.push(plane);
  }
  return planes;
}

/**
 * Palette indices to RGB planes in [0, 1]. `palette` holds [r, g, b] codes of `maxCode`; an index
 * outside the palette is refused by returning its value, so the caller can say so.
 */
export function paletteToPlanes(indices: Samples, pixelCount: number, palette: ArrayLike<number>[],
  maxCode: number): Float32Array[] | { badIndex: number } {
  const table = unitTable(maxCode);
  const planes = [new Float32Array(pixelCount), new Float32Array(pixelCount), new Float32Array(pixelCount)];
  for (let i = 0; i < pixelCount; i++) {
    const colour = palette[indices[i]];
    if (!colour) return { badIndex: indices[i] };
    planes[0][i] = table[colour[0]];
    planes[1][i] = table[colour[1]];
    planes[2][i] = table[colour[2]];
  }
  return planes;
}

/** Pixels luma8 passes through the kernel's memory at a time. */
const LUMA_BAND = 1 << 16;

/**
 * Rec. 709 luma of 8-bit interleaved samples (the first three of each pixel's `samplesPerPixel`, as code / 255)
 * into `out`: 0.2126 R + 0.7152 G + 0.0722 B in float64, rounded to float32, as toGrey computes it from decoded
 * planes, bit for bit. By the tensor kernel's samplePlanes when this thread has loaded it (a band of pixels at a
 * time: three to ten times quicker), else here.
 */
export function luma8(samples: Uint8Array | Uint8ClampedArray, pixelCount: number, samplesPerPixel: number, out: Float32Array): Float32Array {
  const table = unitTable(255);
  const k = loadedTensorKernel();
  if (!k) {
    for (let i = 0, o = 0; i < pixelCount; i++, o += samplesPerPixel) {
      out[i] = 0.2126 * table[samples[o]] + 0.7152 * table[samples[o + 1]] + 0.0722 * table[samples[o + 2]];
    }
    return out;
  }
  const mem = new KernelArena(k);
  const at = { table: mem.reserve(256), src: mem.reserve(LUMA_BAND * samplesPerPixel / 4), out: mem.reserve(LUMA_BAND) };
  mem.commit();
  mem.view(at.table, 256).set(table);
  for (let i = 0; i < pixelCount; i += LUMA_BAND) {
    const n = Math.min(LUMA_BAND, pixelCount - i);
    new Uint8Array(k.memory.buffer, at.src, n * samplesPerPixel).set(samples.subarray(i * samplesPerPixel, (i + n) * samplesPerPixel));
    k.samplePlanes(at.src, n, 0, samplesPerPixel, 1, at.table, at.out, 0, 0);
    out.set(mem.view(at.out, n), i);
  }
  return out;
}
