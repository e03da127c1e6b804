/**
 * Validation area 'channel': channel walls, S profiles across channels and the coverage of their intervals,
 * measured on seeded renderings of the independent renderer (tests/validation/render/) whose truth is the
 * construction itself. The analyses are called in process exactly as the CLI calls them:
 * - `profile IMAGE --auto-walls` / `--walls`: analyseOrientation, then analyseProfile (src/cli/commands/profile.ts);
 * - `plate IMAGE --walls ... --sample-free x,y,w,h [--sample-retardance-nm G]`: analysePlate with a profile request;
 * - `plate-pair A B --walls ... [--sample-free x,y,w,h]`: analysePlatePair with a profile request;
 * - `orient IMAGE --axis-deg A`: analyseOrientation.
 *
 * Rows:
 * 1. auto walls: per wall, the largest perpendicular distance of the true visible inner wall from the line of
 *    the found wall (goal <= 1 px); a refusal is a miss unless the two walls cannot be told apart in the image.
 * 2. given walls (the true inner walls): the largest |bin S - truth| over every bin, the two touching the walls
 *    included (goal <= 0.03); truth = the mean of cos 2(theta - axis) over the bin's pixels as rendered. A
 *    texture is read through several streak patterns of one director field (`textureRows` says why). Where
 *    the reader's data do not fix S (one image of unknown retardance; one image off the compensator axis) the
 *    result may withhold the bins instead (`determined`).
 * 3. coverage over seeded renderings: the fraction of 95 % intervals (bins, core, skin, core/skin ratio,
 *    whole-image S_2D and S_axis) that contain the truth (goal 90-99 %; with n = 100 renderings the observed rate
 *    of an exact 95 % interval has a standard deviation of sqrt(0.95 * 0.05 / 100) = 2.2 %); the truth is the
 *    material's order, E[cos 2(theta - axis)] (render/truth.ts says why). The note gives the rate the same
 *    intervals would reach made 20 % narrower and 20 % wider, and against the rendered (realised) mean. A last row
 *    counts point estimates outside their own interval (goal 0). The quick subset runs 20 renderings per case and
 *    accepts what chance allows an exact 95 % interval at that count (`binomialBand`).
 *
 * Set RETARDA_VALIDATE_PNGS=DIR to write the first rendering of every case there as PNG (with its walls in the log).
 */
import { availableParallelism } from 'node:os';
import { Worker, isMainThread, parentPort, workerData } from 'node:worker_threads';
import { InputError } from '../../src/common/errors.ts';
import { analyseOrientation } from '../../src/analyses/orient.ts';
import { analyseProfile, type ProfileResult } from '../../src/analyses/profile.ts';
import { analysePlate, analysePlatePair } from '../../src/analyses/optics.ts';
import { atMost, within, type ValidationArea, type ValidationRow, InsideCheck, runParts } from './goals.ts';
import {
  Rng, largestLineDistance, profileTruth, renderScene, scene, wholeImageTruth, writeRenderingPngs,
  type Rendering, type SceneSpec, type Segment, type WallStyle,
} from './render/index.ts';

type Walls = [Segment, Segment];

const WALL_GOAL_PX = 1;
const BIN_GOAL = 0.03;
const COVERAGE_LO = 90, COVERAGE_HI = 99;

const pngDir = process.env.RETARDA_VALIDATE_PNGS;
const seenPng = new Set<string>();
function maybePng(r: Rendering, name: string) {
  if (!pngDir || seenPng.has(name)) return;
  seenPng.add(name);
  const safe = name.replace(/[^A-Za-z0-9_.-]+/g, '_');
  writeRenderingPngs(r, pngDir, safe);
  process.stderr.write(`${safe}: walls ${JSON.stringify(r.truth.walls)} background ${JSON.stringify(r.truth.backgroundRect)}\n`);
}

// ---------------------------------------------------------------------------------------------------------
// Wall kinds (grey levels for texture images; for colour images `level` multiplies the sample-free colour).

const band = (thicknessPx: number, level: number): WallStyle => ({ kind: 'band', thicknessPx, level, edgePx: 0, edgeLevel: 0 });
const brightEdge = (edgePx: number, edgeLevel: number, thicknessPx: number, level: number): WallStyle => ({ kind: 'bright-edge', edgePx, edgeLevel, thicknessPx, level });
const noBand: WallStyle = { kind: 'none', thicknessPx: 0, level: 0, edgePx: 0, edgeLevel: 0 };

// ---------------------------------------------------------------------------------------------------------
// 1. Automatic walls.

interface WallCase { label: string; spec: SceneSpec }

