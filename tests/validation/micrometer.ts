/**
 * Validation of the micrometer calibration (`retarda calibrate`, calibrateFromMicrometer) on rulers
 * drawn by the independent renderer in ./render/ruler.ts. Truth is the construction: the pixel size the
 * ruler was drawn at.
 *
 * - Kinds: every kind of ruler the calibration must read (mixed tick lengths with a baseline and
 *   numbers, partial rulers, both polarities, angles including near 0 and 90 deg, divisions of 1, 2 and
 *   10 um at 0.05-2 um/px, blur, noise, uneven lamp, 8 and 16 bits). Goal: |error| <= 0.05 % on every
 *   seed (the issue's goal).
 * - Coverage: seeded random rulers (small images, so the statistical part dominates), a third of them
 *   with a graticule tolerance (the drawn division off its nominal value by a uniform draw within the
 *   tolerance, the tolerance given to the calibration) and a third with random line placement errors.
 *   Two tests on the same cases (docs/methods.md, "Interval coverage"):
 *   1. the stated interval (k = t_95.45(nu_eff), 2 for many ticks) covers the true pixel size in 90-99 %
 *      of the cases;
 *   2. its width is right: each error over its standard uncertainty, mapped through Student's t with the
 *      case's effective degrees of freedom to a normal score, must have a spread (SD) of 1 within the 99 %
 *      sampling band of n normal scores, 1 +- 2.576 / sqrt(2 (n - 1)) (the SD of a sample SD, normal
 *      theory). Intervals made 20 % narrower or 20 % wider scale the scores by 1.25 or 0.83 and fall out
 *      of the band at the full count (and in tests/calibrate/coverage.test.ts): the rows below show it.
 */
import { calibrateFromMicrometer, studentTwoSided, type MicrometerCalibration } from '../../src/calibrate/index.ts';
import { isInputError } from '../../src/common/errors.ts';
import { atMost, within, type ValidationArea, type ValidationRow } from './goals.ts';
import { renderRulerScene, seededNormal, seededUniform, type RulerScene } from './render/ruler.ts';

const AREA = 'micrometer';

/** Goal of the issue: the calibration within 0.05 % of the truth. */
export const ERROR_GOAL_PERCENT = 0.05;

/** Coverage cases in the full run and in the quick subset, and the acceptance window of the coverage rate (%). */
export const COVERAGE_CASES = { full: 1000, quick: 150 };
export const COVERAGE_WINDOW = [90, 99] as const;

/** A typical 10 um micrometer as in the issue: long / medium / short ticks from a thin baseline, numbers beside the long ones. */
function issueRuler(seed: number, o: Partial<RulerScene> = {}): RulerScene {
  const u = seededUniform(seed * 101 + 7);
  return {
    width: 800, height: 600, umPerPx: 0.65, divisionUm: 10, angleDeg: 92.5, lineWidthUm: 1.5, shortUm: 30, mediumUm: 50, longUm: 80,
    baselineUm: 1.5, numbers: 'beside', psfSigmaUm: 0.55, polarity: 'dark', contrast: 0.65, lampGradient: 0.25, lampVignette: 0.3,
    readSd: 0.008, shotGain: 0.0005, bits: 8, seed, sub: 3,
    originPx: { x: 60 + 20 * u(), y: 330 + 40 * u() }, firstTick: 0, lastTick: 200, ...o,
  };
}

/** Rulers of other divisions and pixel sizes: line width, tick lengths and PSF scale with the division and the optics. */
function scaledRuler(seed: number, divisionUm: number, umPerPx: number, psfSigmaUm: number, o: Partial<RulerScene> = {}): RulerScene {
  return issueRuler(seed, {
    divisionUm, umPerPx, psfSigmaUm, lineWidthUm: 0.15 * divisionUm, shortUm: 3 * divisionUm, mediumUm: 5 * divisionUm,
    longUm: 8 * divisionUm, baselineUm: 0.15 * divisionUm, originPx: { x: 40, y: 300 }, ...o,
  });
}

