/**
 * Validation area 'angles': the angle series (four images between crossed polarisers, no compensator, polariser
 * and analyser turned together by 0, 22.5, 45 and 67.5 deg), measured on seeded renderings of the independent
 * renderer (tests/validation/render/, optics.seriesDeg) whose truth is the construction itself. The reading is
 * called in process as `retarda angle-series S0 S1 S2 S3 --walls ... [--plate A --plate-sample-free x,y,w,h]`
 * calls it (src/cli/commands/angleSeries.ts): each series image reduced to its linear intensity
 * (seriesIntensityImage), then analyseAngleSeries with a profile request. The compensator image given with
 * --plate is the scene's image A (polariser 0 deg, 550 nm compensator at 45 deg), read with its sample-free area.
 *
 * Truth. Crossed polarisers alone fix the slow axis only modulo 90 deg. With --plate the compensator image
 * decides the 90-deg choice and the truth is the channel area's: the mean of cos 2(theta - axis) over a bin's
 * rendered directors (realised) and of E[cos 2(theta - axis)] (ensemble). Pixels the plate and their neighbours leave
 * undecided are taken within 45 deg of the channel axis; the notes give the folded truth too, |cos 2(theta - axis)|
 * (render/truth.ts mod90Truth). Without --plate the reading gives no order number at all (docs/methods.md §6.3): its
 * profile rows count the numbers given (goal 0), and its coverage rows the intervals given (none). With --plate but
 * without --plate-sample-free (camera exposures 0.6-1, nothing calibrating the compensator image) the rows count the
 * numbers given: goal none, or every bin within the goal.
 *
 * Rows, as in the channel area (tests/validation/channel.ts), with its goals:
 * 1. given walls (the true inner walls): the largest |bin S - truth| over every bin (goal <= 0.03); an
 *    over-exposed case must withhold the bins its clipped pixels touch, and any bin it gives must meet the goal;
 * 2. coverage over seeded renderings (100 each, small frames): the fraction of 95 % intervals (bins, core, skin)
 *    containing the ensemble truth (goal 90-99 %; sd of an exact 95 % interval's rate at n = 100 is 2.2 %), with
 *    the rates of the same intervals made 20 % narrower and wider in the note; the quick subset runs 20
 *    renderings and accepts what chance allows an exact 95 % interval there (binomialBand);
 * 3. point estimates outside their own interval (goal 0).
 */
import { InputError } from '../../src/common/errors.ts';
import { analyseAngleSeries } from '../../src/analyses/optics.ts';
import type { ProfileResult } from '../../src/analyses/profile.ts';
import { seriesIntensityImage } from '../../src/optics/fourAngle.ts';
import { binomialBand } from './channel.ts';
import { atMost, within, type ValidationArea, type ValidationRow, InsideCheck, runParts } from './goals.ts';
import { mod90Truth, profileTruth, renderScene, scene, type Rendering, type SceneSpec, type WallStyle } from './render/index.ts';

const BIN_GOAL = 0.03;
const COVERAGE_LO = 90, COVERAGE_HI = 99;
const SERIES_DEG = [0, 22.5, 45, 67.5];

const band = (thicknessPx: number, level: number): WallStyle => ({ kind: 'band', thicknessPx, level, edgePx: 0, edgeLevel: 0 });

/**
 * 'series + plate, no sample-free': the compensator image given without its sample-free area, so nothing calibrates
 * its exposure, white balance or compensator retardance for the 90-deg choice (docs/methods.md §6.3).
 */
type Reader = 'series' | 'series + plate' | 'series + plate, no sample-free';

/** The reading as the CLI makes it, with the true walls. */
async function readSeries(r: Rendering, reader: Reader, bins: number): Promise<ProfileResult> {
  if (!r.series) throw new Error(`${r.spec.name}: no angle series rendered`);
  const images = r.series.map((img) => seriesIntensityImage(img));
  const plate = reader === 'series + plate' ? { plate: r.image, plateSampleFree: r.truth.backgroundRect ?? undefined }
    : reader === 'series + plate, no sample-free' ? { plate: r.image } : {};
  const { result } = await analyseAngleSeries(images, { anglesDeg: SERIES_DEG, ...plate, profile: { channel: { walls: r.truth.walls! }, bins, stations: 1 } });
  return result.profile!;
}

