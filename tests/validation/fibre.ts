/**
 * Validation area 'fibre': fibre diameters and the intervals that follow from them, measured on seeded
 * renderings of the independent fibre renderer (tests/validation/render/fibre.ts), whose truth is the
 * construction itself. Each rendering is written as an 8- or 16-bit PNG and read back by the image decoder,
 * then measured exactly as `retarda diameter IMAGE --um-per-px U --um-per-px-uncertainty R --json` does
 * (analyseDiameter), and the solid linear density as `retarda fibre` does (fibreNumbersResult).
 *
 * Rows:
 * 1. width error per case: |mean width - truth| (truth = the rendered width at the fibre's stations), goal
 *    max(0.2 px, 1 % of the width) (the goal holds from 6 px wide upward; a width the tool gives below 6 px
 *    is held to it too). Below the resolvable width (D < 2 sigma) the tool must say "not determined" with an
 *    upper bound at or above the truth; "not determined" for a fibre of 2.5 sigma or more is a miss.
 * 2. coverage over seeded renderings of the 95 % intervals of the mean width in px, in um (with the pixel
 *    size drawn about its true value with the stated uncertainty) and of the solid linear density (tex, with
 *    the density drawn likewise): the rate must be 90-99 % (docs/methods.md, "Interval coverage"), and the
 *    width of the intervals must be right: the spread of the standardised errors (each error over its
 *    standard uncertainty, mapped through its t distribution to a normal score) must be 1 within the 99 %
 *    sampling band of n trials. Intervals made 20 % narrower or 20 % wider fail that second test; the rows
 *    below each coverage row show it.
 */
import { encode } from 'fast-png';
import { analyseDiameter, fibreNumbersResult, type DiameterDocument } from '../../src/analyses/index.ts';
import { InputError } from '../../src/common/errors.ts';
import { normalCdf, normalQuantile, studentTCdf } from '../../src/fibre/index.ts';
import { decodeImage } from '../../src/image/index.ts';
import { atMost, within, type ValidationArea, type ValidationRow } from './goals.ts';
import {
  normalStream, renderCodes, splitmix32, trueWidthPx, type ValidationFibre, type ValidationScene,
} from './render/fibre.ts';

const AREA = 'fibre';
/** The diameter goal for widths of 6 px and more. */
export const widthGoalPx = (widthPx: number) => Math.max(0.2, 0.01 * widthPx);
const COVERAGE_LO = 90;
const COVERAGE_HI = 99;

/** The scene as the CLI would read it: encoded as a PNG of its bit depth and decoded. */
export function sceneImage(scene: ValidationScene, name: string) {
  const codes = renderCodes(scene);
  const bytes = encode({ width: scene.width, height: scene.height, data: codes, depth: scene.bits, channels: 1 });
  return decodeImage(bytes, name);
}

type DocFibre = DiameterDocument['fibres'][number];

/** Distance of a point from a rendered fibre's axis, px. */
function axisDistance(f: ValidationFibre, x: number, y: number): number {
  const a = (f.angleDeg * Math.PI) / 180;
  return Math.abs(-(x - f.cxPx) * -Math.sin(a) + (y - f.cyPx) * Math.cos(a));
}

/** Points of a found fibre: its kept stations, or its dropped ones when none is kept. */
const pointsOf = (f: DocFibre) => (f.stations.length > 0 ? f.stations : f.droppedStations);

/** The found fibre whose stations lie nearest the rendered fibre's axis (within half its width + 3 px). */
export function matchFibre(doc: DiameterDocument, f: ValidationFibre): DocFibre | null {
  let best: DocFibre | null = null;
  let bestD = Infinity;
  for (const found of doc.fibres) {
    const pts = pointsOf(found);
    if (pts.length === 0) continue;
    const d = pts.reduce((s, p) => s + axisDistance(f, p.xPx, p.yPx), 0) / pts.length;
    if (d < bestD) {
      bestD = d;
      best = found;
    }
  }
  return bestD <= f.widthPx / 2 + 3 ? best : null;
}