export interface Kind {
  name: string;
  quick?: boolean;
  make: (seed: number) => RulerScene;
}

/** Every kind of ruler the calibration must read. */
export const KINDS: Kind[] = [
  { name: '10 um, 0.65 um/px, turned 2.5 deg, baseline, numbers, blur, uneven lamp, 8-bit (the issue)', quick: true, make: (s) => issueRuler(s) },
  { name: 'same, bright lines on dark', quick: true, make: (s) => issueRuler(s, { polarity: 'bright', contrast: 0.6 }) },
  { name: 'same, numbers above the long ticks, 16-bit', make: (s) => issueRuler(s, { numbers: 'above', bits: 16 }) },
  { name: 'ticks at 0 deg (ruler vertical)', quick: true, make: (s) => issueRuler(s, { angleDeg: 0, originPx: { x: 300, y: 580 }, firstTick: -200, lastTick: 0, numbers: null }) },
  { name: 'ticks at 0.4 deg', make: (s) => issueRuler(s, { angleDeg: 0.4, originPx: { x: 300, y: 580 }, firstTick: -200, lastTick: 0 }) },
  { name: 'ticks at 90 deg (ruler horizontal)', quick: true, make: (s) => issueRuler(s, { angleDeg: 90 }) },
  { name: 'ticks at 89.6 deg', make: (s) => issueRuler(s, { angleDeg: 89.6 }) },
  { name: 'ticks at 45 deg', make: (s) => issueRuler(s, { angleDeg: 45, originPx: { x: 150, y: 80 } }) },
  { name: 'ticks at 123 deg', quick: true, make: (s) => issueRuler(s, { angleDeg: 123, originPx: { x: 60, y: 560 } }) },
  { name: 'ticks at 178.8 deg', make: (s) => issueRuler(s, { angleDeg: 178.8, originPx: { x: 300, y: 20 }, firstTick: -200, lastTick: 0 }) },
  { name: 'partial ruler: its end in the field', quick: true, make: (s) => issueRuler(s, { firstTick: 0, lastTick: 32, originPx: { x: 250, y: 350 } }) },
  { name: 'partial ruler: crossing a corner', make: (s) => issueRuler(s, { angleDeg: 130, originPx: { x: 560, y: 90 }, firstTick: -200, lastTick: 200 }) },
  { name: 'plain grating: equal ticks across the field, no baseline', make: (s) => issueRuler(s, { shortUm: 2000, mediumUm: 2000, longUm: 2000, baselineUm: 0, numbers: null, originPx: { x: 400, y: 1200 }, firstTick: -200 }) },
  { name: 'heavy blur (PSF sigma 1.6 px)', quick: true, make: (s) => issueRuler(s, { psfSigmaUm: 1.05 }) },
  { name: 'noisy (read noise 0.04)', quick: true, make: (s) => issueRuler(s, { readSd: 0.04 }) },
  { name: 'strongly uneven lamp (gradient 0.5, vignette 0.5)', make: (s) => issueRuler(s, { lampGradient: 0.5, lampVignette: 0.5 }) },
  { name: '1 um at 0.05 um/px (100x oil), 16-bit', quick: true, make: (s) => scaledRuler(s, 1, 0.05, 0.09, { bits: 16, numbers: null }) },
  { name: '1 um at 0.1 um/px', make: (s) => scaledRuler(s, 1, 0.1, 0.13) },
  { name: '1 um at 0.2 um/px', make: (s) => scaledRuler(s, 1, 0.2, 0.16, { numbers: null }) },
  { name: '2 um at 0.05 um/px', make: (s) => scaledRuler(s, 2, 0.05, 0.09, { bits: 16 }) },
  { name: '2 um at 0.325 um/px', quick: true, make: (s) => scaledRuler(s, 2, 0.325, 0.23) },
  { name: '10 um at 0.325 um/px', make: (s) => scaledRuler(s, 10, 0.325, 0.23, { lineWidthUm: 1.5 }) },
  { name: '10 um at 1 um/px', make: (s) => scaledRuler(s, 10, 1, 0.9, { lineWidthUm: 2 }) },
  { name: '10 um at 2 um/px', quick: true, make: (s) => scaledRuler(s, 10, 2, 1.15, { lineWidthUm: 2 }) },
  { name: '10 um at 0.1 um/px (100 px divisions)', make: (s) => scaledRuler(s, 10, 0.1, 0.13, { width: 1600, height: 360, lineWidthUm: 1.5, angleDeg: 91, originPx: { x: 30, y: 280 } }) },
  { name: '10 um at 0.05 um/px (200 px divisions)', make: (s) => scaledRuler(s, 10, 0.05, 0.09, { width: 2048, height: 320, lineWidthUm: 1.5, angleDeg: 90.5, originPx: { x: 20, y: 300 }, shortUm: 10, mediumUm: 12, longUm: 14, numbers: null }) },
];