function autoWallCases(quick: boolean): WallCase[] {
  const t = (label: string, seed: number, c: Parameters<typeof scene>[0]): WallCase => ({ label, spec: scene({ name: label, seed, width: 480, height: 360, ...c }) });
  const list: WallCase[] = [
    t('texture 0deg, dark bands 24 px', 101, { channel: { axisDeg: 0, widthPx: 160 }, walls: [band(24, 0.12), band(24, 0.12)] }),
    t('texture 90deg, dark bands 16 px', 102, { channel: { axisDeg: 90, widthPx: 140 }, walls: [band(16, 0.15), band(16, 0.15)] }),
    t('texture 35deg, bands 30/8 px, 0.08/0.25', 103, { channel: { axisDeg: 35, widthPx: 180 }, walls: [band(30, 0.08), band(8, 0.25)] }),
    t('texture -61deg, bright edges 3 px + bands', 104, { channel: { axisDeg: -61, widthPx: 170 }, walls: [brightEdge(3, 0.95, 18, 0.1), brightEdge(3, 0.95, 18, 0.1)] }),
    t('texture 23deg, taper 3deg, bands', 105, { channel: { axisDeg: 23, widthPx: 150, taperDeg: 3 }, walls: [band(20, 0.12), band(20, 0.12)] }),
    t('texture 0deg, no band, flat background 0.8', 106, { channel: { axisDeg: 0, widthPx: 200 }, walls: [noBand, noBand], background: { kind: 'flat', level: 0.8 } }),
    t('texture 23deg, first wall partly out of frame', 107, { width: 640, height: 480, channel: { axisDeg: 23, widthPx: 220, offsetPx: 150 }, walls: [band(20, 0.12), band(20, 0.12)] }),
    t('texture 35deg, bright edge / no band (flat 0.3)', 108, { channel: { axisDeg: 35, widthPx: 130 }, walls: [brightEdge(2, 0.9, 12, 0.15), noBand], background: { kind: 'flat', level: 0.3 } }),
    t('texture -61deg, 16-bit, uneven light, shot noise', 109, {
      channel: { axisDeg: -61, widthPx: 120 }, walls: [band(14, 0.1), band(22, 0.18)],
      imaging: { bitDepth: 16, gradient: [0.4, -0.3], vignetting: 0.3, fullWellElectrons: 3000, psfSigmaPx: 1.4 },
    }),
    t('texture 0deg, width 250 px, 640x480', 110, { width: 640, height: 480, channel: { axisDeg: 0, widthPx: 250 }, walls: [band(10, 0.1), band(26, 0.2)] }),
    t('colour 0deg, dark bands, sample-free outside', 111, { source: 'colour', channel: { axisDeg: 0, widthPx: 160 }, walls: [band(20, 0.25), band(20, 0.25)], background: { kind: 'sample-free' } }),
    t('colour 35deg, no band, sample-free outside', 112, { source: 'colour', channel: { axisDeg: 35, widthPx: 170 }, walls: [noBand, noBand], background: { kind: 'sample-free' } }),
    t('colour -61deg, bright edges', 113, { source: 'colour', channel: { axisDeg: -61, widthPx: 150 }, walls: [brightEdge(3, 0.7, 16, 0.2), brightEdge(3, 0.7, 16, 0.2)], background: { kind: 'sample-free' } }),
    t('colour 23deg, taper 2deg, bands 24/10 px', 114, { source: 'colour', channel: { axisDeg: 23, widthPx: 140, taperDeg: 2 }, walls: [band(24, 0.15), band(10, 0.35)], background: { kind: 'sample-free' }, optics: { retardanceNm: 180 } }),
    t('colour 90deg, bands, isotropic birefringent outside', 115, { source: 'colour', channel: { axisDeg: 90, widthPx: 150 }, walls: [band(16, 0.2), band(16, 0.2)], background: { kind: 'texture', retardanceNm: 120 } }),
    t('texture 0deg, no wall at all (order continues outside)', 116, { channel: { axisDeg: 0, widthPx: 160 }, walls: [noBand, noBand], background: { kind: 'interior' }, order: { core: 0.7, skin: 0.7 }, wallsDistinct: false }),
    t('texture 23deg, second wall out of frame', 117, { channel: { axisDeg: 23, widthPx: 300, offsetPx: -140 }, walls: [band(20, 0.12), band(20, 0.12)], wallsDistinct: false }),
  ];
  return quick ? list.filter((c) => [101, 103, 106, 111, 116].includes(c.spec.seed)) : list;
}

/** Walls found the way `profile --auto-walls` (texture) and `plate --auto-walls` (colour) find them. */
async function foundWalls(r: Rendering): Promise<Walls> {
  if (r.spec.source === 'texture') {
    const { field } = await analyseOrientation(r.image, {});
    return (await analyseProfile(r.image, field, { autoWalls: true })).walls;
  }
  const { result } = await analysePlate(r.image, { profile: { autoWalls: true } });
  return result.profile!.walls;
}

async function autoWallRows(quick: boolean): Promise<ValidationRow[]> {
  const rows: ValidationRow[] = [];
  for (const c of autoWallCases(quick)) {
    const r = renderScene(c.spec);
    maybePng(r, `walls ${c.label}`);
    const name = `${c.label} (seed ${c.spec.seed})`;
    let found: Walls | null = null, refusal = '';
    try { found = await foundWalls(r); } catch (e) {
      if (!(e instanceof InputError)) throw e;
      refusal = e.message;
    }
    if (!c.spec.wallsDistinct) {
      const ok = found === null;
      rows.push({
        area: 'channel walls', case: name, quantity: 'refuses (1 = refused)', value: ok ? 1 : 0, goal: '= 1 (no two walls to find)', pass: ok,
        note: ok ? refusal : `found ${fmtWalls(found!)}`,
      });
      continue;
    }
    const truth = r.truth.walls!;
    if (!found) {
      for (const k of [0, 1]) rows.push(atMost('channel walls', name, `wall ${k} error px (max along wall)`, NaN, WALL_GOAL_PX, 'px', `refused: ${refusal}`));
      continue;
    }
    const { err, isSwapped } = wallErrors(truth, found);
    for (const k of [0, 1] as const) {
      const f = found[isSwapped ? 1 - k : k];
      rows.push(atMost('channel walls', name, `wall ${k} error px (max along wall)`, err[k], WALL_GOAL_PX, 'px',
        `true ${fmtSeg(truth[k])}, found ${fmtSeg(f)}${isSwapped ? '; walls returned in the other order' : ''}`));
    }
  }
  if (!quick) rows.push(...await randomWallRows(RANDOM_WALL_RENDERINGS));
  return rows;
}

