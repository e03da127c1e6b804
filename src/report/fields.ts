import { radToDeg } from '../common/index.ts';
import type { OrientationField } from '../orientation/index.ts';

/** One quantity as a float page; `data` may be made strip by strip as the page is written (FloatTiffPage). */
export interface FieldPage { width: number; height: number; data: Float32Array | ((start: number, count: number) => Float32Array); name: string }

/**
 * The quantities of a field as float pages for TIFF export: angleDeg (NaN where masked), confidence,
 * and retardanceNm / strength when present, then the mask as 0/1.
 */
export function fieldPages(f: OrientationField): FieldPage[] {
  const { width, height } = f;
  // The angle in degrees and the mask as floats are made strip by strip as their page is written.
  const angle = (start: number, count: number) => {
    const a = new Float32Array(count);
    for (let k = 0; k < count; k++) a[k] = f.mask[start + k] ? radToDeg(f.angleRad[start + k]) : NaN;
    return a;
  };
  const mask = (start: number, count: number) => Float32Array.from(f.mask.subarray(start, start + count));
  const pages: FieldPage[] = [
    { width, height, data: angle, name: 'angleDeg' },
    { width, height, data: f.confidence, name: f.method === 'texture' ? 'coherency' : 'confidence' },
  ];
  if (f.retardanceNm) pages.push({ width, height, data: f.retardanceNm, name: 'retardanceNm' });
  if (f.strength) pages.push({ width, height, data: f.strength, name: 'strength' });
  pages.push({ width, height, data: mask, name: 'mask' });
  return pages;
}
