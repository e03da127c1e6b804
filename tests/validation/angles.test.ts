import { describe, it, expect } from 'vitest';
import anglesArea from './angles.ts';
import { rowText } from './goals.ts';
import { ColourRenderer, renderScene, scene, type OpticalTrain } from './render/index.ts';

/**
 * The renderer's angle series (tests/validation/render/, optics.seriesDeg) against closed forms of crossed
 * polarisers, then the quick subset of the angle-series validation (`npm run validate -- --area=angles --quick`):
 * one small channel read with and without the compensator image (and with it but not its sample-free area), and 20
 * seeded renderings of interval coverage, every row held to its goal.
 */
const SERIES = [0, 22.5, 45, 67.5];
const crossed = (a: number): OpticalTrain => ({ polariserDeg: a, analyserDeg: a + 90, compensator: null, lampK: 3200 });

describe('validation renderer: angle series', () => {
  const spec = (seriesDeg: number[] | null, quiet = false) => scene({
    name: 'series-check', seed: 41, width: 160, height: 120, source: 'colour', channel: { axisDeg: 23, widthPx: 70 },
    background: { kind: 'sample-free' }, optics: { retardanceNm: 250, retardanceSpread: 0.1, seriesDeg },
    ...(quiet ? { imaging: { psfSigmaPx: 0, noiseSigma: 0, fullWellElectrons: 0, bitDepth: 16 as const } } : {}),
  });

  it('transmits sin^2 2(theta - alpha) sin^2(pi Gamma / lambda) for crossed polarisers at alpha (closed form: the angle factor leaves the spectral integral)', () => {
    const at45 = new ColourRenderer(crossed(0));
    for (const a of SERIES) {
      const r = new ColourRenderer(crossed(a));
      for (const [g, th] of [[60, 0.3], [250, 1.1], [420, -0.7], [250, 2.9]]) {
        const want = at45.linearRgb(g, Math.PI / 4).map((v) => v * Math.sin(2 * (th - (a * Math.PI) / 180)) ** 2);
        r.linearRgb(g, th).forEach((v, c) => expect(v).toBeCloseTo(want[c], 12));
      }
    }
  });

  it('leaves the compensator image of a scene unchanged when a series is added', () => {
    const plain = renderScene(spec(null)), withSeries = renderScene(spec(SERIES));
    expect(withSeries.series).toHaveLength(4);
    expect(plain.series).toBeNull();
    for (let c = 0; c < 3; c++) expect(withSeries.image.planes[c]).toEqual(plain.image.planes[c]);
  });

  it('renders images whose pairs 45 deg apart sum to the same light, and whose fit gives the rendered director mod 90 deg', () => {
    // I(a) = A sin^2 2(theta - a): I(0) + I(45) = I(22.5) + I(67.5) = A, I(45) - I(0) = A cos 4 theta, I(67.5) - I(22.5) = A sin 4 theta.
    const r = renderScene(spec(SERIES, true));
    const [i0, i1, i2, i3] = r.series!.map((img) => img.planes[1]);
    let checked = 0, worstSum = 0, worstAngle = 0;
    for (let i = 0; i < i0.length; i++) {
      worstSum = Math.max(worstSum, Math.abs(i0[i] + i2[i] - i1[i] - i3[i]));
      const A = i0[i] + i2[i];
      if (!r.truth.interior[i] || A < 0.2) continue;
      const got = 0.25 * Math.atan2(i3[i] - i1[i], i2[i] - i0[i]);
      let d = (got - r.truth.thetaRad[i]) % (Math.PI / 2);
      if (d > Math.PI / 4) d -= Math.PI / 2;
      if (d < -Math.PI / 4) d += Math.PI / 2;
      worstAngle = Math.max(worstAngle, Math.abs(d));
      checked++;
    }
    expect(checked).toBeGreaterThan(5000);
    expect(worstSum).toBeLessThan(3 / 65535); // 16-bit rounding of four values
    expect(worstAngle).toBeLessThan(1e-3); // rad; 16-bit rounding only (no PSF, no noise)
  });
});

describe('angle series validation, quick subset', () => {
  it('meets the per-bin, coverage and interval goals', async () => {
    const rows = await anglesArea({ quick: true });
    expect(rows.length).toBeGreaterThanOrEqual(6);
    for (const r of rows) expect(r.pass, rowText(r)).toBe(true);
  }, 120_000);
});