/** Both truths of a profile: the material's (directors as rendered) and the mod-90 reading's (folded about the axis). */
function truths(r: Rendering, bins: number) {
  const raw = profileTruth(r.truth, r.spec.width, { bins });
  const folded = profileTruth(mod90Truth(r.truth, raw.axisDeg), r.spec.width, { bins, axisDeg: raw.axisDeg });
  return { raw, folded };
}

/**
 * The truth a reader's numbers are about: the material's, with or without --plate. A number is given only where the
 * 90-deg choice is settled (by the compensator image, or by no pixel lying near the fold's boundary); elsewhere it
 * is withheld (docs/methods.md §6.3), so withholding is never a miss, and a number given must meet the goal against
 * the directors as rendered. The folded truth (the reading's own resolution) is shown beside it.
 */
const truthFor = (_reader: Reader, t: ReturnType<typeof truths>) => t.raw;

const num = (v: unknown): number => (typeof v === 'number' ? v : NaN);

/** Point estimates outside their own interval, over every interval the rows looked at. */
const ownInterval = new InsideCheck();

// ---------------------------------------------------------------------------------------------------------
// 1. Given walls: every bin against the rendered truth.

interface ProfileCase { label: string; spec: SceneSpec; readers: Reader[]; bins: number; clipped?: boolean }

function colourSeries(name: string, seed: number, axisDeg: number, extra: { optics?: Partial<SceneSpec['optics']>; order?: SceneSpec['order']; width?: number; height?: number; widthPx?: number } = {}): SceneSpec {
  return scene({
    name, seed, width: extra.width ?? 480, height: extra.height ?? 360, source: 'colour', channel: { axisDeg, widthPx: extra.widthPx ?? 170 },
    walls: [band(20, 0.25), band(20, 0.25)], background: { kind: 'sample-free' }, order: extra.order ?? { core: 0.8, skin: 0.5 },
    optics: { retardanceNm: 250, seriesDeg: SERIES_DEG, ...extra.optics },
  });
}

function profileCases(quick: boolean): ProfileCase[] {
  const both: Reader[] = ['series', 'series + plate'];
  const list: ProfileCase[] = [0, 23, 35, -61].map((axisDeg, k) => ({
    label: `angle series ${axisDeg}deg, bands, Gamma 250 nm`, readers: both, bins: 20, spec: colourSeries('ang', 301 + k, axisDeg),
  }));
  list.push(
    { label: 'angle series 23deg, Gamma 60 nm (low retardance)', readers: both, bins: 20, spec: colourSeries('ang-low', 305, 23, { optics: { retardanceNm: 60 } }) },
    { label: 'angle series 23deg, Gamma 30 nm (lower retardance)', readers: both, bins: 20, spec: colourSeries('ang-low', 309, 23, { optics: { retardanceNm: 30 } }) },
    { label: 'angle series 35deg, Gamma 300 nm +-8 %, core 0.9 / skin 0.6', readers: both, bins: 20, spec: colourSeries('ang-spread', 306, 35, { optics: { retardanceNm: 300, retardanceSpread: 0.08 }, order: { core: 0.9, skin: 0.6 } }) },
    {
      // Exposure 1 (the open beam at full scale): the brightest crossed colours (rods near 45 deg to the polariser)
      // reach full scale in some image, 1-2 % of each bin's pixels; every pixel sees such an angle in one of the four
      // images, so clipping is spread over the whole channel. At 0.9 none clip.
      label: 'angle series 23deg, Gamma 250 nm, over-exposed (open beam at full scale)', readers: both, bins: 20, clipped: true,
      spec: colourSeries('ang-clipped', 307, 23, { optics: { exposure: 1 } }),
    },
    { label: 'angle series 23deg, small frame', readers: both, bins: 10, spec: colourSeries('ang-small', 308, 23, { width: 240, height: 180, widthPx: 100 }) },
  );
  // The compensator image without its sample-free area, at camera exposures below, at and (the clipping case above)
  // at full scale: every bin within the goal, or no order number given.
  const bare: Reader[] = ['series + plate, no sample-free'];
  list.push(
    ...[0.6, 0.8].map((exposure, k) => ({
      label: `angle series 23deg, Gamma 250 nm, exposure ${exposure}`, readers: bare, bins: 20, spec: colourSeries('ang-bare', 310 + k, 23, { optics: { exposure } }),
    })),
    { label: 'angle series -61deg, Gamma 300 nm, exposure 0.7', readers: bare, bins: 20, spec: colourSeries('ang-bare', 312, -61, { optics: { exposure: 0.7, retardanceNm: 300 } }) },
    { label: 'angle series 23deg, Gamma 250 nm, exposure 1 (open beam at full scale)', readers: bare, bins: 20, spec: colourSeries('ang-bare', 313, 23, { optics: { exposure: 1 } }) },
    { label: 'angle series 23deg, small frame, exposure 0.8', readers: bare, bins: 10, spec: colourSeries('ang-small', 314, 23, { width: 240, height: 180, widthPx: 100 }) },
  );
  return quick ? list.filter((c) => c.spec.name === 'ang-small') : list;
}

