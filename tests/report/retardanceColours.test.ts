/**
 * The retardance colour scale: its CIELAB lightness rises linearly from 18 to 94 along the table, checked by
 * converting the stored sRGB8 colours back to L* with the published formulas written out here (sRGB decoding,
 * IEC 61966-2-1:1999; the sRGB-to-XYZ matrix for D65, IEC 61966-2-1; CIE 1976 L*), not with the project's code.
 */
import { describe, expect, it } from 'vitest';
import { retardanceColourTable, retardanceIndex, retardanceRange } from '../../src/report/index.ts';

/** L* of an sRGB8 colour: decode each channel, Y = 0.2126 R + 0.7152 G + 0.0722 B, L* = 116 f(Y) - 16. */
function lightness(r8: number, g8: number, b8: number): number {
  const lin = (c: number) => { const v = c / 255; return v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4; };
  const y = 0.2126 * lin(r8) + 0.7152 * lin(g8) + 0.0722 * lin(b8);
  const f = y > (6 / 29) ** 3 ? Math.cbrt(y) : y / (3 * (6 / 29) ** 2) + 4 / 29;
  return 116 * f - 16;
}

describe('retardance colours', () => {
  it('rise in lightness linearly from L* 18 to 94 where the colour is inside the sRGB gamut, and never fall', () => {
    const t = retardanceColourTable();
    expect(t).toHaveLength(256 * 3);
    let before = -Infinity, inGamut = 0;
    for (let k = 0; k < 256; k++) {
      const [r, g, b] = [t[3 * k], t[3 * k + 1], t[3 * k + 2]];
      const l = lightness(r, g, b);
      expect(l).toBeGreaterThanOrEqual(before);
      before = l;
      // A channel at 0 or 255 may be the designed colour clipped to the gamut; elsewhere the designed L* must lie
      // within what rounding each channel to a whole code can give (L* rises with every channel).
      if ([r, g, b].some((c) => c === 0 || c === 255)) continue;
      inGamut++;
      const design = 18 + (76 * k) / 255;
      expect(design).toBeGreaterThanOrEqual(lightness(r - 0.5, g - 0.5, b - 0.5));
      expect(design).toBeLessThanOrEqual(lightness(r + 0.5, g + 0.5, b + 0.5));
    }
    expect(inGamut).toBeGreaterThan(200);
  });

  it('index a retardance within its range, clipped at both ends', () => {
    expect(retardanceIndex(0, [0, 500])).toBe(0);
    expect(retardanceIndex(250, [0, 500])).toBe(128);
    expect(retardanceIndex(500, [0, 500])).toBe(255);
    expect(retardanceIndex(-10, [0, 500])).toBe(0);
    expect(retardanceIndex(900, [0, 500])).toBe(255);
  });

  it('take the colour bar up to the 99th percentile, rounded up to 50 nm', () => {
    // 1000 values 0..999 nm: the 99th percentile (index floor(0.99 x 999) = 989) is 989 nm, rounded up to 1000.
    const v = Float32Array.from({ length: 1000 }, (_, i) => i);
    expect(retardanceRange(v, new Uint8Array(1000).fill(1))).toEqual([0, 1000]);
    // Masked pixels do not count; nothing usable gives the smallest bar, 50 nm.
    expect(retardanceRange(v, new Uint8Array(1000))).toEqual([0, 50]);
  });
});