/** Truth for a found fibre: the rendered width averaged over its stations' positions. */
export function truthAtStations(found: DocFibre, f: ValidationFibre): number {
  const pts = pointsOf(found);
  return pts.reduce((s, p) => s + trueWidthPx(f, p.xPx, p.yPx), 0) / pts.length;
}

// ---------------------------------------------------------------------------------------------------------
// 1. Width error per case.

export interface WidthCase {
  label: string;
  scene: ValidationScene;
}

const W = 240;
const H = 180;
/** A scene of one straight fibre through the middle; `cnr` = fibre contrast over the read-noise SD. */
function oneFibre(seed: number, widthPx: number, psfSigmaPx: number, angleDeg: number, bits: 8 | 16, cnr: number,
  extra: Partial<ValidationScene> = {}, contrast = -0.4): ValidationScene {
  const base = extra.base ?? 0.6;
  return {
    width: W, height: H, psfSigmaPx, bits, seed, base, readNoise: (Math.abs(contrast) * base) / cnr,
    fibres: [{ cxPx: W / 2 + 0.37, cyPx: H / 2 - 0.21, angleDeg, widthPx, contrast }], ...extra,
  };
}

/** Two parallel fibres of the same width with a gap of `gapPx` between their facing edges. */
function twins(seed: number, widthPx: number, gapPx: number, psfSigmaPx: number, angleDeg: number): ValidationScene {
  const a = (angleDeg * Math.PI) / 180;
  const off = (widthPx + gapPx) / 2; // centre to centre / 2, along the normal (sin a, cos a) on screen
  return {
    width: W, height: H, psfSigmaPx, bits: 16, seed, readNoise: 0.24 / 30,
    fibres: [1, -1].map((side) => ({ cxPx: W / 2 + side * off * Math.sin(a), cyPx: H / 2 + side * off * Math.cos(a), angleDeg, widthPx, contrast: -0.4 })),
  };
}

const vignette = (x: number, y: number) => 1 - 0.3 * (((x - W / 2) / (W / 2)) ** 2 + ((y - H / 2) / (H / 2)) ** 2) / 2 + 0.15 * (x / W - 0.5);