/** Each true wall's largest distance from the found wall it pairs with (the pairing with the smaller worst error). */
function wallErrors(truth: Walls, found: Walls): { err: number[]; isSwapped: boolean } {
  const straight = [largestLineDistance(truth[0], found[0]), largestLineDistance(truth[1], found[1])];
  const swapped = [largestLineDistance(truth[0], found[1]), largestLineDistance(truth[1], found[0])];
  const isSwapped = Math.max(...swapped) < Math.max(...straight);
  return { err: isSwapped ? swapped : straight, isSwapped };
}

const RANDOM_WALL_RENDERINGS = 40;

/**
 * Wall kinds drawn at random (seeded): texture or colour; each wall a dark band (8-27 px, level 0.08-0.33), a
 * thin line (1-4 px, 0.6-0.95) before a band, or nothing (then a flat background for texture, the sample-free
 * colour for colour); any axis from -80 to 90 deg, width 120-199 px, a third of them tapering 2 deg. The
 * fifteen kinds above are chosen; these show how the finder does on kinds nobody chose.
 */
function randomWallSpec(k: number): SceneSpec {
  const rng = new Rng(7919 * (k + 1));
  const u = () => rng.uniform();
  const colour = u() < 0.5;
  const kind = (): WallStyle => {
    const v = u();
    return v < 0.45 ? brightEdge(1 + Math.floor(u() * 4), 0.6 + 0.35 * u(), 8 + Math.floor(u() * 16), 0.08 + 0.2 * u())
      : v < 0.85 ? band(8 + Math.floor(u() * 20), 0.08 + 0.25 * u()) : noBand;
  };
  const walls = [kind(), kind()];
  if (!colour && walls.every((w) => w.kind === 'none')) walls[0] = band(16, 0.12);
  const axisDeg = Math.round(-80 + 170 * u());
  const channel = { axisDeg, widthPx: 120 + Math.floor(u() * 80), taperDeg: u() < 0.3 ? 2 : 0 };
  const background = colour ? { kind: 'sample-free' as const } : walls.some((w) => w.kind === 'none') ? { kind: 'flat' as const, level: 0.3 + 0.5 * u() } : {};
  return scene({ name: `random walls ${k}`, seed: 500 + k, width: 480, height: 360, source: colour ? 'colour' : 'texture', channel, walls, background });
}

async function randomWallRows(n: number): Promise<ValidationRow[]> {
  const misses: string[] = [];
  let within = 0;
  for (let k = 0; k < n; k++) {
    const spec = randomWallSpec(k);
    const r = renderScene(spec);
    const what = `${spec.source} ${spec.channel!.axisDeg}deg ${spec.walls.map((w) => w.kind === 'bright-edge' ? `line ${w.edgePx}px ${w.edgeLevel.toFixed(2)}` : w.kind).join('/')}`;
    try {
      const { err } = wallErrors(r.truth.walls!, await foundWalls(r));
      if (Math.max(...err) <= WALL_GOAL_PX) within++;
      else misses.push(`${k} (${what}): ${err.map((e) => e.toFixed(1)).join(', ')} px`);
    } catch (e) {
      if (!(e instanceof InputError)) throw e;
      misses.push(`${k} (${what}): refused`);
    }
  }
  return [within === n
    ? atMost('channel walls', `${n} renderings of random wall kinds`, 'renderings with a wall off by > 1 px or refused', 0, 0, '', 'every wall within 1 px')
    : atMost('channel walls', `${n} renderings of random wall kinds`, 'renderings with a wall off by > 1 px or refused', n - within, 0, '', misses.join('; '))];
}

const fmtSeg = (s: Segment) => [s.x1, s.y1, s.x2, s.y2].map((v) => v.toFixed(1)).join(',');
const fmtWalls = (w: Walls) => `${fmtSeg(w[0])};${fmtSeg(w[1])}`;

// ---------------------------------------------------------------------------------------------------------
// 2. Given walls: every bin against the rendered truth.

type Reader = 'texture' | 'plate, known retardance + background' | 'plate, background' | 'plate2, background';

/**
 * Whether the reader's data fix S_axis in this scene, so that withholding it is a miss. Texture and two
 * compensator images always do. One image never does here: with an unknown sample retardance its colour mixes
 * angle and retardance; with the retardance known and a sample-free area, the angle is fixed only up to its
 * mirror about the compensator axis, and even along that axis (where the mirror leaves S_axis unchanged) the
 * one-image reading missed S by 0.11-0.6 per bin on these renderings, so the tool withholds it by rule
 * (docs/methods.md, "Why one image's order numbers are withheld"). Its rows check that it says so.
 */
function determined(reader: Reader): boolean {
  return reader === 'texture' || reader === 'plate2, background';
}

interface ProfileCase {
  label: string; spec: SceneSpec; readers: Reader[]; bins: number; stations: number;
  /** Over-exposed: part of the channel is at full scale, so withholding the bins it touches is right. */
  clipped?: boolean;
}

