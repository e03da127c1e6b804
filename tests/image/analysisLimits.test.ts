/**
 * The pixel limits of the command line's analyses (ANALYSIS_MAX_PIXELS, src/image/types.ts): an image larger
 * than an analysis takes is refused with one line naming the image, its size and what to do, before the
 * analysis allocates; the limits keep each command within 1 GB, as measured by `npm run bench`'s peaks (the
 * limits themselves are figures of this project's measurements, not of a published source).
 */
import { describe, expect, it } from 'vitest';
import { ANALYSIS_MAX_PIXELS, checkAnalysisPixels, MAX_DECODE_BYTES } from '../../src/image/index.ts';
import { InputError } from '../../src/common/errors.ts';

const image = (width: number, height: number) => ({ width, height, source: { name: 'big.tif' } });

describe('checkAnalysisPixels', () => {
  it('takes an image of exactly the limit and refuses one pixel more, naming size, limit and what to do', () => {
    const limit = ANALYSIS_MAX_PIXELS.profile;
    expect(() => checkAnalysisPixels(image(limit.pixels, 1), limit)).not.toThrow();
    let err: unknown;
    try { checkAnalysisPixels(image(limit.pixels + 1, 1), limit); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(InputError);
    const message = (err as Error).message;
    expect(message).toContain('big.tif');
    expect(message).toContain(`${limit.pixels + 1}x1`);
    expect(message).toContain('a channel profile');
    expect(message).toContain('Crop the image');
    expect(message).not.toContain('\n');
  });

  it('limits an analysis only where decoding could take more pixels (grey at 4 bytes a pixel)', () => {
    for (const limit of Object.values(ANALYSIS_MAX_PIXELS)) expect(limit.pixels).toBeLessThan(MAX_DECODE_BYTES / 4);
  });
});
