import type { OrientationField } from '../orientation/index.ts';
import { fieldPages } from './fields.ts';
import { encodeFloatTiff, floatTiffChunks } from './tiff.ts';

/**
 * A field as the float TIFF the command line's --field-out writes: fieldPages (angleDeg, coherency
 * or confidence, retardanceNm / strength when present, mask), 32-bit float, one quantity per page,
 * the field's pixel size in the resolution tags and `description` (the command that made it, e.g.
 * "retarda orient a.png") as ImageDescription. Same bytes as src/cli/fieldExport.ts writes.
 */
export function fieldTiffBytes(field: OrientationField, description: string): Uint8Array {
  return encodeFloatTiff(fieldPages(field), { pixelSizeUmPerPx: field.pixelSizeUmPerPx, description });
}

/** The same bytes as fieldTiffBytes in file order, a strip at a time (for writing a file without holding it). */
export function fieldTiffChunks(field: OrientationField, description: string): Generator<Uint8Array> {
  return floatTiffChunks(fieldPages(field), { pixelSizeUmPerPx: field.pixelSizeUmPerPx, description });
}