function profileCases(quick: boolean): ProfileCase[] {
  const list: ProfileCase[] = [];
  for (const [k, axisDeg] of [0, 23, 35, -61].entries()) {
    list.push({
      label: `texture ${axisDeg}deg, bands`, readers: ['texture'], bins: 20, stations: 1,
      spec: scene({ name: 'tex', seed: 201 + k, width: 640, height: 480, channel: { axisDeg, widthPx: 220 }, walls: [band(20, 0.12), band(20, 0.12)], order: { core: 0.8, skin: 0.5 } }),
    });
    list.push({
      label: `colour ${axisDeg}deg, bands, Gamma 250 nm`, readers: ['plate, known retardance + background', 'plate, background', 'plate2, background'], bins: 20, stations: 1,
      spec: scene({
        name: 'col', seed: 211 + k, width: 480, height: 360, source: 'colour', channel: { axisDeg, widthPx: 170 }, walls: [band(20, 0.25), band(20, 0.25)],
        background: { kind: 'sample-free' }, order: { core: 0.8, skin: 0.5 }, optics: { retardanceNm: 250, turnDeg: 45 },
      }),
    });
  }
  list.push(
    {
      // Control: the same texture inside and out, no visible wall, so what remains is the texture reading itself.
      label: 'texture 23deg, no visible wall (control)', readers: ['texture'], bins: 20, stations: 1,
      spec: scene({ name: 'tex-control', seed: 220, width: 640, height: 480, channel: { axisDeg: 23, widthPx: 220 }, walls: [noBand, noBand], background: { kind: 'interior' }, order: { core: 0.8, skin: 0.5 } }),
    },
    {
      label: 'texture 35deg, taper 3deg, skin > core, 3 stations', readers: ['texture'], bins: 20, stations: 3,
      spec: scene({ name: 'tex-taper', seed: 221, width: 640, height: 480, channel: { axisDeg: 35, widthPx: 220, taperDeg: 3 }, walls: [brightEdge(3, 0.9, 16, 0.1), band(12, 0.2)], order: { core: 0.5, skin: 0.85 } }),
    },
    {
      label: 'texture -61deg, width 90 px, 16-bit, uneven light', readers: ['texture'], bins: 10, stations: 1,
      spec: scene({
        name: 'tex-narrow', seed: 222, width: 400, height: 300, channel: { axisDeg: -61, widthPx: 90 }, walls: [band(18, 0.1), band(18, 0.1)], order: { core: 0.75, skin: 0.6 },
        imaging: { bitDepth: 16, gradient: [0.3, 0.2], vignetting: 0.25, fullWellElectrons: 4000 },
      }),
    },
    {
      label: 'colour 23deg, Gamma 165 nm, no band', readers: ['plate, known retardance + background', 'plate2, background'], bins: 20, stations: 1,
      spec: scene({
        name: 'col-165', seed: 223, width: 480, height: 360, source: 'colour', channel: { axisDeg: 23, widthPx: 160 }, walls: [noBand, noBand],
        background: { kind: 'sample-free' }, order: { core: 0.7, skin: 0.7 }, optics: { retardanceNm: 165, turnDeg: 45 },
      }),
    },
    {
      label: 'colour 23deg, Gamma 250 nm, over-exposed (open beam at full scale)', readers: ['plate2, background'], bins: 20, stations: 1, clipped: true,
      spec: scene({
        name: 'col-clipped', seed: 225, width: 480, height: 360, source: 'colour', channel: { axisDeg: 23, widthPx: 170 }, walls: [band(20, 0.25), band(20, 0.25)],
        background: { kind: 'sample-free' }, order: { core: 0.8, skin: 0.5 }, optics: { retardanceNm: 250, turnDeg: 45, exposure: 1 },
      }),
    },
    {
      label: 'colour 45deg (along compensator), Gamma 300 nm +-8 %', readers: ['plate, known retardance + background', 'plate, background', 'plate2, background'], bins: 20, stations: 1,
      spec: scene({
        name: 'col-45', seed: 224, width: 480, height: 360, source: 'colour', channel: { axisDeg: 45, widthPx: 180 }, walls: [band(16, 0.3), band(16, 0.3)],
        background: { kind: 'sample-free' }, order: { core: 0.85, skin: 0.55 }, optics: { retardanceNm: 300, retardanceSpread: 0.08, turnDeg: 45 },
      }),
    },
  );
  if (!quick) return list;
  return list.filter((c) => c.spec.name === 'tex');
}

/** The profile a reader gives with the true walls, as the CLI would compute it. */
async function readProfile(r: Rendering, reader: Reader, walls: Walls, bins: number, stations: number): Promise<ProfileResult> {
  const req = { channel: { walls }, bins, stations };
  const bg = r.truth.backgroundRect ?? undefined;
  if (reader === 'texture') {
    const { field } = await analyseOrientation(r.image, {});
    return analyseProfile(r.image, field, req);
  }
  if (!bg) throw new Error(`${r.spec.name}: no sample-free rectangle for ${reader}`);
  switch (reader) {
    case 'plate, known retardance + background':
      return (await analysePlate(r.image, { sampleRetardanceNm: r.spec.optics.retardanceNm, sampleFree: bg, profile: req })).result.profile!;
    case 'plate, background':
      return (await analysePlate(r.image, { sampleFree: bg, profile: req })).result.profile!;
    case 'plate2, background':
      if (!r.imageB) throw new Error(`${r.spec.name}: no second image`);
      return (await analysePlatePair(r.image, r.imageB, { sampleFree: bg, profile: req })).result.profile!;
  }
}

/** A reported number, or NaN where the result withholds it (null in the JSON). */
const num = (v: unknown): number => (typeof v === 'number' ? v : NaN);

/** Why a result withholds its numbers, from its notDetermined reasons or its warnings. */
function withheldReason(p: ProfileResult): string {
  const nd = (p as { notDetermined?: Record<string, string> }).notDetermined;
  return nd ? Object.values(nd).join('; ') : p.warnings.join('; ') || 'no reason given';
}

/** Point estimates outside their own interval, over every interval the rows looked at. */
const ownInterval = new InsideCheck();