export function widthCases(quick: boolean): WidthCase[] {
  const c = (label: string, scene: ValidationScene): WidthCase => ({ label, scene });
  const quickList: WidthCase[] = [
    c('12 px, psf 1.2, 17 deg, 8-bit, CNR 40 (the issue\'s case)', oneFibre(11, 12, 1.2, 17, 8, 40)),
    c('6 px, psf 1.2, 45 deg, 16-bit, CNR 10', oneFibre(12, 6, 1.2, 45, 16, 10)),
    c('8 px, psf 2, 77 deg, 16-bit, CNR 40, background slope', oneFibre(13, 8, 2, 77, 16, 40, { slopePerPx: [0.0012, -0.0008] })),
    c('80 px, psf 0.8, 121 deg, 8-bit, CNR 40, uneven lamp', oneFibre(14, 80, 0.8, 121, 8, 40, { lamp: vignette })),
    c('3 px, psf 2, 30 deg, 16-bit, CNR 40 (below 2 sigma)', oneFibre(15, 3, 2, 30, 16, 40)),
    c('twins 10 px, 12 px apart, psf 1.2, 60 deg, 16-bit', twins(16, 10, 12, 1.2, 60)),
  ];
  if (quick) return quickList;
  const list = [...quickList];
  const angles = [0, 13, 45, 77, 90, 121, 160];
  let k = 0;
  for (const widthPx of [6, 8, 12, 16, 24, 40, 80]) {
    for (const psf of [0.8, 1.2, 2]) {
      const angle = angles[k % angles.length];
      const bits = k % 2 ? 8 : 16;
      list.push(c(`${widthPx} px, psf ${psf}, ${angle} deg, ${bits}-bit, CNR 40`, oneFibre(100 + k, widthPx, psf, angle, bits, 40)));
      k++;
    }
  }
  for (const [widthPx, psf] of [[6, 0.8], [6, 1.2], [8, 1.2], [12, 1.2], [24, 1.2], [8, 2], [12, 2], [24, 2]]) {
    for (const bits of [8, 16] as const) {
      const angle = angles[k % angles.length];
      list.push(c(`${widthPx} px, psf ${psf}, ${angle} deg, ${bits}-bit, CNR 10 (low)`, oneFibre(200 + k, widthPx, psf, angle, bits, 10)));
      k++;
    }
  }
  list.push(
    c('6 px, psf 2 (3 sigma), 33 deg, 16-bit, CNR 40', oneFibre(301, 6, 2, 33, 16, 40)),
    c('12 px, psf 1.2, 8-bit, slope and uneven lamp', oneFibre(302, 12, 1.2, 29, 8, 30, { slopePerPx: [-0.001, 0.0015], lamp: vignette })),
    c('16 px bright fibre on a dark field, psf 1.5, 8-bit', oneFibre(303, 16, 1.5, -35, 8, 30, { base: 0.15 }, 1.6)),
    c('taper 30 -> 14 px, psf 1.2, 20 deg, 16-bit', {
      width: W, height: H, psfSigmaPx: 1.2, bits: 16, seed: 304, readNoise: 0.005,
      fibres: [{ cxPx: W / 2, cyPx: H / 2, angleDeg: 20, widthPx: 22, taperPerPx: -0.07, contrast: -0.4 }],
    }),
    c('two fibres 8 and 20 px, psf 1.2, 95 deg, 8-bit', {
      width: W, height: H, psfSigmaPx: 1.2, bits: 8, seed: 305, readNoise: 0.006,
      fibres: [{ cxPx: 70, cyPx: H / 2, angleDeg: 95, widthPx: 8, contrast: -0.4 }, { cxPx: 170, cyPx: H / 2, angleDeg: 95, widthPx: 20, contrast: -0.3 }],
    }),
    c('4 px, psf 2 (at 2 sigma), 10 deg, 16-bit, CNR 40', oneFibre(306, 4, 2, 10, 16, 40)),
    c('2 px, psf 1.5, 70 deg, 16-bit, CNR 60', oneFibre(307, 2, 1.5, 70, 16, 60)),
    c('3 px, psf 0.8, 140 deg, 16-bit, CNR 40', oneFibre(308, 3, 0.8, 140, 16, 40)),
    c('5 px, psf 1.2, 5 deg, 8-bit, CNR 20', oneFibre(309, 5, 1.2, 5, 8, 20)),
  );
  return list;
}

/** One row per rendered fibre of a case (see the file comment, row kind 1). */
export function widthRows(kase: WidthCase): ValidationRow[] {
  let doc: DiameterDocument;
  try {
    doc = analyseDiameter(sceneImage(kase.scene, 'case.png'), { pixelSizeUmPerPx: 0.65, pixelSizeUncertainty: 0.002 });
  } catch (e) {
    const msg = e instanceof InputError ? e.message : String(e);
    return [{ area: AREA, case: kase.label, quantity: 'measured', value: NaN, goal: 'a result', pass: false, note: msg }];
  }
  return kase.scene.fibres.map((f, i) => {
    const label = kase.scene.fibres.length > 1 ? `${kase.label} [fibre ${i}: ${f.widthPx} px]` : kase.label;
    const found = matchFibre(doc, f);
    if (!found) return { area: AREA, case: label, quantity: 'found', value: NaN, goal: 'found', pass: false, note: 'fibre not found' };
    const truth = truthAtStations(found, f);
    const sigma = kase.scene.psfSigmaPx;
    if (!found.determined) {
      const bound = found.upperBoundPx ?? NaN;
      const expected = truth < 2.5 * sigma;
      return {
        area: AREA, case: label, quantity: 'not determined: upper bound - truth px', value: bound - truth,
        goal: expected ? '>= 0' : '>= 0, and only below 2.5 sigma', pass: expected && bound >= truth,
        note: `truth ${truth.toFixed(2)} px, bound ${bound.toFixed(2)} px`,
      };
    }
    const err = (found.meanPx as number) - truth;
    const half = (found.ciHighPx as number) - (found.meanPx as number);
    return atMost(AREA, label, truth >= 6 ? '|mean width error| px' : '|mean width error| px (below the goal\'s 6 px)',
      Math.abs(err), Number(widthGoalPx(truth).toFixed(3)), 'px',
      `error ${err >= 0 ? '+' : ''}${err.toFixed(3)} px, 95 % half-width ${half.toFixed(3)} px, n ${found.n}`);
  });
}