async function profileRows(quick: boolean): Promise<ValidationRow[]> {
  const rows: ValidationRow[] = [];
  for (const c of profileCases(quick)) {
    const r = renderScene(c.spec);
    const t = truths(r, c.bins);
    for (const reader of c.readers) {
      const name = `${c.label}, ${reader} (seed ${c.spec.seed})`;
      let p: ProfileResult;
      try { p = await readSeries(r, reader, c.bins); } catch (e) {
        if (!(e instanceof InputError)) throw e;
        rows.push(atMost('angle series profile', name, 'largest |bin S - truth|', NaN, BIN_GOAL, '', `refused: ${e.message}`));
        continue;
      }
      const truth = truthFor(reader, t), other = truth === t.raw ? t.folded : t.raw;
      if (reader === 'series') {
        // No compensator image: every order number withheld, with the remedy.
        const given = [...p.bins, p.core, p.skin].filter((b) => Number.isFinite(num(b.order))).length;
        rows.push(atMost('angle series profile', name, 'order numbers given (bins, core, skin)', given, 0, '', `why: ${String(p.notDetermined?.order ?? 'no reason given').slice(0, 160)}...`));
        continue;
      }
      if (reader === 'series + plate, no sample-free') {
        // Nothing calibrates the compensator image: every number given must meet the goal, or none be given.
        const given = [...p.bins, p.core, p.skin].filter((b) => Number.isFinite(num(b.order))).length;
        const errs = p.bins.map((b, k) => ({ e: Math.abs(num(b.order) - truth.bins[k].realised), k, v: num(b.order) })).filter((x) => Number.isFinite(x.v));
        const worst = errs.length ? errs.reduce((a, b) => (b.e > a.e ? b : a)) : null;
        const core = Number.isFinite(num(p.core.order)) ? `core ${num(p.core.order).toFixed(3)} (${num(p.core.ciLow).toFixed(3)}..${num(p.core.ciHigh).toFixed(3)}) vs ${truth.core.realised.toFixed(3)}` : 'core withheld';
        p.bins.forEach((b, k) => ownInterval.check(`${name} bin ${k}`, num(b.order), num(b.ciLow), num(b.ciHigh)));
        rows.push({
          area: 'angle series profile', case: name, quantity: 'order numbers given (bins, core, skin)', value: given, goal: `0, or every bin <= ${BIN_GOAL}`,
          pass: given === 0 || (worst !== null && worst.e <= BIN_GOAL),
          note: `${worst ? `worst bin ${worst.k}: ${worst.v.toFixed(3)} vs ${truth.bins[worst.k].realised.toFixed(3)} (|err| ${worst.e.toFixed(3)}); ` : ''}${core}; why: ${String(p.notDetermined?.order ?? 'no reason given').slice(0, 160)}...`,
        });
        continue;
      }
      const errs: { e: number; where: string }[] = [];
      let withheld = 0, otherWorst = 0;
      p.bins.forEach((b, k) => {
        const v = num(b.order);
        ownInterval.check(`${name} bin ${k}`, v, num(b.ciLow), num(b.ciHigh));
        if (!Number.isFinite(v)) { withheld++; return; }
        errs.push({ e: Math.abs(v - truth.bins[k].realised), where: `bin ${k} (s ${b.s.toFixed(2)}): ${v.toFixed(3)} vs ${truth.bins[k].realised.toFixed(3)}, n ${b.n}` });
        otherWorst = Math.max(otherWorst, Math.abs(v - other.bins[k].realised));
      });
      const worst = errs.length ? errs.reduce((a, b) => (b.e > a.e ? b : a)) : null;
      const shown = (what: string, v: unknown, tv: number) => `${what} ${Number.isFinite(num(v)) ? num(v).toFixed(3) : 'withheld'} vs ${tv.toFixed(3)}`;
      const against = truth === t.raw ? 'truth: directors as rendered' : 'truth: directors folded within 45 deg of the axis (the stated mod-90 resolution)';
      const resolved = p.warnings.find((w) => w.startsWith('the plate image decided'));
      const tail = `${shown('core', p.core.order, truth.core.realised)}, ${shown('skin', p.skin.order, truth.skin.realised)}; ${against}; worst vs the ${truth === t.raw ? 'folded' : 'unfolded (material)'} truth ${otherWorst.toFixed(3)}${resolved ? `; ${resolved.split(';')[0]}` : ''}`;
      if (c.clipped) {
        // Over-exposed: some bins must be withheld (clipped pixels), and every bin given must meet the goal.
        const ok = withheld > 0 && (worst === null || worst.e <= BIN_GOAL);
        rows.push({
          area: 'angle series profile', case: name, quantity: 'largest |bin S - truth| (bins given)', value: worst?.e ?? NaN, goal: `some withheld; given <= ${BIN_GOAL}`, pass: ok,
          note: `${withheld} of ${c.bins} bins withheld (${Object.values(p.notDetermined ?? {}).join('; ') || 'no reason given'})${worst ? `; worst given ${worst.where}` : ''}; ${tail}`,
        });
        continue;
      }
      if (withheld > 0) {
        rows.push({
          area: 'angle series profile', case: name, quantity: 'largest |bin S - truth| (bins given)', value: worst?.e ?? NaN, goal: `<= ${BIN_GOAL} or withheld`,
          pass: worst === null || worst.e <= BIN_GOAL,
          note: `${withheld} of ${c.bins} bins withheld (${Object.values(p.notDetermined ?? {}).join('; ')})${worst ? `; worst given ${worst.where}` : ''}; ${tail}`,
        });
        continue;
      }
      rows.push(atMost('angle series profile', name, 'largest |bin S - truth|', worst!.e, BIN_GOAL, '', `worst ${worst!.where}; ${tail}`));
    }
  }
  return rows;
}