async function profileRows(quick: boolean): Promise<ValidationRow[]> {
  const rows: ValidationRow[] = [];
  for (const c of profileCases(quick)) {
    const r = renderScene(c.spec);
    maybePng(r, `profile ${c.label}`);
    const walls = r.truth.walls!;
    const truth = profileTruth(r.truth, c.spec.width, { bins: c.bins, stations: c.stations });
    for (const reader of c.readers) {
      const name = `${c.label}, ${reader} (seed ${c.spec.seed})`;
      if (reader === 'texture') { rows.push(...await textureRows(c, r, truth, name, quick)); continue; }
      const mustGive = determined(reader) && !c.clipped;
      let p: ProfileResult;
      try { p = await readProfile(r, reader, walls, c.bins, c.stations); } catch (e) {
        if (!(e instanceof InputError)) throw e;
        rows.push({ ...atMost('channel profile', name, 'largest |bin S - truth|', NaN, BIN_GOAL, '', `refused: ${e.message}`), pass: !mustGive });
        continue;
      }
      const errs: { e: number; where: string }[] = [];
      let withheld = 0;
      const compare = (bins: ProfileResult['bins'], tb: typeof truth.bins, where: string) => bins.forEach((b, k) => {
        const v = num(b.order);
        ownInterval.check(`${name} bin ${k}`, v, num(b.ciLow), num(b.ciHigh));
        if (!Number.isFinite(v)) { withheld++; return; }
        errs.push({ e: Math.abs(v - tb[k].realised), where: `${where}bin ${k} (s ${b.s.toFixed(2)}): ${v.toFixed(3)} vs ${tb[k].realised.toFixed(3)}, n ${b.n}` });
      });
      compare(p.bins, truth.bins, '');
      if (c.stations > 1) p.stations.forEach((st, j) => compare(st.bins, truth.stations[j].bins, `station ${j} `));
      const worst = errs.length ? errs.reduce((a, b) => (b.e > a.e ? b : a)) : null;
      const shown = (what: string, v: unknown, t: number) => `${what} ${Number.isFinite(num(v)) ? num(v).toFixed(3) : 'withheld'} vs ${t.toFixed(3)}`;
      const tail = `${shown('core', p.core.order, truth.core.realised)}, ${shown('skin', p.skin.order, truth.skin.realised)}`;
      if (withheld > 0) {
        // Withholding is right only where the data do not fix S; given numbers must still be within the goal.
        const ok = !mustGive && (worst === null || worst.e <= BIN_GOAL);
        rows.push({
          area: 'channel profile', case: name, quantity: 'largest |bin S - truth|', value: worst?.e ?? NaN,
          goal: mustGive ? `<= ${BIN_GOAL}` : `<= ${BIN_GOAL} or withheld`, pass: ok,
          note: `${withheld} bins withheld (${withheldReason(p)})${worst ? `; worst given ${worst.where}` : ''}; ${tail}`,
        });
        continue;
      }
      rows.push({
        ...atMost('channel profile', name, 'largest |bin S - truth|', worst!.e, BIN_GOAL, '', `worst ${worst!.where}; ${tail}`),
        goal: mustGive ? `<= ${BIN_GOAL}` : `<= ${BIN_GOAL} or withheld`,
      });
    }
  }
  return rows;
}

/**
 * Texture bins. A streak texture shows its director only through a random streak pattern, and one pattern
 * moves a bin of ~5000 px by sd 0.005-0.022 about what the director field gives (measured over six patterns
 * of one field), so one rendering cannot show a reading's own error below that scatter: the largest of 20
 * bins is then 0.02-0.05 off on one image even with no wall in view. Each case is read through
 * streak patterns of one director field (`patternSeed`): at least TEXTURE_PATTERNS.min, and more (up to .max)
 * until every bin's mean over the patterns is known to a standard error of MEAN_SE (small bins, such as the
 * three stations' of 1800 px, scatter by 0.04). Two goals are checked:
 * - every bin's mean over the patterns within 0.03 of the truth: what the reading gets wrong whatever the
 *   pattern (a wall read into its bins, a bias of the tensor's scale), which is what a per-bin goal can test;
 * - the pattern's scatter is part of what each bin's interval states: for every bin, the sd over the
 *   patterns at most the bin's standard error (its 95 % half-width / 1.96, averaged over the patterns).
 * The largest single-rendering error and the share of single bins beyond 0.03 are in the note.
 */
const TEXTURE_PATTERNS = { min: 6, max: 24, quick: 3 };
const MEAN_SE = 0.01;

