import type { OrientationField } from '../../src/orientation/types.ts';

/** An orientation field with given per-pixel angles (degrees) and optional weights; every pixel usable. */
export function fieldOf(width: number, height: number, angleDeg: (x: number, y: number) => number, weight?: (x: number, y: number) => number): OrientationField {
  const n = width * height;
  const angleRad = new Float32Array(n), confidence = new Float32Array(n).fill(1);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let a = angleDeg(x, y) % 180;
      if (a <= -90) a += 180;
      if (a > 90) a -= 180;
      angleRad[y * width + x] = (a * Math.PI) / 180;
      if (weight) confidence[y * width + x] = weight(x, y);
    }
  }
  return {
    width, height, angleRad, confidence, mask: new Uint8Array(n).fill(1),
    method: 'texture', ambiguity: 'none', options: { sigmaPx: 2 }, warnings: [],
  };
}
