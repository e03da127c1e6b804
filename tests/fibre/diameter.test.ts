import { describe, expect, it } from 'vitest';
import { measureFibreDiameters } from '../../src/fibre/index.ts';
import type { FibreDiameter } from '../../src/fibre/index.ts';
import { axialDiffDeg } from '../../src/common/index.ts';
import { fibreCoverage, renderFibres, trueWidthAt } from './render.ts';
import type { RenderedFibre } from './render.ts';

/**
 * Tolerance: max(0.3 px, 1 %) for each station and the mean. The validation goal for the mean is max(0.2 px, 1 %), met by
 * the validation table (tests/validation/fibre.ts); here a single noisy station is allowed 0.1 px more (common
 * practice, no source).
 */
const tolerance = (widthPx: number) => Math.max(0.3, 0.01 * widthPx);

function expectStationsTrue(fibre: FibreDiameter, rendered: RenderedFibre, perStation = true) {
  expect(fibre.n).toBeGreaterThan(0);
  for (const s of fibre.stations) {
    const truth = trueWidthAt(rendered, s.xPx, s.yPx);
    if (perStation) expect(Math.abs(s.diameterPx - truth)).toBeLessThan(tolerance(truth));
  }
  const meanTruth = fibre.stations.reduce((a, s) => a + trueWidthAt(rendered, s.xPx, s.yPx), 0) / fibre.n;
  expect(Math.abs((fibre.meanPx as number) - meanTruth)).toBeLessThan(tolerance(meanTruth));
  expect(axialDiffDeg(fibre.axisDeg, rendered.angleDeg)).toBeLessThan(0.3);
  expect(fibre.dropped).toBe(fibre.droppedStations.length);
  expect(Object.values(fibre.droppedByReason).reduce((a, b) => a + (b ?? 0), 0)).toBe(fibre.dropped);
}