async function textureRows(c: ProfileCase, r0: Rendering, truth: ReturnType<typeof profileTruth>, name: string, quick: boolean): Promise<ValidationRow[]> {
  const kMin = quick ? TEXTURE_PATTERNS.quick : TEXTURE_PATTERNS.min, kMax = quick ? TEXTURE_PATTERNS.quick : TEXTURE_PATTERNS.max;
  const truths = [truth.bins, ...(c.stations > 1 ? truth.stations.map((st) => st.bins) : [])].flat();
  const labels = [...truth.bins.map((_, i) => `bin ${i}`), ...(c.stations > 1 ? truth.stations.flatMap((st, j) => st.bins.map((_, i) => `station ${j} bin ${i}`)) : [])];
  const values = truths.map(() => [] as number[]), se = new Float64Array(truths.length);
  const meanOf = (v: number[]) => v.reduce((a, x) => a + x, 0) / v.length;
  const sdOf = (v: number[]) => { const m = meanOf(v); return Math.sqrt(v.reduce((a, x) => a + (x - m) ** 2, 0) / (v.length - 1)); };
  const settled = () => values.every((v) => sdOf(v) / Math.sqrt(v.length) <= MEAN_SE);
  let beyond = 0, worstSingle = 0, k = 0;
  for (let j = 0; j < kMax && (j < kMin || !settled()); j++, k++) {
    const r = j === 0 ? r0 : renderScene({ ...c.spec, patternSeed: c.spec.seed * 1000 + j });
    const p = await readProfile(r, 'texture', r.truth.walls as Walls, c.bins, c.stations);
    const bins = [p.bins, ...(c.stations > 1 ? p.stations.map((st) => st.bins) : [])].flat();
    bins.forEach((b, i) => {
      const v = num(b.order);
      ownInterval.check(`${name} pattern ${j} ${labels[i]}`, v, num(b.ciLow), num(b.ciHigh));
      values[i].push(v);  // NaN (withheld) spoils the rows below: a texture always determines S
      se[i] += (num(b.ciHigh) - num(b.ciLow)) / (2 * 1.96);
      const e = Math.abs(v - truths[i].realised);
      if (!(e <= BIN_GOAL)) beyond++;
      worstSingle = Math.max(worstSingle, Number.isFinite(e) ? e : Infinity);
    });
  }
  const mean = values.map(meanOf), sd = values.map(sdOf);
  se.forEach((v, i) => (se[i] = v / k));
  const worstOf = (score: (i: number) => number) => truths.reduce((w, _, i) => (!(score(i) <= score(w)) ? i : w), 0);
  const e = (i: number) => Math.abs(mean[i] - truths[i].realised), z = (i: number) => sd[i] / se[i];
  const we = worstOf(e), wz = worstOf(z);
  const single = `single renderings: largest bin error ${worstSingle.toFixed(3)}, ${beyond} of ${k * truths.length} bins beyond ${BIN_GOAL}`;
  return [
    atMost('channel profile', name, `largest |bin S - truth|, mean of ${k} streak patterns`, e(we), BIN_GOAL, '',
      `worst ${labels[we]}: ${mean[we].toFixed(3)} (standard error ${(sd[we] / Math.sqrt(k)).toFixed(3)}) vs ${truths[we].realised.toFixed(3)}; ${single}`),
    atMost('channel profile', name, 'streak-pattern sd / bin standard error, largest', z(wz), 1, '',
      `worst ${labels[wz]}: sd ${sd[wz].toFixed(3)}, standard error ${se[wz].toFixed(3)}`),
  ];
}

// ---------------------------------------------------------------------------------------------------------
// 3. Coverage of the 95 % intervals over seeded renderings.

interface CoverageCase {
  label: string;
  make: (seed: number) => SceneSpec;
  kind: 'profile' | 'whole image';
  reader: Reader;
  bins: number;
  /** In the quick subset. */
  quick: boolean;
}

function coverageCases(): CoverageCase[] {
  // Small frames: 100 renderings per case must stay within minutes.
  const small = { width: 256, height: 192 };
  return [
    {
      label: 'texture 0deg, core 0.8 / skin 0.5', kind: 'profile', reader: 'texture', bins: 10, quick: true,
      make: (seed) => scene({ name: 'cov-tex-0', seed, ...small, channel: { axisDeg: 0, widthPx: 110 }, walls: [band(16, 0.12), band(16, 0.12)], order: { core: 0.8, skin: 0.5 } }),
    },
    {
      label: 'texture -61deg, taper 2deg, core 0.5 / skin 0.8', kind: 'profile', reader: 'texture', bins: 10, quick: false,
      make: (seed) => scene({ name: 'cov-tex-61', seed, ...small, channel: { axisDeg: -61, widthPx: 100, taperDeg: 2 }, walls: [brightEdge(2, 0.9, 12, 0.12), band(16, 0.15)], order: { core: 0.5, skin: 0.8 } }),
    },
    {
      label: 'colour 23deg, core 0.8 / skin 0.5, two images', kind: 'profile', reader: 'plate2, background', bins: 10, quick: false,
      make: (seed) => scene({
        name: 'cov-plate2', seed, width: 240, height: 180, source: 'colour', channel: { axisDeg: 23, widthPx: 100 }, walls: [band(14, 0.25), band(14, 0.25)],
        background: { kind: 'sample-free' }, order: { core: 0.8, skin: 0.5 }, optics: { retardanceNm: 250, turnDeg: 45 },
      }),
    },
    {
      label: 'texture, whole image, S 0.7 at 23deg', kind: 'whole image', reader: 'texture', bins: 0, quick: true,
      make: (seed) => scene({ name: 'cov-orient', seed, ...small, channel: null, directorDeg: 23, order: { core: 0.7, skin: 0.7 } }),
    },
    {
      label: 'texture, whole image, isotropic', kind: 'whole image', reader: 'texture', bins: 0, quick: false,
      make: (seed) => scene({ name: 'cov-iso', seed, ...small, channel: null, directorDeg: 23, order: { core: 0, skin: 0 } }),
    },
  ];
}

/** One interval of one rendering: the estimate, its interval and both truths. */
interface IntervalRecord {
  group: 'bins' | 'wall bins' | 'core' | 'skin' | 'core/skin ratio' | 'whole-image S_2D' | 'whole-image S_axis';
  estimate: number; lo: number; hi: number; ensemble: number; realised: number;
  /** The data do not fix this number (a ratio whose denominator's interval includes 0): withholding it is right. */
  mayWithhold?: boolean;
}

interface JobResult { records: IntervalRecord[]; refused: string | null }

