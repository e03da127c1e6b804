/**
 * Interleaved samples (as decoders return them) to one Float32Array plane per colour channel.
 * Integer data are divided by the largest code (255 or 65535) so they lie in [0, 1]; float data
 * are copied as stored.
 */

type Samples = ArrayLike<number>;

/** Code-to-value tables, so each sample costs one lookup; built once per bit depth. */
const unitTables = new Map<number, Float32Array>();

function unitTable(maxCode: number): Float32Array {
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
