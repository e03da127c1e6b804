import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { structureTensor } from '../../src/orientation/index.ts';

// Outside reference: scikit-image 0.19.3 structure_tensor(image, sigma, mode='reflect', order='rc') and
// structure_tensor_eigenvalues, made by tests/fixtures/reference/make_structure_tensor_fixture.py.
// skimage uses unnormalised Sobel derivatives and only the outer Gaussian, so our 'sobel' mode must
// match it: Jyy = Arr, Jxy = Arc, Jxx = Acc (skimage's 'rc' order: row (y) first, column (x) second).
const fx = JSON.parse(readFileSync(new URL('../fixtures/reference/structure-tensor-skimage.json', import.meta.url), 'utf8'));

describe('structureTensor against scikit-image', () => {
  for (const c of fx.cases) {
    it(`matches Arr, Arc, Acc and the eigenvalues at sigma ${c.sigma}`, async () => {
      const t = await structureTensor({ width: fx.width, height: fx.height, data: Float32Array.from(fx.image) }, { sigmaPx: c.sigma, derivative: 'sobel' });
      const scale = Math.max(...c.Arr.map(Math.abs), ...c.Acc.map(Math.abs));
      let worst = 0;
      for (let i = 0; i < t.jxx.length; i++) {
        const tr = t.jxx[i] + t.jyy[i];
        const root = Math.sqrt((t.jxx[i] - t.jyy[i]) ** 2 + 4 * t.jxy[i] ** 2);
        worst = Math.max(worst,
          Math.abs(t.jyy[i] - c.Arr[i]), Math.abs(t.jxy[i] - c.Arc[i]), Math.abs(t.jxx[i] - c.Acc[i]),
          Math.abs((tr + root) / 2 - c.lambda1[i]), Math.abs((tr - root) / 2 - c.lambda2[i]));
      }
      // float32 arithmetic against float64 reference: relative 1e-5 of the largest component.
      expect(worst / scale).toBeLessThan(1e-5);
    });
  }

  it('reproduces the scikit-image docstring example exactly', async () => {
    // skimage.feature.structure_tensor docstring: 5x5 zeros with [2,2] = 1, sigma = 0.1, order 'rc':
    // Acc = [[0,0,0,0,0],[0,1,0,1,0],[0,4,0,4,0],[0,1,0,1,0],[0,0,0,0,0]].
    const data = new Float32Array(25);
    data[12] = 1;
    const t = await structureTensor({ width: 5, height: 5, data }, { sigmaPx: 0.3, derivative: 'sobel' });
    const acc = [0, 0, 0, 0, 0, 0, 1, 0, 1, 0, 0, 4, 0, 4, 0, 0, 1, 0, 1, 0, 0, 0, 0, 0, 0];
    // sigma 0.3 (our smallest) leaves neighbours a weight of exp(-1/(2*0.09)) ~ 0.004 relative, so compare to 2 %.
    for (let i = 0; i < 25; i++) expect(Math.abs(t.jxx[i] - acc[i])).toBeLessThan(0.02 * 4 + 0.01);
  });
});

describe('structureTensor (default Gaussian derivatives) against scipy.ndimage', () => {
  // Outside reference: scipy.ndimage.gaussian_filter with order=1 for the derivatives (sigma 1), then
  // gaussian_filter(sigma_i) of the products, mode 'reflect', truncate 4 (see the script's header).
  for (const c of fx.gaussianCases) {
    it(`matches Jxx, Jxy, Jyy at sigma_i ${c.sigma}`, async () => {
      const t = await structureTensor({ width: fx.width, height: fx.height, data: Float32Array.from(fx.image) }, { sigmaPx: c.sigma, sigmaDerivPx: c.sigmaDeriv });
      const scale = Math.max(...c.Jxx.map(Math.abs), ...c.Jyy.map(Math.abs));
      let worst = 0;
      for (let i = 0; i < t.jxx.length; i++) {
        worst = Math.max(worst, Math.abs(t.jxx[i] - c.Jxx[i]), Math.abs(t.jxy[i] - c.Jxy[i]), Math.abs(t.jyy[i] - c.Jyy[i]));
      }
      expect(worst / scale).toBeLessThan(1e-5);
    });
  }
});
