/**
 * Validation area 'trend': a reading against a process variable (`retarda trend --reading whole --axis-deg 23`),
 * measured on seeded sets of five images from the independent renderer (tests/validation/render/), each a uniform
 * texture whose ensemble order is the construction's S(x) = 0.3 + 0.08 x at x = 1..5 (the variable's values), the
 * director fixed at 23 deg. Each image's document is made as the CLI makes it (analyseOrientation with --axis-deg 23)
 * and the points and line by trendResult, as `retarda trend` and the app do.
 *
 * Rows: the fraction of 95 % slope and intercept intervals that hold the constructed 0.08 and 0.3 (goal 90-99 %), with
 * the rates the same intervals reach 20 % narrower and wider in the note; the median |slope error| against the
 * median half-width of the slope's interval, for a reader's sense of the precision. The quick subset renders fewer
 * sets and accepts what chance allows at that count (three binomial standard deviations about 95 %).
 */
import { analyseOrientation, trendResult, trendVariable } from '../../src/analyses/index.ts';
import { within, type ValidationArea, type ValidationRow } from './goals.ts';
import { renderScene, scene } from './render/index.ts';

const AXIS = 23, X = [1, 2, 3, 4, 5], SLOPE = 0.08, INTERCEPT = 0.3;

const median = (v: number[]) => { const s = [...v].sort((a, b) => a - b); return s[s.length >> 1]; };

async function oneSet(seed: number) {
  const items = [];
  for (const [k, x] of X.entries()) {
    const S = INTERCEPT + SLOPE * x;
    const img = renderScene(scene({ name: 'trend', seed: 9000 + 10 * seed + k, width: 320, height: 240, channel: null, directorDeg: AXIS, order: { core: S, skin: S } })).image;
    const { result } = await analyseOrientation(img, { axisDeg: AXIS });
    items.push({ source: `set ${seed} x ${x}`, value: x, doc: result });
  }
  return trendResult(items, 'whole', trendVariable('x', ''));
}

const trend: ValidationArea = async ({ quick }) => {
  const n = quick ? 20 : 120;
  const hits = { slope: [0, 0, 0], intercept: [0, 0, 0] };
  const scales = [1, 0.8, 1.2];
  const err: number[] = [], half: number[] = [];
  let open = 0;
  for (let r = 0; r < n; r++) {
    const f = (await oneSet(r)).fit;
    if (!Number.isFinite(f.slope)) { open++; continue; }
    scales.forEach((s, k) => {
      if (Math.abs(f.slope - SLOPE) <= s * (f.slopeCiHigh - f.slope)) hits.slope[k]++;
      if (Math.abs(f.intercept - INTERCEPT) <= s * (f.interceptCiHigh - f.intercept)) hits.intercept[k]++;
    });
    err.push(Math.abs(f.slope - SLOPE));
    half.push(f.slopeCiHigh - f.slope);
  }
  const band = 3 * Math.sqrt((0.95 * 0.05) / n) * 100;
  const [lo, hi] = quick ? [Math.max(0, 95 - band), Math.min(100, 95 + band)] : [90, 99];
  const pct = (k: number) => (100 * k) / n;
  const kase = `${n} sets of ${X.length} textures (320 x 240), S = ${INTERCEPT} + ${SLOPE} x at x = ${X.join(', ')}, S_axis at ${AXIS} deg`;
  const rows: ValidationRow[] = (['slope', 'intercept'] as const).map((k) => within('trend', kase, `${k} interval holds the truth (%)`, pct(hits[k][0]), lo, hi, '%',
    `x0.8 ${pct(hits[k][1]).toFixed(1)} %, x1.2 ${pct(hits[k][2]).toFixed(1)} %; ${open} of ${n} not determined`));
  rows.push({
    area: 'trend', case: kase, quantity: 'median |slope error|', value: median(err), goal: `<= median interval half-width (${median(half).toFixed(4)})`,
    pass: median(err) <= median(half),
  });
  return rows;
};
export default trend;