describe('measureFibreDiameters on rendered fibres of known width (area-sampled erf edges)', () => {
  for (const angleDeg of [0, 17, 45, 90, 133]) {
    for (const widthPx of [10, 27.4, 80]) {
      it(`measures a ${widthPx} px fibre at ${angleDeg} deg within max(0.3 px, 1 %) at every station`, () => {
        const f: RenderedFibre = { cx: 161.3, cy: 139.6, angleDeg, widthPx, contrast: -0.4, sigmaPx: 1.5 };
        const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f], noiseSd: 0.01 }));
        expect(r.fibres).toHaveLength(1);
        expect(r.polarity).toBe('dark');
        expectStationsTrue(r.fibres[0], f);
        // Only stations whose profile runs off the image are dropped on a clean fibre.
        expect(Object.keys(r.fibres[0].droppedByReason).every((k) => k === 'border')).toBe(true);
        expect(r.n).toBeGreaterThanOrEqual(20);
      });
    }
  }

  it('finds a bright fibre on a dark field (polarity auto-detected)', () => {
    const f: RenderedFibre = { cx: 150, cy: 130, angleDeg: -28, widthPx: 18.2, contrast: 0.5 };
    const r = measureFibreDiameters(renderFibres({ width: 300, height: 260, fibres: [f], base: 0.08, noiseSd: 0.01 }));
    expect(r.polarity).toBe('bright');
    expectStationsTrue(r.fibres[0], f);
  });

  it('copes with strongly uneven (multiplicative) illumination, narrow and wide fibres', () => {
    const illumination = (x: number, y: number) => 0.55 + 0.5 * (x / 320) + 0.25 * ((y - 140) / 140) ** 2;
    for (const f of [
      { cx: 160, cy: 140, angleDeg: 17, widthPx: 20, contrast: -0.3 },
      { cx: 160, cy: 140, angleDeg: 45, widthPx: 80, contrast: -0.3 },
    ] as RenderedFibre[]) {
      const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f], illumination, noiseSd: 0.01 }));
      expect(r.fibres).toHaveLength(1);
      expectStationsTrue(r.fibres[0], f);
    }
  });

  it('follows a tapered fibre: each station matches the local width', () => {
    const f: RenderedFibre = { cx: 160, cy: 140, angleDeg: 30, widthPx: 30, taper: 0.08, contrast: -0.3 };
    const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f], noiseSd: 0.01 }));
    const fibre = r.fibres[0];
    expectStationsTrue(fibre, f);
    // A taper is a trend, not outliers: nothing is dropped as a width outlier.
    expect(fibre.droppedByReason['width-outlier'] ?? 0).toBe(0);
    expect((fibre.maxPx as number) - (fibre.minPx as number)).toBeGreaterThan(20);
    // A linear trend has a lag-1 autocorrelation near 1 (common practice, no source): the interval is wide and the
    // result says why in words.
    expect(fibre.lag1Correlation as number).toBeGreaterThan(0.9);
    expect(r.warnings.join('; ')).toMatch(/fibre 0: the diameter changes steadily along it/);
  });

  it('separates two fibres and reports each in `fibres`', () => {
    const a: RenderedFibre = { cx: 100, cy: 140, angleDeg: 80, widthPx: 12, contrast: -0.3 };
    const b: RenderedFibre = { cx: 230, cy: 140, angleDeg: 100, widthPx: 25, contrast: -0.25 };
    const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [a, b], noiseSd: 0.01 }));
    expect(r.fibres).toHaveLength(2);
    const [first, second] = [...r.fibres].sort((p, q) => p.startXPx - q.startXPx);
    expectStationsTrue(first, a);
    expectStationsTrue(second, b);
    expect(r.n).toBe(first.n + second.n);
    expect(r.stations.every((s) => r.fibres[s.fibre].stations.includes(s))).toBe(true);
    // Fibres of constant width: no steady change to warn of.
    expect(r.warnings.join('; ')).not.toMatch(/changes steadily/);
  });

  it('measures a narrow, strongly blurred fibre (10 px, edge sigma 2.5 px) with the whole-profile bar fit', () => {
    const f: RenderedFibre = { cx: 160, cy: 140, angleDeg: 30, widthPx: 10, contrast: -0.4, sigmaPx: 2.5 };
    const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f], noiseSd: 0.01 }));
    expectStationsTrue(r.fibres[0], f, false);
    // The fibre never reaches full contrast (2 Phi(2) - 1 = 0.954 at its centre), which biases single-edge fits.
    expect(Math.abs((r.meanPx as number) - 10)).toBeLessThan(0.1);
    expect(r.fibres[0].profileFit).toBe('bar');
  });

  it('measures a 5 px fibre (PSF sigma 1.2 px) and finds its PSF: one sigma pooled over the fibre', () => {
    const f: RenderedFibre = { cx: 160, cy: 140, angleDeg: -22, widthPx: 5, contrast: -0.4, sigmaPx: 1.2 };
    const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f], noiseSd: 0.01 }));
    const fb = r.fibres[0];
    expect(fb.determined).toBe(true);
    expect(fb.profileFit).toBe('bar');
    expect(Math.abs((fb.meanPx as number) - 5)).toBeLessThan(0.2);
    // The renderer blurs by sigma 1.2 and then averages each pixel over its square, which the fit models
    // separately (pixel footprint), so the pooled sigma is the PSF's own (construction); within 4 u.
    expect(Math.abs((fb.psfSigmaPx as number) - 1.2)).toBeLessThan(Math.max(4 * (fb.psfSigmaUPx as number), 0.02));
    for (const s of fb.stations) expect(s.edgeSigmaPx).toEqual([fb.psfSigmaPx, fb.psfSigmaPx]);
    // The interval holds the pooled sigma's share on top of the station scatter: u >= SD / sqrt(n).
    expect(fb.uPx as number).toBeGreaterThan((fb.sdPx as number) / Math.sqrt(fb.n) - 1e-12);
    expect(fb.meanPx as number).toBeGreaterThan(fb.ciLowPx as number);
    expect(fb.meanPx as number).toBeLessThan(fb.ciHighPx as number);
  });

  it('does not give a width below the resolvable one: "not determined", why, and an upper bound', () => {
    // 2 px wide, blurred by sigma 1.5 px: D < 2 sigma, where the blurred bar is nearly a Gaussian of variance
    // sigma^2 + D^2/12 and only its area A D is fixed by the data (construction).
    const f: RenderedFibre = { cx: 160, cy: 140, angleDeg: 35, widthPx: 2, contrast: -0.6, sigmaPx: 1.5 };
    const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f], noiseSd: 0.004 }), { pixelSizeUmPerPx: 0.65 });
    const fb = r.fibres[0];
    expect(fb.determined).toBe(false);
    expect(fb.meanPx).toBeNull();
    expect(fb.ciLowPx).toBeNull();
    expect(fb.n).toBe(0);
    expect(fb.upperBoundPx as number).toBeGreaterThanOrEqual(2);
    // The bound gives the whole spread to the bar (no blur): D <= sqrt(12 V), V = 1.5^2 + 2^2/12 (the pixel's own
    // footprint is modelled apart), so it lies near sqrt(12 x 2.583) = 5.57 px, plus its one-sided 95 % margin.
    expect(fb.upperBoundPx as number).toBeGreaterThanOrEqual(Math.sqrt(12 * (1.5 ** 2 + 4 / 12)) - 0.2);
    expect(fb.droppedByReason.unresolved).toBe(fb.dropped - (fb.droppedByReason.border ?? 0) - (fb.droppedByReason['width-outlier'] ?? 0));
    expect(r.determined).toBe(false);
    expect(r.meanPx).toBeNull();
    expect(r.warnings.join(' ')).toMatch(/fibre 0: width not determined: .*only their product is measured; it is at most .* higher magnification/);
  });

  it('is not split by a bright centre line (refraction in a transparent fibre)', () => {
    const f: RenderedFibre = { cx: 160, cy: 140, angleDeg: 10, widthPx: 40, contrast: -0.4 };
    const line: RenderedFibre = { cx: 160, cy: 140, angleDeg: 10, widthPx: 8, contrast: 0.25, sigmaPx: 2 };
    const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f, line], noiseSd: 0.01 }));
    expect(r.fibres).toHaveLength(1);
    expectStationsTrue(r.fibres[0], f);
  });

  it('follows a curved fibre (arc of radius 600 px), measuring normal to it', () => {
    const width = 320;
    const height = 280;
    const data = new Float32Array(width * height);
    const profile: RenderedFibre = { cx: 0, cy: 0, angleDeg: 0, widthPx: 20, contrast: 1 };
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        // Point-sampled: the blurred strip across the arc, by distance from the arc's centre line.
        data[y * width + x] = 0.7 - 0.3 * fibreCoverage(profile, 0, Math.hypot(x - 160, y - 740) - 600);
      }
    }
    const r = measureFibreDiameters({ width, height, data });
    expect(r.fibres).toHaveLength(1);
    // Geometric width of the rendered arc band: 20 px everywhere (measured off the normal it would read more).
    for (const s of r.stations) expect(Math.abs(s.diameterPx - 20)).toBeLessThan(0.3);
    expect(r.n).toBeGreaterThan(20);
  });

  it('at low signal-to-noise the mean stays within tolerance and the 95 % interval covers the truth', () => {
    const f: RenderedFibre = { cx: 160, cy: 140, angleDeg: 133, widthPx: 25, contrast: -0.3 };
    const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f], noiseSd: 0.05, seed: 4 }));
    expectStationsTrue(r.fibres[0], f, false);
    expect(r.ciLowPx as number).toBeLessThanOrEqual(25);
    expect(r.ciHighPx as number).toBeGreaterThanOrEqual(25);
    expect(r.sdPx as number).toBeGreaterThan(0);
  });

  it('drops the stations a dust particle on the edge spoils, and counts them', () => {
    const f: RenderedFibre = { cx: 160, cy: 140, angleDeg: 0, widthPx: 20, contrast: -0.3 };
    const blobs = [{ cx: 160, cy: 151, radiusPx: 6, contrast: -0.3 }];
    const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f], blobs, noiseSd: 0.01 }));
    const fibre = r.fibres[0];
    expectStationsTrue(fibre, f);
    const nearBlob = fibre.droppedStations.filter((d) => Math.abs(d.xPx - 160) < 12);
    expect(nearBlob.length).toBeGreaterThanOrEqual(1);
    expect(nearBlob.every((d) => d.reason !== 'border')).toBe(true);
    expect(fibre.stations.every((s) => Math.abs(s.xPx - 160) > 4)).toBe(true);
  });

  it('gives um when a pixel size is set, and null um with a warning when not', () => {
    const f: RenderedFibre = { cx: 150, cy: 120, angleDeg: 10, widthPx: 15, contrast: -0.4 };
    const img = renderFibres({ width: 300, height: 240, fibres: [f], noiseSd: 0.01 });
    const cal = measureFibreDiameters(img, { pixelSizeUmPerPx: 0.325 });
    expect(cal.meanUm).toBeCloseTo((cal.meanPx as number) * 0.325, 12);
    expect(cal.ciLowUm).toBeCloseTo((cal.ciLowPx as number) * 0.325, 12);
    expect(cal.stations[0].diameterUm).toBeCloseTo(cal.stations[0].diameterPx * 0.325, 12);
    // Without the pixel size's own uncertainty the um interval leaves it out, and says so.
    expect(cal.warnings.join(' ')).toMatch(/no pixel-size uncertainty given/);
    const withU = measureFibreDiameters(img, { pixelSizeUmPerPx: 0.325, pixelSizeUncertainty: 0.01 });
    expect(withU.warnings).toEqual([]);
    // GUM law of propagation for D_um = D_px p with independent inputs:
    // u^2(D_um) = (p u(D_px))^2 + (D_px u(p))^2, and the pixel size's share is D_um u(p)/p.
    const uPx = withU.uPx as number;
    const meanUm = withU.meanUm as number;
    expect(withU.uUmPixelSize).toBeCloseTo(meanUm * 0.01, 12);
    expect(withU.uUm as number).toBeCloseTo(Math.hypot(0.325 * uPx, meanUm * 0.01), 12);
    expect((withU.ciHighUm as number) - meanUm).toBeGreaterThan((cal.ciHighUm as number) - meanUm);
    expect(meanUm).toBeGreaterThan(withU.ciLowUm as number);
    expect(meanUm).toBeLessThan(withU.ciHighUm as number);
    const raw = measureFibreDiameters(img, { stepPx: 20 });
    expect(raw.meanUm).toBeNull();
    expect(raw.stations[0].diameterUm).toBeNull();
    expect(raw.warnings.join(' ')).toMatch(/no pixel size/);
    // Stations every 20 px instead of 10: about half as many.
    expect(Math.abs(raw.n + raw.dropped - (cal.n + cal.dropped) / 2)).toBeLessThanOrEqual(1);
  });
});