/** Renders one seed of one coverage case and reads it as the CLI would. */
async function coverageJob(caseIndex: number, seed: number): Promise<JobResult> {
  const c = coverageCases()[caseIndex];
  const r = renderScene(c.make(seed));
  const records: IntervalRecord[] = [];
  if (c.kind === 'whole image') {
    const axisDeg = r.spec.directorDeg;
    const { result } = await analyseOrientation(r.image, { axisDeg });
    const t = wholeImageTruth(r.truth, axisDeg);
    records.push(
      { group: 'whole-image S_2D', estimate: num(result.order2D), lo: num(result.order2DCiLow), hi: num(result.order2DCiHigh), ensemble: t.order2D.ensemble, realised: t.order2D.realised },
      { group: 'whole-image S_axis', estimate: num(result.axisOrder), lo: num(result.axisOrderCiLow), hi: num(result.axisOrderCiHigh), ensemble: t.axisOrder.ensemble, realised: t.axisOrder.realised },
    );
    return { records, refused: null };
  }
  let p: ProfileResult;
  try { p = await readProfile(r, c.reader, r.truth.walls!, c.bins, 1); } catch (e) {
    if (!(e instanceof InputError)) throw e;
    return { records, refused: e.message };
  }
  const t = profileTruth(r.truth, r.spec.width, { bins: c.bins });
  p.bins.forEach((b, k) => records.push({
    group: k === 0 || k === c.bins - 1 ? 'wall bins' : 'bins', estimate: num(b.order), lo: num(b.ciLow), hi: num(b.ciHigh), ensemble: t.bins[k].ensemble, realised: t.bins[k].realised,
  }));
  records.push(
    { group: 'core', estimate: num(p.core.order), lo: num(p.core.ciLow), hi: num(p.core.ciHigh), ensemble: t.core.ensemble, realised: t.core.realised },
    { group: 'skin', estimate: num(p.skin.order), lo: num(p.skin.ciLow), hi: num(p.skin.ciHigh), ensemble: t.skin.ensemble, realised: t.skin.realised },
    {
      group: 'core/skin ratio', estimate: num(p.coreSkinRatio), lo: num(p.coreSkinRatioCiLow), hi: num(p.coreSkinRatioCiHigh), ensemble: t.ratio.ensemble, realised: t.ratio.realised,
      mayWithhold: !(num(p.skin.ciLow) > 0 || num(p.skin.ciHigh) < 0),
    },
  );
  return { records, refused: null };
}

interface Tally { hit: number; narrow: number; wide: number; realised: number; withheld: number; excused: number; n: number }
const tally = (): Tally => ({ hit: 0, narrow: 0, wide: 0, realised: 0, withheld: 0, excused: 0, n: 0 });

/**
 * Counts whether [lo, hi] (and the same made 20 % narrower or wider about its centre) contains the truth. Every
 * case here is one whose data fix the quantity, so a withheld interval counts as one that does not cover, except a
 * ratio whose denominator's interval includes 0 (withheld by rule; left out of the rate).
 */
function count(t: Tally, r: IntervalRecord) {
  if (![r.lo, r.hi].every(Number.isFinite) && r.mayWithhold) { t.excused++; return; }
  t.n++;
  if (![r.lo, r.hi].every(Number.isFinite)) { t.withheld++; return; }
  const c = (r.lo + r.hi) / 2, h = (r.hi - r.lo) / 2;
  const inside = (f: number, v: number) => v >= c - f * h && v <= c + f * h;
  if (inside(1, r.ensemble)) t.hit++;
  if (inside(0.8, r.ensemble)) t.narrow++;
  if (inside(1.2, r.ensemble)) t.wide++;
  if (inside(1, r.realised)) t.realised++;
}

const sum = (a: Tally, b: Tally): Tally => ({
  hit: a.hit + b.hit, narrow: a.narrow + b.narrow, wide: a.wide + b.wide, realised: a.realised + b.realised, withheld: a.withheld + b.withheld, excused: a.excused + b.excused, n: a.n + b.n,
});

/**
 * Binomial acceptance band for the observed coverage of n exact 95 % intervals: the counts k with
 * P(X < k) > 0.005 and P(X > k) > 0.005 for X ~ Bin(n, 0.95), in %. Used for the quick subset, whose few
 * renderings cannot resolve 90-99 % (with 12 intervals, an exact 95 % interval shows 100 % more than half the
 * time). The intervals of one rendering (its bins) are not independent, so the band is taken for n = the
 * number of renderings, the wider choice.
 */
export function binomialBand(n: number, p = 0.95, tail = 0.005): [number, number] {
  const pmf = (k: number) => Math.exp(lnChoose(n, k) + k * Math.log(p) + (n - k) * Math.log(1 - p));
  let lo = 0, below = 0;
  while (lo < n && below + pmf(lo) <= tail) below += pmf(lo++);
  let hi = n, above = 0;
  while (hi > 0 && above + pmf(hi) <= tail) above += pmf(hi--);
  return [(100 * lo) / n, (100 * hi) / n];
}

function lnChoose(n: number, k: number): number {
  let v = 0;
  for (let i = 1; i <= k; i++) v += Math.log(n - k + i) - Math.log(i);
  return v;
}

/** A coverage row; `quickRenderings` > 0 gives the quick subset's binomial band for that many renderings instead of 90-99 %. */
function coverageRow(kase: string, what: string, t: Tally, quickRenderings: number, extra = ''): ValidationRow {
  const pct = (v: number) => (100 * v) / t.n;
  const held = (t.withheld ? `; ${t.withheld} withheld (counted as not covering)` : '') + (t.excused ? `; ${t.excused} withheld as the data do not fix them (left out)` : '');
  const [lo, hi] = quickRenderings > 0 ? binomialBand(quickRenderings).map((v) => Math.round(v * 10) / 10) : [COVERAGE_LO, COVERAGE_HI];
  return within('channel coverage', kase, `${what}: 95 % intervals covering the truth %`, pct(t.hit), lo, hi, '%',
    `${t.n} intervals${held}; x0.8 ${pct(t.narrow).toFixed(1)} %, x1.2 ${pct(t.wide).toFixed(1)} %; vs rendered mean ${pct(t.realised).toFixed(1)} %${extra}`);
}

/** Worker threads: RETARDA_VALIDATE_WORKERS when set (1 = none); else none for the quick subset, min(2, cores) for the full run. */
function workerCount(quick: boolean): number {
  const env = Number(process.env.RETARDA_VALIDATE_WORKERS);
  if (Number.isInteger(env) && env >= 1) return env;
  return quick ? 1 : Math.min(2, availableParallelism());
}

