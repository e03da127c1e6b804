/**
 * The measuring analyses called directly (what `retarda diameter`, `calibrate` and `fibre` and the app's
 * worker run), on rendered fibres and rulers whose widths and periods are facts of the rendering.
 */
import { describe, expect, it } from 'vitest';
import { analyseDiameter, analyseMicrometer, analyseOpticsCalibration, fibreNumbersResult, SCHEMA_VERSION } from '../../src/analyses/index.ts';
import { makeImage, type Image } from '../../src/image/types.ts';
import { InputError } from '../../src/common/errors.ts';
import { axialDiffDeg } from '../../src/common/angles.ts';
import type { Plane } from '../../src/common/plane.ts';
import { renderFibres } from '../fibre/render.ts';
import { renderRuler } from '../calibrate/render.ts';

const imageOf = (p: Plane, name: string, pixelSizeUmPerPx?: number): Image =>
  makeImage({ width: p.width, height: p.height, channels: 1, planes: [p.data], bitDepth: 16, encoding: 'linear', source: { name }, pixelSizeUmPerPx });

describe('analyseDiameter', () => {
  const plane = renderFibres({ width: 240, height: 200, noiseSd: 0.005, fibres: [{ cx: 120, cy: 100, angleDeg: 30, widthPx: 20, contrast: -0.4 }] });

  it('measures the rendered width, in um with the pixel size given', () => {
    const d = analyseDiameter(imageOf(plane, 'f.png'), { pixelSizeUmPerPx: 0.5, stepPx: 8 });
    // Rendered width 20 px (fact of the rendering) x 0.5 um/px = 10 um; the fibre module's target is 0.3 px
    expect(Math.abs(d.meanPx! - 20)).toBeLessThan(0.3);
    expect(Math.abs(d.meanUm! - 10)).toBeLessThan(0.15);
    expect(d.pixelSizeFrom).toBe('option');
    expect(d.fibres).toHaveLength(1);
    // the fibre axis was rendered at 30 deg CCW from +x
    expect(Math.abs(d.fibres[0].axisDeg - 30)).toBeLessThan(1);
    // every station is counted: kept + dropped, and each dropped one has a reason
    expect(d.fibres[0].stations.length).toBe(d.fibres[0].n);
    expect(d.fibres[0].droppedStations.length).toBe(d.fibres[0].dropped);
    expect(d.schemaVersion).toBe(SCHEMA_VERSION);
    expect(d.source).toBe('f.png');
  });

  it('takes the pixel size from the file when none is given, and px only when there is none', () => {
    expect(analyseDiameter(imageOf(plane, 'f.tif', 0.25)).pixelSizeFrom).toBe('file');
    const bare = analyseDiameter(imageOf(plane, 'f.png'));
    expect(bare.meanUm).toBeNull();
    expect(bare.warnings.join(' ')).toMatch(/no pixel size/);
  });

  it('refuses a non-positive pixel size and an unknown polarity', () => {
    expect(() => analyseDiameter(imageOf(plane, 'f.png'), { pixelSizeUmPerPx: 0 })).toThrow(InputError);
    expect(() => analyseDiameter(imageOf(plane, 'f.png'), { polarity: 'grey' as 'dark' })).toThrow(InputError);
  });
});

