import type { OrientationField } from '../orientation/index.ts';
import { fieldTiffBytes } from '../report/index.ts';
import { writeBytes } from './io.ts';

/** FILE.tif for one image; FILE-<image>.tif for each of several. */
export function fieldOutPath(template: string, imageName: string, count: number): string {
  if (count <= 1) return template;
  const base = imageName.replace(/^.*[\\/]/, '').replace(/\.[^.]*$/, '');
  const dot = template.toLowerCase().endsWith('.tiff') ? template.length - 5 : template.toLowerCase().endsWith('.tif') ? template.length - 4 : template.length;
  return `${template.slice(0, dot)}-${base}${template.slice(dot) || '.tif'}`;
}

/** Writes the field as a float TIFF, one quantity per page (angles in degrees). */
export async function writeFieldTiff(path: string, field: OrientationField, description: string): Promise<void> {
  await writeBytes(path, fieldTiffBytes(field, description));
}