/** Runs the jobs in order here, or spread over worker threads running this same module. */
async function runJobs(jobs: { caseIndex: number; seed: number }[], workers: number): Promise<JobResult[]> {
  if (workers <= 1) {
    const out: JobResult[] = [];
    for (const j of jobs) out.push(await coverageJob(j.caseIndex, j.seed));
    return out;
  }
  const results: JobResult[] = new Array(jobs.length);
  let next = 0;
  // A worker starts without this thread's TypeScript loader: register tsx's, then load this module.
  const boot = `import { register } from ${JSON.stringify(import.meta.resolve('tsx/esm/api'))}; register(); await import(${JSON.stringify(import.meta.url)});`;
  const pool = Array.from({ length: workers }, () => new Worker(new URL(`data:text/javascript,${encodeURIComponent(boot)}`), { workerData: { channelCoverageWorker: true } }));
  try {
    await Promise.all(pool.map((w) => new Promise<void>((resolve, reject) => {
      const send = () => {
        if (next >= jobs.length) { resolve(); return; }
        const id = next++;
        w.postMessage({ id, ...jobs[id] });
      };
      w.on('message', (m: { id: number; result?: JobResult; error?: string }) => {
        if (m.error !== undefined) { reject(new Error(m.error)); return; }
        results[m.id] = m.result!;
        send();
      });
      w.on('error', reject);
      send();
    })));
  } finally {
    await Promise.all(pool.map((w) => w.terminate()));
  }
  return results;
}

if (!isMainThread && (workerData as { channelCoverageWorker?: boolean } | null)?.channelCoverageWorker) {
  parentPort!.on('message', async (m: { id: number; caseIndex: number; seed: number }) => {
    try {
      parentPort!.postMessage({ id: m.id, result: await coverageJob(m.caseIndex, m.seed) });
    } catch (e) {
      parentPort!.postMessage({ id: m.id, error: String(e instanceof Error ? e.stack : e) });
    }
  });
}

async function coverageRows(quick: boolean): Promise<ValidationRow[]> {
  const all = coverageCases();
  const chosen = all.map((c, caseIndex) => ({ c, caseIndex })).filter(({ c }) => !quick || c.quick);
  const renderings = quick ? 20 : 100;
  const seed0 = (caseIndex: number) => 10_000 + 1000 * caseIndex;
  const jobs = chosen.flatMap(({ caseIndex }) => Array.from({ length: renderings }, (_, i) => ({ caseIndex, seed: seed0(caseIndex) + i })));
  if (pngDir) for (const { c, caseIndex } of chosen) maybePng(renderScene(c.make(seed0(caseIndex))), `coverage ${c.label}`);
  const results = await runJobs(jobs, workerCount(quick));
  const rows: ValidationRow[] = [];
  const quickBand = quick ? renderings : 0;
  for (const { c, caseIndex } of chosen) {
    const name = `${c.label} (seeds ${seed0(caseIndex)}-${seed0(caseIndex) + renderings - 1})`;
    const mine = results.filter((_, k) => jobs[k].caseIndex === caseIndex);
    const tallies = new Map<IntervalRecord['group'], Tally>();
    for (const r of mine.flatMap((m) => m.records)) {
      if (!tallies.has(r.group)) tallies.set(r.group, tally());
      count(tallies.get(r.group)!, r);
      ownInterval.check(`${name} ${r.group}`, r.estimate, r.lo, r.hi);
    }
    const refused = mine.filter((m) => m.refused !== null);
    const ref = refused.length ? `; ${refused.length} renderings refused (${refused[0].refused})` : '';
    const get = (g: IntervalRecord['group']) => tallies.get(g) ?? tally();
    if (c.kind === 'whole image') {
      // S_2D >= 0, and where no director is determined its interval starts at 0: for an isotropic material the
      // truth sits on that bound, so the interval holds it whenever the director is not determined (by design,
      // more often than 95 %); only a floor applies there.
      const free = get('whole-image S_2D');
      const freeRow = c.label.includes('isotropic')
        ? { ...coverageRow(name, 'whole-image S_2D', free, quickBand), goal: `>= ${quickBand ? binomialBand(quickBand)[0].toFixed(1) : COVERAGE_LO} % (truth 0 on the range's bound)`, pass: (100 * free.hit) / free.n >= (quickBand ? binomialBand(quickBand)[0] : COVERAGE_LO) }
        : coverageRow(name, 'whole-image S_2D', free, quickBand);
      rows.push(freeRow, coverageRow(name, 'whole-image S_axis', get('whole-image S_axis'), quickBand));
      continue;
    }
    const inner = get('bins'), wall = get('wall bins');
    const both = sum(inner, wall);
    const pct = (t: Tally) => ((100 * t.hit) / t.n).toFixed(1);
    rows.push(
      coverageRow(name, `bins (all ${c.bins})`, both, quickBand, `; interior bins only ${pct(inner)} %, the two wall bins ${pct(wall)} %${ref}`),
      coverageRow(name, 'core', get('core'), quickBand, ref),
      coverageRow(name, 'skin', get('skin'), quickBand, ref),
      coverageRow(name, 'core/skin ratio', get('core/skin ratio'), quickBand, ref),
    );
  }
  return rows;
}

// ---------------------------------------------------------------------------------------------------------

const channelArea: ValidationArea = async ({ quick }) => {
  ownInterval.count = 0; ownInterval.total = 0; ownInterval.examples = [];
  const rows = await runParts('channel', [['walls', () => autoWallRows(quick)], ['profiles', () => profileRows(quick)], ['coverage', () => coverageRows(quick)]]);
  rows.push(ownInterval.row('channel coverage'));
  return rows;
};

export default channelArea;