export interface KindResult { errorsPercent: number[]; refusals: string[]; lines: number[]; warnings: number }

/** Calibrates one rendered scene (nominal division and tolerance as given), returning the relative error or the refusal. */
export function calibrateScene(scene: RulerScene, nominalDivisionUm = scene.divisionUm, toleranceUm = 0):
  { error: number; c: MicrometerCalibration } | { refused: string } {
  const img = renderRulerScene(scene);
  try {
    const c = calibrateFromMicrometer(img, { divisionUm: nominalDivisionUm, divisionToleranceUm: toleranceUm });
    return { error: c.umPerPx / scene.umPerPx - 1, c };
  } catch (e) {
    if (isInputError(e)) return { refused: (e as Error).message };
    throw e;
  }
}

export function runKind(kind: Kind, seeds: number[]): KindResult {
  const out: KindResult = { errorsPercent: [], refusals: [], lines: [], warnings: 0 };
  for (const seed of seeds) {
    const r = calibrateScene(kind.make(seed));
    if ('refused' in r) out.refusals.push(r.refused);
    else {
      out.errorsPercent.push(100 * r.error);
      out.lines.push(r.c.lines);
      out.warnings += r.c.warnings.length;
    }
  }
  return out;
}

/** One seeded coverage case: a small random ruler, and the nominal division and tolerance the calibration is told. */
export function coverageScene(seed: number): { scene: RulerScene; nominalDivisionUm: number; toleranceUm: number } {
  const u = seededUniform(seed * 7919 + 13);
  const P = 5 + 9 * u();
  const D = [1, 2, 10][Math.floor(3 * u())];
  const kind = Math.floor(3 * u());
  // A third: graticule tolerance T comparable to the fit's uncertainty, the drawn division uniform within +-T.
  const toleranceUm = kind === 1 ? D * 2e-4 * (0.5 + 1.5 * u()) : 0;
  const drawnD = D + toleranceUm * (2 * u() - 1);
  const scene: RulerScene = {
    width: 256, height: 192, umPerPx: D / P, divisionUm: drawnD, angleDeg: 180 * u(), lineWidthUm: 0.15 * D,
    shortUm: 3 * D, mediumUm: 5 * D, longUm: 8 * D, baselineUm: u() < 0.5 ? 0.15 * D : 0, numbers: u() < 0.5 ? 'beside' : null,
    psfSigmaUm: ((0.5 + u()) * D) / P, polarity: u() < 0.5 ? 'dark' : 'bright', contrast: 0.3 + 0.5 * u(),
    lampGradient: 0.4 * u(), lampVignette: 0.4 * u(), readSd: 0.005 + 0.03 * u(), bits: u() < 0.5 ? 8 : 16, seed, sub: 2,
    // A third: line placement errors of the graticule, SD up to 1 % of a division.
    lineJitterUm: kind === 2 ? 0.01 * D * u() : 0,
    originPx: { x: 128 + 60 * (u() - 0.5), y: 96 + 60 * (u() - 0.5) },
  };
  return { scene, nominalDivisionUm: D, toleranceUm };
}

