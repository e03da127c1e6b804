import { describe, it, expect } from 'vitest';
import { fastAtan2 } from '../../src/common/fastAtan2.ts';
import { axialDiffDeg, wrapAxialDeg, wrapAxialRad } from '../../src/common/angles.ts';

describe('fastAtan2', () => {
  it('stays within 2e-5 rad of Math.atan2 over every quadrant and on the axes', () => {
    // Reference: the platform's Math.atan2 (IEEE-754 libm). A&S 4.4.47 bound ~1e-5 rad (from memory).
    let worst = 0;
    for (let k = 0; k < 20000; k++) {
      const a = (2 * Math.PI * k) / 20000 - Math.PI, r = 0.01 + (k % 97);
      const y = r * Math.sin(a), x = r * Math.cos(a);
      worst = Math.max(worst, Math.abs(fastAtan2(y, x) - Math.atan2(y, x)));
    }
    expect(worst).toBeLessThan(2e-5);
    for (const [y, x] of [[0, 1], [1, 0], [0, -1], [-1, 0], [-0, -1], [0, 0]]) {
      expect(Math.abs(fastAtan2(y, x) - Math.atan2(y, x))).toBeLessThan(2e-5);
    }
  });
});

describe('axial angle wrapping (conventions.md: (-90, 90] degrees)', () => {
  it('maps 90 to 90, -90 to 90, 135 to -45 and 180 to 0', () => {
    expect(wrapAxialDeg(90)).toBe(90);
    expect(wrapAxialDeg(-90)).toBe(90);
    expect(wrapAxialDeg(135)).toBe(-45);
    expect(wrapAxialDeg(180)).toBeCloseTo(0, 12);
    expect(wrapAxialDeg(-271)).toBeCloseTo(89, 12);
    expect(wrapAxialRad(-Math.PI / 2)).toBeCloseTo(Math.PI / 2, 12);
  });

  it('measures axial differences modulo 180', () => {
    expect(axialDiffDeg(89, -89)).toBeCloseTo(2, 12);
    expect(axialDiffDeg(10, 170)).toBeCloseTo(20, 12);
    expect(axialDiffDeg(0, 90)).toBeCloseTo(90, 12);
  });
});
