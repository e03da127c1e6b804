import { describe, it, expect } from 'vitest';
import { axialDiffDeg, wrapAxialDeg, wrapAxialRad } from '../../src/common/angles.ts';

describe('axial angle wrapping to (-90, 90] degrees (the project\'s convention, src/common/angles.ts)', () => {
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