/** One coverage case: error / u_c, k and nu_eff, or `refused` (an InputError or a loud warning: no number to rely on). */
export interface CoverageCase { seed: number; z: number; k: number; dof: number; refused: boolean }

/** z = error / u_c and k for every coverage case (refusals marked). */
export function runCoverage(count: number, firstSeed = 1): CoverageCase[] {
  const out: CoverageCase[] = [];
  for (let seed = firstSeed; seed < firstSeed + count; seed++) {
    const { scene, nominalDivisionUm, toleranceUm } = coverageScene(seed);
    const r = calibrateScene(scene, nominalDivisionUm, toleranceUm);
    // A refusal, or a number flagged with a loud warning (not to be relied on), counts as no number.
    if ('refused' in r || r.c.warnings.some((w) => w.startsWith('CHECK THE RULER'))) out.push({ seed, z: NaN, k: NaN, dof: NaN, refused: true });
    else out.push({ seed, z: r.error / r.c.relativeUncertainty, k: r.c.coverageFactor, dof: r.c.effectiveDof, refused: false });
  }
  return out;
}

/** Share (%) of the calibrated cases whose interval, its half-width scaled by `scale`, covers the truth. */
export function coverageRate(cases: CoverageCase[], scale = 1): number {
  const done = cases.filter((c) => !c.refused);
  return (100 * done.filter((c) => Math.abs(c.z) <= scale * c.k).length) / done.length;
}