// ---------------------------------------------------------------------------------------------------------
// 2. Coverage.

/** One interval to judge: estimate, standard uncertainty, degrees of freedom (Infinity: normal), truth. */
export interface IntervalSample {
  estimate: number;
  u: number;
  dof: number;
  half: number;
  truth: number;
}

export interface CoverageSamples {
  px: IntervalSample[];
  um: IntervalSample[];
  tex: IntervalSample[];
  /** Renderings where the width was not determined or no fibre was measured (not in the samples). */
  skipped: number;
  trials: number;
}

/** Kinds of coverage population: narrow fibres (whole-profile bar fits) and wide ones (edge fits). */
export type Population = 'narrow' | 'wide';

const TRUE_UM_PER_PX = 0.65;
const TRUE_DENSITY = 1.38;
const DENSITY_U = 0.01;

/**
 * Renders `trials` independent scenes of one population (seeds firstSeed...), measures each and collects
 * the intervals of its mean width (px, um) and of its solid linear density. Every trial draws its own width,
 * PSF, angle, position, noise, bit depth, pixel-size error and density error.
 */
export function coverageSamples(population: Population, trials: number, firstSeed = 1): CoverageSamples {
  const out: CoverageSamples = { px: [], um: [], tex: [], skipped: 0, trials };
  for (let t = 0; t < trials; t++) {
    const seed = firstSeed + t;
    const u = splitmix32(7919 * seed + (population === 'narrow' ? 1 : 2));
    const g = normalStream(104729 * seed + 3);
    const narrow = population === 'narrow';
    const psf = narrow ? 0.8 + 0.8 * u() : 0.8 + 1.2 * u();
    const widthPx = narrow ? Math.max(5, 3 * psf) + (12 - Math.max(5, 3 * psf)) * u() : 16 + 20 * u();
    const size = narrow ? 88 : 112;
    const cnr = 10 + 30 * u();
    const scene: ValidationScene = {
      width: size, height: size, psfSigmaPx: psf, bits: u() < 0.5 ? 8 : 16, seed, base: 0.6, readNoise: 0.24 / cnr,
      fibres: [{ cxPx: size / 2 + u() - 0.5, cyPx: size / 2 + u() - 0.5, angleDeg: -90 + 180 * u(), widthPx, contrast: -0.4 }],
    };
    const relU = u() < 0.5 ? 0.003 : 0.01;
    const umPerPx = TRUE_UM_PER_PX * (1 + relU * g());
    const density = TRUE_DENSITY + DENSITY_U * g();
    let doc: DiameterDocument;
    try {
      doc = analyseDiameter(sceneImage(scene, 'trial.png'), { pixelSizeUmPerPx: umPerPx, pixelSizeUncertainty: relU });
    } catch {
      out.skipped++;
      continue;
    }
    const found = matchFibre(doc, scene.fibres[0]);
    if (!found || !found.determined || found.meanPx === null || found.uPx === null || found.meanUm === null || found.uUm === null) {
      out.skipped++;
      continue;
    }
    const dofOf = (d: number | null) => (d === null ? Infinity : d);
    out.px.push({ estimate: found.meanPx, u: found.uPx, dof: dofOf(found.dofPx), half: (found.ciHighPx as number) - found.meanPx, truth: widthPx });
    out.um.push({ estimate: found.meanUm, u: found.uUm, dof: dofOf(found.dofUm), half: (found.ciHighUm as number) - found.meanUm, truth: widthPx * TRUE_UM_PER_PX });
    const numbers = fibreNumbersResult({
      diameterUm: found.meanUm, densityGPerCm3: density,
      uncertainties: { diameterUm: found.uUm, diameterDof: found.dofUm ?? undefined, densityGPerCm3: DENSITY_U },
    });
    const tex = numbers.intervals.solidTex;
    if (tex) {
      const trueTex = TRUE_DENSITY * Math.PI * (widthPx * TRUE_UM_PER_PX) ** 2 / 4 * 1e-3;
      out.tex.push({ estimate: numbers.solidTex, u: tex.u, dof: tex.dof, half: tex.ciHigh - numbers.solidTex, truth: trueTex });
    }
  }
  return out;
}

