import { InputError } from './errors.ts';

/** One float channel, row-major, x right, y down. The shape every analysis works on. */
export interface Plane {
  width: number;
  height: number;
  data: Float32Array;
}

export function makePlane(width: number, height: number, data?: Float32Array): Plane {
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new InputError(`image size ${width}x${height} is not a positive whole number of pixels`);
  }
  const d = data ?? new Float32Array(width * height);
  if (d.length !== width * height) {
    throw new InputError(`plane data has ${d.length} values but ${width}x${height} needs ${width * height}`);
  }
  return { width, height, data: d };
}
