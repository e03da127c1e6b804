/**
 * The optical readings of 12 MP images as a user meets them, for `npm run bench` (tests/bench/benchOptics.ts): the
 * first reading in a fresh process, then the same reading again in that process (its look-up tables and pooled arrays
 * kept). The images are written once as raw 8-bit planes (writeBenchImages, by the bench's own process) and read here
 * by a process that has run nothing of the optics before, so the first reading pays what a `retarda` command pays:
 * the kernel's compile, the look-up tables, fresh output arrays. (Its modules are loaded before the first reading, as
 * the command's are before it reads its files: nothing of the optics has run.) The bench runs timeReadings bundled
 * into one file, as the command is (tests/bench/benchOptics.ts); directly:
 *
 *   node bin/run-ts.mjs tests/optics/benchFresh.ts DIR plate|pair|series   -> one JSON line of seconds
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { makeImage, type Image } from '../../src/image/index.ts';
import { benchPlateImage } from './benchPlate.ts';
import { analyseAngleSeries, analysePlatePair, OPTICS_MAX_PIXELS } from '../../src/analyses/index.ts';
import { readPlate, recycleAngleSeries, renderSampleImage, resolveTrain, turnedTrain, type SampleRetarder } from '../../src/optics/index.ts';

/** What a child reports: the first reading in its process and the repeated one, seconds. */
export interface FreshTimes { kind: BenchReading; firstS: number; againS: number; pixels: number; cells?: number; firstCpuS: number; againCpuS: number }
export type BenchReading = 'plate' | 'pair' | 'series';

/** The images of one reading, by the file names they are written under (BENCH_FILES). */
export const BENCH_FILES: Record<BenchReading, string[]> = { plate: ['plate'], pair: ['pairA', 'pairB'], series: ['s0', 's1', 's2', 's3'] };

const W = 4000, H = 3000;
/** Rendered at this size and repeated over the 12 MP frame: rendering every pixel would take most of a minute. */
const BW = 500, BH = 375;

/** A sample whose slow axis turns across the frame and whose retardance rises down it (50-450 nm), sample-free on the left. */
const sample = (x: number, y: number): SampleRetarder =>
  x < 40 ? { angleRad: 0, retardanceNm: 0 } : { angleRad: ((x / BW) * 160 - 80) * (Math.PI / 180), retardanceNm: 50 + Math.round((400 * y) / BH) };

/** A rendered image repeated over width x height (noise included in the rendered block). */
function tiled(block: Image, width: number, height: number): Image {
  const planes = block.planes.map((p) => {
    const out = new Float32Array(width * height);
    for (let y = 0; y < height; y++) for (let x = 0; x < width; x += BW) out.set(p.subarray((y % BH) * BW, (y % BH) * BW + Math.min(BW, width - x)), y * width + x);
    return out;
  });
  return makeImage({ ...block, width, height, planes });
}

/** The angle series' images per side: 12 MP, or its pixel limit when that is smaller (the same 4:3 shape). */
export const SERIES_SCALE = Math.min(1, Math.sqrt(OPTICS_MAX_PIXELS['angle-series'] / (W * H)));

/**
 * Renders the bench's images into `dir` (BENCH_FILES): the compensator image of tests/optics/benchPlate.ts; two
 * compensator images of `sample`, the optics turned by 45 deg for the second; an angle series of four (0, 22.5, 45,
 * 67.5 deg) at SERIES_SCALE. Camera exposure 0.75, noise 0.003.
 */
export function writeBenchImages(dir: string): void {
  writeBenchImage(dir, 'plate', benchPlateImage(W, H));
  const camera = { gains: [1, 1, 1] as [number, number, number], exposure: 0.75 };
  const train = resolveTrain();
  const render = (t: Parameters<typeof renderSampleImage>[3], seed: number, width = W, height = H) =>
    tiled(renderSampleImage(BW, BH, sample, t, { noiseSd: 0.003, seed, camera }), width, height);
  writeBenchImage(dir, 'pairA', render(train, 1));
  writeBenchImage(dir, 'pairB', render(turnedTrain(train, 45), 2));
  const SW = Math.floor(W * SERIES_SCALE), SH = Math.floor(H * SERIES_SCALE);
  [0, 22.5, 45, 67.5].forEach((d, k) => writeBenchImage(dir, `s${k}`, render({ polariserDeg: d, analyserDeg: d + 90, compensator: null }, 5 + k, SW, SH)));
}

/** Writes an 8-bit image (planes of code / 255) as its size and its planes' codes. */
export function writeBenchImage(dir: string, name: string, img: Image): void {
  const n = img.width * img.height, bytes = new Uint8Array(n * img.channels);
  img.planes.forEach((p, c) => { for (let i = 0; i < n; i++) bytes[c * n + i] = Math.round(p[i] * 255); });
  writeFileSync(join(dir, `${name}.json`), JSON.stringify({ width: img.width, height: img.height, channels: img.channels }));
  writeFileSync(join(dir, `${name}.raw`), bytes);
}

/** An image written by writeBenchImage: float32 planes of code / 255, as the PNG decoder makes them, sRGB. */
function readBenchImage(dir: string, name: string): Image {
  const { width, height, channels } = JSON.parse(readFileSync(join(dir, `${name}.json`), 'utf8')) as { width: number; height: number; channels: 1 | 3 };
  const bytes = readFileSync(join(dir, `${name}.raw`)), n = width * height;
  const planes = Array.from({ length: channels }, (_, c) => {
    const p = new Float32Array(n);
    for (let i = 0; i < n; i++) p[i] = bytes[c * n + i] / 255;
    return p;
  });
  return makeImage({ width, height, channels, planes, bitDepth: 8, encoding: 'srgb', source: { name } });
}

/** Times the first reading of `kind` in this process and (with `repeats` 2) the same reading again. */
export async function timeReadings(dir: string, kind: BenchReading, repeats = 2): Promise<FreshTimes> {
  const images = BENCH_FILES[kind].map((f) => readBenchImage(dir, f));
  const pixels = images[0].width * images[0].height;
  // Wall time, and the process's processor time (every thread's: on a shared machine the wall time also holds waits).
  const times: number[] = [], cpu: number[] = [];
  let cells: number | undefined;
  let last: Awaited<ReturnType<typeof analyseAngleSeries>> | null = null;
  for (let r = 0; r < repeats; r++) {
    const t0 = performance.now(), c0 = process.cpuUsage();
    if (kind === 'plate') cells = readPlate(images[0], { camera: { gains: [1, 1, 1], exposure: 0.75 } }).cellsMatched;
    else if (kind === 'pair') await analysePlatePair(images[0], images[1], {});
    else {
      // Read again as the app's worker does: the reading before hands its arrays back.
      if (last) recycleAngleSeries(last);
      last = null;
      last = await analyseAngleSeries(images, {});
    }
    times.push((performance.now() - t0) / 1000);
    const c = process.cpuUsage(c0);
    cpu.push((c.user + c.system) / 1e6);
  }
  return { kind, firstS: times[0], againS: times[1] ?? NaN, pixels, cells, firstCpuS: cpu[0], againCpuS: cpu[1] ?? NaN };
}

// Run directly (not when bundled, as the bench runs it).
if (process.argv[1]?.endsWith('/benchFresh.ts')) {
  const [dir, kind] = process.argv.slice(2);
  if (!dir || !(kind in BENCH_FILES)) throw new Error('usage: benchFresh.ts DIR plate|pair|series');
  console.log(JSON.stringify(await timeReadings(dir, kind as BenchReading)));
}