/**
 * Renderings of fibres narrower than 2 PSF sigmas (width 1 px to 1.9 sigma, sigma 1.2-2 px): the fraction
 * whose width the tool declines to give with an upper bound at or above the truth, or gives within its 95 %
 * interval. The bound is conservative by construction (it leaves sigma^2 >= 0 out), so the rate must be at
 * least 95 %.
 */
export function boundSamples(trials: number, firstSeed = 1): { held: number; bounded: number; given: number; n: number } {
  let held = 0;
  let bounded = 0;
  let given = 0;
  let n = 0;
  for (let t = 0; t < trials; t++) {
    const seed = firstSeed + t;
    const u = splitmix32(15485863 * seed + 5);
    const psf = 1.2 + 0.8 * u();
    const widthPx = 1 + (1.9 * psf - 1) * u();
    const size = 80;
    const scene: ValidationScene = {
      width: size, height: size, psfSigmaPx: psf, bits: 16, seed, base: 0.6, readNoise: 0.36 / (20 + 40 * u()),
      fibres: [{ cxPx: size / 2 + u() - 0.5, cyPx: size / 2 + u() - 0.5, angleDeg: -90 + 180 * u(), widthPx, contrast: -0.6 }],
    };
    let doc: DiameterDocument;
    try {
      doc = analyseDiameter(sceneImage(scene, 'thin.png'), {});
    } catch {
      continue;
    }
    const found = matchFibre(doc, scene.fibres[0]);
    if (!found) continue;
    n++;
    if (!found.determined) {
      bounded++;
      if ((found.upperBoundPx ?? -Infinity) >= widthPx) held++;
    } else if (found.meanPx !== null && found.ciLowPx !== null && found.ciHighPx !== null) {
      given++;
      if (found.ciLowPx <= widthPx && widthPx <= found.ciHighPx) held++;
    }
  }
  return { held, bounded, given, n };
}

export interface CoverageJudgement {
  n: number;
  /** Percentage of intervals (scaled by `scale`) that hold the truth. */
  coveragePct: number;
  /** RMS of the normal scores of the standardised errors (1 for intervals of the right width). */
  spread: number;
  /** The 99 % sampling band of `spread` for n trials. */
  band: [number, number];
  /** Point estimates outside their own interval (must be 0). */
  outside: number;
  pass: boolean;
}

/**
 * Judges intervals scaled by `scale` (1 = as stated): coverage within 90-99 % and the spread of the normal
 * scores within its 99 % band. Normal score of a trial: w = Phi^-1(F_t(dof)((estimate - truth) / (scale u)));
 * for intervals of the right width w is standard normal, so mean(w^2) ~ chi^2_n / n, whose 99 % band is about
 * 1 +- 2.576 sqrt(2/n) (normal approximation of chi^2_n, derived); the band of the RMS is its square root.
 */
