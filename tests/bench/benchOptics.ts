import { benchPlateRead } from '../optics/benchPlate.ts';
import { analyseAngleSeries, analysePlatePair, OPTICS_MAX_PIXELS } from '../../src/analyses/index.ts';
import { makeImage, type Image } from '../../src/image/index.ts';
import { recycleAngleSeries, renderSampleImage, resolveTrain, turnedTrain, type SampleRetarder } from '../../src/optics/index.ts';

/** One line of the bench's closing table: a figure beside its goal. */
export interface GoalRow { what: string; value: string; goal: string; met: boolean }

/** Goals for reading 12 MP images (README, "Speed"): one compensator image, the two-image reading, an angle series. */
const GOALS_S = { plate: 0.6, pair: 1.5, series: 1.0 };

const W = 4000, H = 3000;
/** Rendered at this size and repeated over the 12 MP frame: rendering every pixel would take most of a minute. */
const BW = 500, BH = 375;

/** A sample whose slow axis turns across the frame and whose retardance rises down it (50-450 nm), sample-free on the left. */
const sample = (x: number, y: number): SampleRetarder =>
  x < 40 ? { angleRad: 0, retardanceNm: 0 } : { angleRad: ((x / BW) * 160 - 80) * (Math.PI / 180), retardanceNm: 50 + Math.round((400 * y) / BH) };

/** The angle series at 12 MP, or at its pixel limit when that is smaller (the same 4:3 shape). */
const SERIES_SCALE = Math.min(1, Math.sqrt(OPTICS_MAX_PIXELS['angle-series'] / (W * H)));
const SW = Math.floor(W * SERIES_SCALE), SH = Math.floor(H * SERIES_SCALE);

/** A rendered image repeated over width x height (noise included in the rendered block). */
function tiled(block: Image, width = W, height = H): Image {
  const planes = block.planes.map((p) => {
    const out = new Float32Array(width * height);
    for (let y = 0; y < height; y++) for (let x = 0; x < width; x += BW) out.set(p.subarray((y % BH) * BW, (y % BH) * BW + Math.min(BW, width - x)), y * width + x);
    return out;
  });
  return makeImage({ ...block, width, height, planes });
}

const best = async (n: number, run: () => Promise<unknown>) => {
  let s = Infinity;
  for (let r = 0; r < n; r++) {
    const t0 = performance.now();
    await run();
    s = Math.min(s, (performance.now() - t0) / 1000);
  }
  return s;
};

/** Optics part of the benchmark: reading 12 MP images in this process (best of 2), as the CLI and the app run them. */
export async function benchOptics(): Promise<GoalRow[]> {
  const plate = { seconds: Infinity, pixels: 0, cells: 0 };
  for (let r = 0; r < 2; r++) {
    const m = await benchPlateRead();
    if (m.seconds < plate.seconds) Object.assign(plate, m);
  }
  const camera = { gains: [1, 1, 1] as [number, number, number], exposure: 0.75 };
  const train = resolveTrain();
  const render = (t: Parameters<typeof renderSampleImage>[3], seed: number) => tiled(renderSampleImage(BW, BH, sample, t, { noiseSd: 0.003, seed, camera }));
  const a = render(train, 1), b = render(turnedTrain(train, 45), 2);
  const series = [0, 22.5, 45, 67.5].map((d, k) => tiled(renderSampleImage(BW, BH, sample, { polariserDeg: d, analyserDeg: d + 90, compensator: null }, { noiseSd: 0.003, seed: 5 + k, camera }), SW, SH));
  const seriesMp = ((SW * SH) / 1e6).toFixed(1);
  const pair = await best(2, () => analysePlatePair(a, b, {}));
  // The angle series as the app runs it again on the same images: the reading it replaces hands its arrays back
  // (recycleAngleSeries), so the new one's output touches no fresh memory; the first in this process makes them new.
  let last: Awaited<ReturnType<typeof analyseAngleSeries>> | null = null;
  const angleRuns: number[] = [];
  for (let r = 0; r < 3; r++) {
    if (last) recycleAngleSeries(last);
    last = null;
    const t0 = performance.now();
    last = await analyseAngleSeries(series, {});
    angleRuns.push((performance.now() - t0) / 1000);
  }
  const anglesFirst = angleRuns[0], angles = Math.min(...angleRuns.slice(1));
  console.log(`\noptical readings of ${(plate.pixels / 1e6).toFixed(1)} MP images, in this process (best of 2)`);
  const line = (what: string, s: number, goal: number, note = '') => console.log(`  ${what.padEnd(34)} ${s.toFixed(2)} s${note}   goal <= ${goal} s`);
  line('one compensator image (plate)', plate.seconds, GOALS_S.plate, `  (${plate.cells} colour cells searched)`);
  line('two images (plate-pair)', pair, GOALS_S.pair);
  line(`angle series of four (angle-series), ${seriesMp} MP`, angles, GOALS_S.series,
    ` (best of 2 after the first, its arrays handed back; the first in this process ${anglesFirst.toFixed(2)} s)${SERIES_SCALE < 1 ? ' (its pixel limit; the goal is for 12 MP)' : ''}`);
  const row = (what: string, s: number, goal: number): GoalRow => ({ what, value: `${s.toFixed(2)} s`, goal: `<= ${goal} s`, met: s <= goal });
  return [row('one-image reading (plate), 12 MP', plate.seconds, GOALS_S.plate), row('two-image reading (plate-pair), 12 MP', pair, GOALS_S.pair),
    row(`angle series (four images), ${seriesMp} MP${SERIES_SCALE < 1 ? ' (its limit)' : ''}`, angles, GOALS_S.series)];
}