// ---------------------------------------------------------------------------------------------------------
// 2. Coverage of the 95 % intervals over seeded renderings.

interface CoverageCase { label: string; reader: Reader; make: (seed: number) => SceneSpec; bins: number; quick: boolean }

function coverageCases(): CoverageCase[] {
  const small = (seed: number, axisDeg: number) => colourSeries('cov-ang', seed, axisDeg, { width: 240, height: 180, widthPx: 100 });
  return [
    { label: 'angle series 23deg, core 0.8 / skin 0.5, with --plate', reader: 'series + plate', bins: 10, quick: true, make: (seed) => small(seed, 23) },
    { label: 'angle series 23deg, core 0.8 / skin 0.5, no plate', reader: 'series', bins: 10, quick: false, make: (seed) => small(seed, 23) },
    { label: 'angle series -61deg, core 0.8 / skin 0.5, with --plate', reader: 'series + plate', bins: 10, quick: false, make: (seed) => small(seed, -61) },
    {
      // The plate decides about half the pixels at 60 nm, their neighbours' director most of the rest.
      label: 'angle series 23deg, Gamma 60 nm, core 0.8 / skin 0.5, with --plate', reader: 'series + plate', bins: 10, quick: false,
      make: (seed) => colourSeries('cov-ang', seed, 23, { width: 240, height: 180, widthPx: 100, optics: { retardanceNm: 60 } }),
    },
  ];
}