export function judgeCoverage(samples: IntervalSample[], scale = 1): CoverageJudgement {
  const n = samples.length;
  let covered = 0;
  let sumW2 = 0;
  let outside = 0;
  for (const s of samples) {
    const half = scale * s.half;
    if (Math.abs(s.estimate - s.truth) <= half) covered++;
    if (!(half >= 0)) outside++;
    const z = (s.estimate - s.truth) / (scale * s.u);
    const p = Number.isFinite(s.dof) ? studentTCdf(z, s.dof) : normalCdf(z);
    const w = normalQuantile(Math.min(1 - 1e-15, Math.max(1e-15, p)));
    sumW2 += w * w;
  }
  const spread = Math.sqrt(sumW2 / n);
  const d = 2.5758293035489 * Math.sqrt(2 / n); // z(0.995), scipy.stats.norm.ppf(0.995)
  const band: [number, number] = [Math.sqrt(Math.max(0, 1 - d)), Math.sqrt(1 + d)];
  const coveragePct = (100 * covered) / n;
  return {
    n, coveragePct, spread, band, outside,
    pass: n > 0 && coveragePct >= COVERAGE_LO && coveragePct <= COVERAGE_HI && spread >= band[0] && spread <= band[1] && outside === 0,
  };
}

/** Rows for one set of intervals: coverage, spread, and the same intervals 20 % narrower and wider (which must fail). */
export function coverageRows(label: string, samples: IntervalSample[], skipped: number): ValidationRow[] {
  const j = judgeCoverage(samples);
  const narrower = judgeCoverage(samples, 0.8);
  const wider = judgeCoverage(samples, 1.2);
  const band = `${j.band[0].toFixed(3)}-${j.band[1].toFixed(3)}`;
  return [
    within(AREA, label, '95 % interval coverage %', j.coveragePct, COVERAGE_LO, COVERAGE_HI, '%',
      `n ${j.n}${skipped ? `, ${skipped} renderings without a determined width left out` : ''}`),
    { area: AREA, case: label, quantity: 'spread of standardised errors', value: j.spread, goal: band,
      pass: j.spread >= j.band[0] && j.spread <= j.band[1], note: '1 when the intervals have the right width' },
    { area: AREA, case: label, quantity: 'same intervals 20 % narrower: rejected', value: narrower.spread, goal: `outside ${band} or coverage < 90 %`,
      pass: !narrower.pass, note: `coverage ${narrower.coveragePct.toFixed(1)} %` },
    { area: AREA, case: label, quantity: 'same intervals 20 % wider: rejected', value: wider.spread, goal: `outside ${band} or coverage > 99 %`,
      pass: !wider.pass, note: `coverage ${wider.coveragePct.toFixed(1)} %` },
    atMost(AREA, label, 'point estimates outside their interval', j.outside, 0),
  ];
}

const area: ValidationArea = async ({ quick }) => {
  const rows: ValidationRow[] = [];
  for (const kase of widthCases(quick)) rows.push(...widthRows(kase));
  // The coverage runs need a few hundred renderings; the quick subset leaves them to tests/fibre/coverage.test.ts.
  if (!quick) {
    for (const [population, trials] of [['narrow', 400], ['wide', 400]] as [Population, number][]) {
      const s = coverageSamples(population, trials, 1);
      const what = population === 'narrow' ? 'narrow fibres 5-12 px (bar fits)' : 'wide fibres 16-36 px (edge fits)';
      rows.push(...coverageRows(`${what}: mean width px`, s.px, s.skipped));
      rows.push(...coverageRows(`${what}: mean width um, pixel size +-0.3/1 %`, s.um, s.skipped));
      rows.push(...coverageRows(`${what}: solid tex, density +-${DENSITY_U}`, s.tex, s.skipped));
    }
    const b = boundSamples(200, 1);
    rows.push({ area: AREA, case: 'fibres below 2 sigma (1 px to 1.9 sigma, sigma 1.2-2 px)', quantity: 'bound or interval holds the truth %',
      value: (100 * b.held) / b.n, goal: '>= 95 %', pass: b.n >= 190 && b.held >= 0.95 * b.n,
      note: `n ${b.n}: ${b.bounded} not determined with a bound, ${b.given} given a width` });
  }
  return rows;
};

export default area;
