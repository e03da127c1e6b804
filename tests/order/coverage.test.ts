import { describe, it, expect } from 'vitest';
import { orientationField } from '../../src/orientation/index.ts';
import { orderParameters } from '../../src/order/index.ts';
import { rng } from '../support/synthetic.ts';

// Coverage of the nominal 95 % block-bootstrap intervals over many independent textures: the share of
// intervals that contain the true value must be near 95 % (definition of a confidence interval).
const N = 128, REPS = 40;

function whiteNoise(seed: number): Float32Array {
  const r = rng(seed);
  return Float32Array.from({ length: N * N }, () => r());
}

/** Noise smoothed along x over 7 px: streaks along 0 deg, spatially correlated orientation. */
function streaks(seed: number): Float32Array {
  const w = whiteNoise(seed), out = new Float32Array(N * N);
  for (let y = 0; y < N; y++) for (let x = 0; x < N; x++) {
    let s = 0;
    for (let k = -3; k <= 3; k++) s += w[y * N + Math.min(N - 1, Math.max(0, x + k))];
    out[y * N + x] = s / 7;
  }
  return out;
}

async function intervals(make: (seed: number) => Float32Array) {
  const out: { order: number; ciLow: number; ciHigh: number }[] = [];
  for (let r = 0; r < REPS; r++) {
    const f = await orientationField({ width: N, height: N, data: make(100 + r) }, { sigmaPx: 2 });
    out.push(orderParameters(f, { axisDeg: 0, replicates: 300, seed: r }).axisOrder!);
  }
  return out;
}

describe('block-bootstrap intervals', () => {
  it('cover the true S_axis = 0 of isotropic noise in about 95 % of images', async () => {
    // Isotropic by construction: the true axis-referenced order is 0 (symmetry).
    const iv = await intervals(whiteNoise);
    const covered = iv.filter((s) => s.ciLow <= 0 && 0 <= s.ciHigh).length / REPS;
    expect(covered).toBeGreaterThanOrEqual(0.85);
    expect(covered).toBeLessThanOrEqual(1);
  });

  it('cover the mean S_axis of correlated streak textures in about 95 % of images', async () => {
    // The population value is estimated by the mean over the independent textures.
    const iv = await intervals(streaks);
    const truth = iv.reduce((a, s) => a + s.order, 0) / REPS;
    const covered = iv.filter((s) => s.ciLow <= truth && truth <= s.ciHigh).length / REPS;
    expect(covered).toBeGreaterThanOrEqual(0.85);
    // And they are not uselessly wide: mean half-width within a factor 2 of 1.96 x the spread between images.
    const sd = Math.sqrt(iv.reduce((a, s) => a + (s.order - truth) ** 2, 0) / (REPS - 1));
    const half = iv.reduce((a, s) => a + (s.ciHigh - s.ciLow) / 2, 0) / REPS;
    expect(half / (1.96 * sd)).toBeGreaterThan(0.7);
    expect(half / (1.96 * sd)).toBeLessThan(2);
  });
});