describe('analyseMicrometer', () => {
  const ruler = imageOf(renderRuler({ width: 420, height: 300, periodPx: 18.7, linesDeg: 95, contrast: -0.4, noiseSd: 0.01 }), 'ruler.png');

  it('gives um/px with its uncertainty from the ruler period', () => {
    const c = analyseMicrometer(ruler, { divisionUm: 10 });
    // Rendered period 18.7 px (fact of the rendering), 10 um divisions -> 10 / 18.7 = 0.534759 um/px; within 0.2 %, a
    // calibration goal of this project (common practice, no source)
    expect(Math.abs(c.umPerPx / (10 / 18.7) - 1)).toBeLessThan(0.002);
    expect(c.uncertaintyUmPerPx).toBeCloseTo(c.uncertainty * c.umPerPx, 12);
    // lines rendered at 95 deg, reported wrapped to (-90, 90] as -85 (axial angles, src/common/angles.ts)
    expect(axialDiffDeg(c.linesDeg, 95)).toBeLessThan(1);
    expect(c.linesDeg).toBeLessThanOrEqual(90);
    expect(c.warnings.join(' ')).not.toMatch(/optics give/);
  });

  it('cross-checks against the optics and the sampling limit', () => {
    // Arithmetic: a 6.5 um camera pixel at 10x = 0.65 um/px, 22 % above the ruler's 0.5348
    const c = analyseMicrometer(ruler, { divisionUm: 10, opticsUmPerPx: 0.65, na: 0.25 });
    expect(c.opticsRatio!).toBeCloseTo((10 / 18.7) / 0.65, 2);
    expect(c.warnings.join(' ')).toMatch(/optics give/);
    // Rayleigh resolution r = 0.61 lambda / NA (published: Born & Wolf, Principles of Optics, 8.6; from memory):
    // 0.61 x 0.55 / 0.25 = 1.342 um; half of it 0.671 um > 0.535 um/px, so not under-sampled (Nyquist, pixel <= r / 2)
    expect(c.warnings.join(' ')).not.toMatch(/under-sampled/);
    expect(() => analyseMicrometer(ruler, { divisionUm: -1 })).toThrow(InputError);
  });

  it('the optics alone give camera pixel / magnification', () => {
    // Arithmetic: a 3.45 um camera pixel (a common sensor's, from memory) at 10x and 1x = 0.345 um/px
    expect(analyseOpticsCalibration({ cameraPixelUm: 3.45, objectiveMagnification: 10 }).umPerPx).toBeCloseTo(0.345, 12);
  });
});

describe('fibreNumbersResult', () => {
  it('gives a carbon fibre\'s numbers, whatever unit the linear density comes in', () => {
    // Closed form: tex (g per km) = rho [g/cm3] x A [um^2] x 1e-3, A = pi D^2 / 4. D = 7 um, rho = 1.80:
    // A = 38.4845 um^2 -> 0.069272 tex. 0.5 dtex = 0.05 tex (definition: dtex = g per 10 km)
    const r = fibreNumbersResult({ diameterUm: 7, densityGPerCm3: 1.8, linearDensity: { value: 0.5, unit: 'dtex' } });
    expect(Math.abs(r.solidTex - 0.069272)).toBeLessThan(1e-5);
    expect(r.linearDensityTex!).toBeCloseTo(0.05, 12);
    expect(r.packingFraction!).toBeCloseTo(0.05 / r.solidTex, 12);
    // 1 den = 1/9 tex (definitions: denier = g per 9 km, tex = g per km)
    expect(fibreNumbersResult({ diameterUm: 7, densityGPerCm3: 1.8, linearDensity: { value: 0.45, unit: 'den' } }).linearDensityTex!).toBeCloseTo(0.05, 12);
    expect(r.analysis).toBe('fibre');
  });

  it('converts the tenacity and gives birefringence and orientation factor', () => {
    // Arithmetic: 1 gf = 9.80665e-3 N (standard gravity, definition) and 1 den = 1/9 tex, so 1 gf/den = 9 x 9.80665e-3
    // = 0.0882599 N/tex; stress = tenacity x density: 1 N/tex x 1.8 g/cm3 = 1.8 GPa (N/tex x g/cm3 = 1e9 Pa)
    const r = fibreNumbersResult({ diameterUm: 10, densityGPerCm3: 1.8, tenacity: { value: 10, unit: 'gf/den' }, retardanceNm: 500, intrinsicBirefringence: 0.2 });
    expect(Math.abs(r.tenacityNPerTex! - 0.882599)).toBeLessThan(1e-6);
    expect(r.strengthGPa!).toBeCloseTo(r.tenacityNPerTex! * 1.8, 12);
    // birefringence = retardance / thickness = 500 nm / 10 um = 0.05 (definition); Hermans orientation factor
    // f = birefringence / intrinsic birefringence = 0.05 / 0.2 (Stein & Norris 1956, from memory)
    expect(r.birefringence!).toBeCloseTo(0.05, 12);
    expect(r.orientationFactor!).toBeCloseTo(0.25, 12);
  });

  it('refuses an unknown unit, a missing density and tenacity with strength', () => {
    expect(() => fibreNumbersResult({ diameterUm: 7, densityGPerCm3: 1.8, linearDensity: { value: 1, unit: 'kg' as 'tex' } })).toThrow(InputError);
    expect(() => fibreNumbersResult({ diameterUm: 7 } as { diameterUm: number; densityGPerCm3: number })).toThrow(InputError);
    expect(() => fibreNumbersResult({ diameterUm: 7, densityGPerCm3: 1.8, tenacity: { value: 1, unit: 'N/tex' }, strengthGPa: 2 })).toThrow(InputError);
  });
});
