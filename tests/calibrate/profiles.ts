/**
 * 1D micrometer profiles (their period is the construction): 2048 point samples of 1 - depth * sum_m exp(-(x - c_m)^2 / (2 s^2)), Gaussian dark lines of FWHM 3 px
 * (s = 3 / 2.3548), c_m = x0 + m P, plus seeded Gaussian noise.
 */
import { gaussianNoise } from '../fibre/render.ts';

export function lineProfile(periodPx: number, noiseSd: number, seed: number, x0 = 5.3, depth = 0.5, length = 2048): Float64Array {
  const s = 3 / 2.354820045;
  const noise = gaussianNoise(seed);
  const out = new Float64Array(length);
  for (let x = 0; x < length; x++) {
    let v = 1;
    const mNear = Math.round((x - x0) / periodPx);
    for (let m = mNear - 3; m <= mNear + 3; m++) v -= depth * Math.exp(-0.5 * ((x - (x0 + m * periodPx)) / s) ** 2);
    out[x] = v + noiseSd * noise();
  }
  return out;
}
