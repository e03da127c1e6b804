/**
 * The demo angle series' compensator image (sample-images/kestrel-angles-plate.png, rendered by make-samples.ts with
 * renderAngleSetPlate): offered with the four angle images and preselected in the angle-series form, of their framing,
 * and the angle series with it gives its order numbers where without it they are "not determined". The demo is no
 * expected value (sample-images/README.md): these check the wiring and the framing, not the demo's numbers.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { demoEntries } from '../../app/build/demoImages.ts';
import { DEMO_ANALYSES } from '../../vite.config.ts';
import { demoPlates } from '../../app/images/useImageIntake.ts';
import { NO_PLATE, opticalImages, opticalRequestOf, opticalCommandLine } from '../../app/analysis/requests.ts';
import { DEFAULT_OPTICAL_FORM } from '../../app/storage/records.ts';
import { analyseAngleSeries } from '../../src/analyses/index.ts';
import { decodeImage, type Image } from '../../src/image/index.ts';
import { parseRect, type Rect } from '../../src/common/index.ts';

const ROOT = join(import.meta.dirname, '../..');
const SAMPLES = join(ROOT, 'sample-images');
const PLATE = 'kestrel-angles-plate.png';
const load = (file: string): Image => decodeImage(new Uint8Array(readFileSync(join(SAMPLES, file))), file);

const entries = demoEntries(SAMPLES, DEMO_ANALYSES);
const angleEntry = entries.find((d) => d.file === 'kestrel-angle-00.0deg.png')!;
const angleFiles = angleEntry.set!.filter((f) => f !== PLATE);

/** Stored values (0..1, as decoded: integer data over its maximum) of a pixel's planes. */
const valuesAt = (img: Image, i: number) => img.planes.map((p) => p[i]);

/**
 * The first and last row, in columns [x0, x1), where more than half the pixels are marked: where the channel is.
 * Null when no row is.
 */
function channelRows(width: number, height: number, marked: (i: number) => boolean, x0: number, x1: number): [number, number] | null {
  const rows: number[] = [];
  for (let y = 0; y < height; y++) {
    let n = 0;
    for (let x = x0; x < x1; x++) if (marked(y * width + x)) n++;
    if (n > (x1 - x0) / 2) rows.push(y);
  }
  return rows.length ? [rows[0], rows[rows.length - 1]] : null;
}