/** Standard normal quantile by bisection on the normal CDF (studentTwoSided with infinite degrees of freedom). */
function normalQuantile(p: number): number {
  let lo = -40;
  let hi = 40;
  const cdf = (x: number) => 0.5 + 0.5 * Math.sign(x) * studentTwoSided(Math.abs(x), Infinity);
  for (let i = 0; i < 200; i++) {
    const mid = 0.5 * (lo + hi);
    if (cdf(mid) < p) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * SD of the normal scores of the standardised errors, the uncertainties scaled by `scale`: each
 * z / scale is mapped through Student's t with the case's degrees of freedom, F_t, and then Phi^-1.
 */
export function scoreSpread(cases: CoverageCase[], scale = 1): number {
  const scores = cases.filter((c) => !c.refused).map((c) => {
    const t = c.z / scale;
    const f = 0.5 + 0.5 * Math.sign(t) * studentTwoSided(Math.abs(t), c.dof);
    return normalQuantile(Math.min(1 - 1e-15, Math.max(1e-15, f)));
  });
  const mean = scores.reduce((a, b) => a + b, 0) / scores.length;
  return Math.sqrt(scores.reduce((a, b) => a + (b - mean) ** 2, 0) / (scores.length - 1));
}

/** The 99 % sampling band of the SD of n standard normal scores: 1 +- 2.576 / sqrt(2 (n - 1)). */
export function spreadBand(n: number): [number, number] {
  const h = 2.576 / Math.sqrt(2 * (n - 1));
  return [1 - h, 1 + h];
}

/**
 * The coverage rows of a set of cases: the coverage rate (90-99 %), the spread of the normal scores (the
 * 99 % band for n), the refusal rate, and with `scaled` the same spread for intervals 20 % narrower and
 * 20 % wider, which must fall outside the band.
 */
export function coverageRows(cases: CoverageCase[], scaled: boolean): ValidationRow[] {
  const rows: ValidationRow[] = [];
  const done = cases.filter((c) => !c.refused).length;
  const refusals = cases.length - done;
  const label = `${cases.length} seeded rulers 256 x 192 (random angle, 5-14 px divisions, polarity, blur, noise, lamp, tolerance, line errors)`;
  const [lo, hi] = spreadBand(done);
  rows.push(within(AREA, label, 'coverage % of the stated interval (95.45 %)', coverageRate(cases), COVERAGE_WINDOW[0], COVERAGE_WINDOW[1], '%',
    `${refusals} refused or flagged; binomial SD at 95.45 %: ${(100 * Math.sqrt((0.9545 * 0.0455) / done)).toFixed(2)} %`));
  rows.push(within(AREA, label, 'spread (SD) of the normal scores of error / u', scoreSpread(cases), +lo.toFixed(3), +hi.toFixed(3), '',
    '1 when the stated uncertainties are right; 99 % band for this many cases'));
  rows.push(atMost(AREA, label, 'refused or flagged %', (100 * refusals) / cases.length, 5, '%', 'no number, or one under a loud warning: allowed on the faintest rulers'));
  if (scaled) {
    for (const scale of [0.8, 1.2]) {
      const spread = scoreSpread(cases, scale);
      rows.push({
        area: AREA, case: label, quantity: `spread of the scores with intervals ${scale < 1 ? '20 % narrower' : '20 % wider'}`, value: spread,
        goal: `outside ${lo.toFixed(3)}-${hi.toFixed(3)}`, pass: spread < lo || spread > hi,
        note: `shows the test can tell a wrong interval; coverage would read ${coverageRate(cases, scale).toFixed(1)} %`,
      });
    }
  }
  return rows;
}

function refusalRows(): ValidationRow[] {
  const rows: ValidationRow[] = [];
  // Noise alone: no ruler, so no number.
  const n = seededNormal(5);
  const noise = { width: 320, height: 240, data: Float32Array.from({ length: 320 * 240 }, () => 0.5 + 0.05 * n()) };
  let refused = false;
  try { calibrateFromMicrometer(noise, { divisionUm: 10 }); } catch (e) { refused = isInputError(e); }
  rows.push({ area: AREA, case: 'noise only (no ruler)', quantity: 'refused (1 = yes)', value: refused ? 1 : 0, goal: '1', pass: refused });
  // Two scales laid over each other (10 um and 7.3 um ticks): not one regular grid, so refused or a loud warning.
  const a = renderRulerScene(issueRuler(1, { numbers: null }));
  const b = renderRulerScene(issueRuler(2, { numbers: null, divisionUm: 7.3, originPx: { x: 90, y: 300 } }));
  const both = { width: a.width, height: a.height, data: a.data.map((v, i) => v * b.data[i] / 0.8) };
  let flagged = false;
  let note = '';
  try {
    const c = calibrateFromMicrometer(both, { divisionUm: 10 });
    flagged = c.warnings.some((w) => w.startsWith('CHECK THE RULER'));
    note = flagged ? 'loud warning' : `no warning; ${c.umPerPx} um/px`;
  } catch (e) {
    flagged = isInputError(e);
    note = 'refused';
  }
  rows.push({ area: AREA, case: 'two scales overlaid (10 and 7.3 um)', quantity: 'refused or warned (1 = yes)', value: flagged ? 1 : 0, goal: '1', pass: flagged, note });
  return rows;
}

const area: ValidationArea = async ({ quick }) => {
  const rows: ValidationRow[] = [];
  const seeds = quick ? [1] : [1, 2, 3];
  for (const kind of KINDS.filter((k) => !quick || k.quick)) {
    const r = runKind(kind, seeds);
    const worst = r.refusals.length > 0 ? NaN : Math.max(...r.errorsPercent.map(Math.abs));
    const note = r.refusals.length > 0 ? `refused: ${r.refusals[0]}` : `${seeds.length} seeds; ticks fitted ${Math.min(...r.lines)}-${Math.max(...r.lines)}; ${r.warnings} warning(s)`;
    rows.push(atMost(AREA, kind.name, '|error| % (max over seeds)', worst, ERROR_GOAL_PERCENT, '%', note));
  }
  rows.push(...refusalRows());
  const count = quick ? COVERAGE_CASES.quick : COVERAGE_CASES.full;
  rows.push(...coverageRows(runCoverage(count), !quick));
  return rows;
};

export default area;