describe('measureFibreDiameters on degenerate images', () => {
  it('refuses a blank image', () => {
    const blank = { width: 200, height: 150, data: new Float32Array(200 * 150).fill(0.4) };
    expect(() => measureFibreDiameters(blank)).toThrow(/uniform/);
  });
  it('refuses two crossing fibres as one unmeasurable object rather than guessing', () => {
    const img = renderFibres({ width: 320, height: 280, noiseSd: 0.01, fibres: [
      { cx: 160, cy: 140, angleDeg: 30, widthPx: 15, contrast: -0.3 }, { cx: 160, cy: 140, angleDeg: 120, widthPx: 20, contrast: -0.3 }] });
    expect(() => measureFibreDiameters(img)).toThrow(/long and thin/);
  });
  it('refuses noise alone', () => {
    for (const seed of [1, 2, 3]) {
      const img = renderFibres({ width: 256, height: 200, fibres: [], noiseSd: 0.05, seed });
      expect(() => measureFibreDiameters(img)).toThrow(/no fibre found/);
    }
  });
  it('drops every station of a fibre lying along the image border, with the reason and a warning', () => {
    const f: RenderedFibre = { cx: 160, cy: 3, angleDeg: 0, widthPx: 20, contrast: -0.3 };
    const r = measureFibreDiameters(renderFibres({ width: 320, height: 280, fibres: [f], noiseSd: 0.01 }));
    expect(r.n).toBe(0);
    expect(r.meanPx).toBeNull();
    expect(r.dropped).toBeGreaterThan(20);
    expect(r.droppedByReason.border).toBe(r.dropped);
    expect(r.warnings.join(' ')).toMatch(/all \d+ stations were dropped/);
  });
  it('refuses nonsense options', () => {
    const img = renderFibres({ width: 100, height: 80, fibres: [{ cx: 50, cy: 40, angleDeg: 0, widthPx: 12, contrast: -0.3 }] });
    expect(() => measureFibreDiameters(img, { stepPx: 0 })).toThrow(/station step/);
    expect(() => measureFibreDiameters(img, { pixelSizeUmPerPx: -1 })).toThrow(/pixel size/);
    expect(() => measureFibreDiameters(img, { pixelSizeUmPerPx: NaN })).toThrow(/pixel size/);
    expect(() => measureFibreDiameters({ width: 8, height: 8, data: new Float32Array(64) })).toThrow(/too small/);
  });
});