describe('the demo angle series has a compensator image of its own framing', () => {
  it('is offered with the four angle images, apart from their file-name pattern, with its sample-free area', () => {
    // The angle images are grouped by the first one's name up to its last "-" (demoImages.ts, rowFiles), and the
    // README's example globs kestrel-angle-*.png: the compensator image must be neither.
    expect(PLATE.startsWith('kestrel-angle-')).toBe(false);
    expect(angleFiles).toEqual(['kestrel-angle-00.0deg.png', 'kestrel-angle-22.5deg.png', 'kestrel-angle-45.0deg.png', 'kestrel-angle-67.5deg.png']);
    for (const f of angleFiles) {
      const e = entries.find((d) => d.file === f)!;
      expect(e.set).toEqual([...angleFiles, PLATE]);
      expect(e.plate).toBe(PLATE);
    }
    const own = entries.find((d) => d.file === PLATE)!;
    expect(own.analyses).toEqual(['angle-series']);
    expect(own.set).toEqual([...angleFiles, PLATE]);
    expect(own.plateSampleFree).toBe('0,0,960,120');
    // the app's form gets it as a suggestion for exactly these four images
    expect(demoPlates(entries)).toEqual([{ angles: angleFiles, plate: PLATE, sampleFree: '0,0,960,120' }]);
    // the README's example runs the same reading
    const readme = readFileSync(join(ROOT, 'README.md'), 'utf8');
    expect(readme).toContain(`retarda angle-series kestrel-angle-*.png --plate ${PLATE} --plate-sample-free 0,0,960,120`);
  });

  it('has the angle images\' size and framing: the channel on the same rows, the sample-free area without sample', () => {
    const plate = load(PLATE), angles = angleFiles.map(load);
    expect(plate.channels).toBe(3);
    for (const a of angles) expect([a.width, a.height]).toEqual([plate.width, plate.height]);
    const { width: W, height: H } = plate;
    const free: Rect = parseRect(entries.find((d) => d.file === PLATE)!.plateSampleFree!, 'sample-free');
    // The sample-free area is one colour up to the camera noise: the renderer adds noise of SD 0.01 to the stored
    // values (src/optics/render.ts, make-samples.ts), 8-bit rounding adds 1/255/sqrt(12) (a channel clipped at 0 has
    // less); the same area moved down onto the channel takes in its colours.
    const stats = (r: Rect) => {
      const mean = [0, 0, 0], sq = [0, 0, 0];
      let n = 0;
      for (let y = r.y; y < r.y + r.height; y++) for (let x = r.x; x < r.x + r.width; x++) {
        valuesAt(plate, y * W + x).forEach((v, c) => { mean[c] += v; sq[c] += v * v; });
        n++;
      }
      const sd = mean.map((m, c) => Math.sqrt(sq[c] / n - (m / n) ** 2));
      return { mean: mean.map((m) => m / n), sd };
    };
    const { mean, sd } = stats(free);
    for (const v of sd) expect(v).toBeLessThan(Math.hypot(0.01, 1 / 255 / Math.sqrt(12)) * 1.05);
    expect(Math.max(...stats({ ...free, y: 260 }).sd)).toBeGreaterThan(0.05);
    // Where the channel is: in the compensator image, pixels whose colour is off the sample-free colour by more than
    // 6 noise SDs (a sample's colour); in the angle series, pixels whose stored value changes between the four angles
    // by more than 0.03 (the angle images' noise SD is 0.004, make-samples.ts; the walls are drawn alike in all four).
    const inPlate = (i: number) => valuesAt(plate, i).some((v, c) => Math.abs(v - mean[c]) > 0.06);
    const inAngles = (i: number) => {
      const v = angles.map((a) => valuesAt(a, i)[0]);
      return Math.max(...v) - Math.min(...v) > 0.03;
    };
    // Column strips of 120 px: the channel's first and last rows agree within 2 px (the walls slope by 10 px over
    // the width; a turned or shifted framing, like kestrel-channel-plate.png's 45 deg, would move them by far more).
    for (let x0 = 0; x0 < W; x0 += 120) {
      const p = channelRows(W, H, inPlate, x0, x0 + 120), q = channelRows(W, H, inAngles, x0, x0 + 120);
      expect(p).not.toBeNull();
      expect(q).not.toBeNull();
      expect(Math.abs(p![0] - q![0])).toBeLessThanOrEqual(2);
      expect(Math.abs(p![1] - q![1])).toBeLessThanOrEqual(2);
      // the channel is a band of the picture, not all of it
      expect(p![1] - p![0]).toBeGreaterThan(H / 3);
      expect(p![1] - p![0]).toBeLessThan(H - free.height);
    }
  });

  it('the angle series with it gives S, its intervals and the profile; without it they are not determined', async () => {
    const angles = angleFiles.map(load);
    const sampleFree = parseRect('0,0,960,120', 'sample-free');
    const profile = { autoWalls: true, bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8 };
    const withPlate = (await analyseAngleSeries(angles, { plate: load(PLATE), plateSampleFree: sampleFree, profile })).result;
    expect(withPlate.notDetermined).toBeUndefined();
    // the compensator image decided the 90-deg choice itself in most pixels (the rest by their neighbours)
    expect(withPlate.reading.plateResolvedFraction as number).toBeGreaterThan(0.5);
    expect(withPlate.order2D).toBeGreaterThanOrEqual(withPlate.order2DCiLow!);
    expect(withPlate.order2D).toBeLessThanOrEqual(withPlate.order2DCiHigh!);
    const p = withPlate.profile!;
    expect(p.notDetermined).toBeUndefined();
    for (const band of [p.core, p.skin]) {
      expect(Number.isFinite(band.order)).toBe(true);
      expect(band.ciLow).toBeLessThanOrEqual(band.order);
      expect(band.order).toBeLessThanOrEqual(band.ciHigh);
    }
    expect(p.bins).toHaveLength(20);
    for (const b of p.bins) expect(b.ciLow <= b.order && b.order <= b.ciHigh).toBe(true);
    // The same four images without it: orientation modulo 90 deg only, so S is withheld (README, "Known limits").
    const without = (await analyseAngleSeries(angles, { profile: null })).result;
    expect(without.notDetermined?.order).toContain('--plate');
    expect(Number.isFinite(without.order2D)).toBe(false);
  }, 60_000);

  it('the angle-series form takes it until another is chosen, and its command line is the README\'s', () => {
    const names = [...angleFiles, PLATE, 'other.png'];
    const images = names.map((name, k) => ({ id: `i${k}`, name }));
    const choice = { images, activeId: 'i0', plates: demoPlates(entries) };
    const suggested = opticalImages(DEFAULT_OPTICAL_FORM, choice);
    expect(suggested.angleKeys).toEqual(['i0', 'i1', 'i2', 'i3']);
    expect(suggested).toMatchObject({ plateKey: 'i4', plateSampleFree: '0,0,960,120' });
    const request = opticalRequestOf('angle-series', DEFAULT_OPTICAL_FORM, choice);
    expect(opticalCommandLine(request)).toBe(`retarda angle-series ${angleFiles.join(' ')} --plate ${PLATE} --plate-sample-free 0,0,960,120`);
    // "none" chosen: no compensator image; another chosen: that one, with the area typed for it
    expect(opticalImages({ ...DEFAULT_OPTICAL_FORM, quadPlate: NO_PLATE }, choice).plateKey).toBe('');
    expect(opticalImages({ ...DEFAULT_OPTICAL_FORM, quadPlate: 'i5', quadPlateBackground: '1,2,3,4' }, choice)).toMatchObject({ plateKey: 'i5', plateSampleFree: '1,2,3,4' });
    // other angle images (or the same in another order) get no suggestion
    const reordered = { ...choice, images: [images[1], images[0], ...images.slice(2)], activeId: 'i1' };
    expect(opticalImages(DEFAULT_OPTICAL_FORM, reordered).plateKey).toBe('');
    // without the compensator image in the session, none
    expect(opticalImages(DEFAULT_OPTICAL_FORM, { ...choice, images: images.filter((i) => i.name !== PLATE) }).plateKey).toBe('');
  });
});
