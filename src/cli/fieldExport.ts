import type { OrientationField } from '../orientation/index.ts';
import { fieldTiffChunks } from '../report/index.ts';
import { writeChunks } from './io.ts';

/** FILE.tif for one image; FILE-<image>.tif for each of several. */
export function fieldOutPath(template: string, imageName: string, count: number): string {
  if (count <= 1) return template;
  const base = imageName.replace(/^.*[\\/]/, '').replace(/\.[^.]*$/, '');
  const dot = template.toLowerCase().endsWith('.tiff') ? template.length - 5 : template.toLowerCase().endsWith('.tif') ? template.length - 4 : template.length;
  return `${template.slice(0, dot)}-${base}${template.slice(dot) || '.tif'}`;
}

/**
 * Writes the field as a float TIFF, one quantity per page (angles in degrees), a strip at a time: the file is
 * never held whole, and each derived page (angle in degrees, mask) is made only while it is written.
 */
export async function writeFieldTiff(path: string, field: OrientationField, description: string): Promise<void> {
  await writeChunks(path, fieldTiffChunks(field, description));
}