interface Tally { hit: number; narrow: number; wide: number; other: number; withheld: number; n: number }
const tally = (): Tally => ({ hit: 0, narrow: 0, wide: 0, other: 0, withheld: 0, n: 0 });

/**
 * Counts whether [lo, hi] (and the same 20 % narrower or wider about its centre) holds the truth. A withheld
 * interval is left out of the rate and counted apart: the reading withholds where the 90-deg choice is not settled.
 */
function count(t: Tally, lo: number, hi: number, truth: number, other: number) {
  if (![lo, hi].every(Number.isFinite)) { t.withheld++; return; }
  t.n++;
  const c = (lo + hi) / 2, h = (hi - lo) / 2;
  const inside = (f: number, v: number) => v >= c - f * h && v <= c + f * h;
  if (inside(1, truth)) t.hit++;
  if (inside(0.8, truth)) t.narrow++;
  if (inside(1.2, truth)) t.wide++;
  if (inside(1, other)) t.other++;
}

async function coverageRows(quick: boolean): Promise<ValidationRow[]> {
  const rows: ValidationRow[] = [];
  const renderings = quick ? 20 : 100;
  const [bandLo, bandHi] = quick ? binomialBand(renderings).map((v) => Math.round(v * 10) / 10) : [COVERAGE_LO, COVERAGE_HI];
  for (const [ci, c] of coverageCases().entries()) {
    if (quick && !c.quick) continue;
    const seed0 = 30_000 + 1000 * ci;
    const name = `${c.label} (seeds ${seed0}-${seed0 + renderings - 1})`;
    const groups = { bins: tally(), core: tally(), skin: tally() };
    let refused = 0;
    for (let k = 0; k < renderings; k++) {
      const r = renderScene(c.make(seed0 + k));
      let p: ProfileResult;
      try { p = await readSeries(r, c.reader, c.bins); } catch (e) {
        if (!(e instanceof InputError)) throw e;
        refused++;
        continue;
      }
      const t = truths(r, c.bins), truth = truthFor(c.reader, t), other = truth === t.raw ? t.folded : t.raw;
      p.bins.forEach((b, j) => {
        ownInterval.check(`${name} seed ${seed0 + k} bin ${j}`, num(b.order), num(b.ciLow), num(b.ciHigh));
        count(groups.bins, num(b.ciLow), num(b.ciHigh), truth.bins[j].ensemble, other.bins[j].ensemble);
      });
      for (const g of ['core', 'skin'] as const) {
        ownInterval.check(`${name} seed ${seed0 + k} ${g}`, num(p[g].order), num(p[g].ciLow), num(p[g].ciHigh));
        count(groups[g], num(p[g].ciLow), num(p[g].ciHigh), truth[g].ensemble, other[g].ensemble);
      }
    }
    for (const [g, t] of Object.entries(groups)) {
      const pct = (v: number) => (100 * v) / t.n;
      const quantity = `${g === 'bins' ? `bins (all ${c.bins})` : g}: 95 % intervals covering the truth %`;
      const note = `${t.n} intervals given vs the ensemble material truth${t.withheld ? `; ${t.withheld} withheld (90-deg choice not settled; left out)` : ''}${refused ? `; ${refused} renderings refused` : ''}; x0.8 ${pct(t.narrow).toFixed(1)} %, x1.2 ${pct(t.wide).toFixed(1)} %; vs the folded truth ${pct(t.other).toFixed(1)} %`;
      // Too few given to judge a rate (a tenth of the renderings): only the count is reported.
      if (t.n < renderings / 10) rows.push({ area: 'angle series coverage', case: name, quantity, value: NaN, goal: `${bandLo}-${bandHi} % or withheld`, pass: true, note });
      else rows.push(within('angle series coverage', name, quantity, pct(t.hit), bandLo, bandHi, '%', note));
    }
  }
  return rows;
}

// ---------------------------------------------------------------------------------------------------------

const anglesArea: ValidationArea = async ({ quick }) => {
  ownInterval.count = 0; ownInterval.total = 0; ownInterval.examples = [];
  const rows = await runParts('angles', [['profiles', () => profileRows(quick)], ['coverage', () => coverageRows(quick)]]);
  rows.push(ownInterval.row('angle series coverage'));
  return rows;
};

export default anglesArea;
