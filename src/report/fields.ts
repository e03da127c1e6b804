import { radToDeg } from '../common/index.ts';
import type { OrientationField } from '../orientation/index.ts';

/** One quantity as a float page; `data` may be made only when the page is written (FloatTiffPage). */
export interface FieldPage { width: number; height: number; data: Float32Array | (() => Float32Array); name: string }

/**
 * The quantities of a field as float pages for TIFF export: angleDeg (NaN where masked), confidence,
 * and retardanceNm / strength when present, then the mask as 0/1.
 */
export function fieldPages(f: OrientationField): FieldPage[] {
  const { width, height } = f;
  // The angle in degrees and the mask as floats are made when their page is written, one at a time.
  const angle = () => {
    const a = new Float32Array(width * height);
    for (let i = 0; i < a.length; i++) a[i] = f.mask[i] ? radToDeg(f.angleRad[i]) : NaN;
    return a;
  };
  const pages: FieldPage[] = [
    { width, height, data: angle, name: 'angleDeg' },
    { width, height, data: f.confidence, name: f.method === 'texture' ? 'coherency' : 'confidence' },
  ];
  if (f.retardanceNm) pages.push({ width, height, data: f.retardanceNm, name: 'retardanceNm' });
  if (f.strength) pages.push({ width, height, data: f.strength, name: 'strength' });
  pages.push({ width, height, data: () => Float32Array.from(f.mask), name: 'mask' });
  return pages;
}
