/**
 * Every command line the app shows gives the numbers the app shows: the app's own request builders
 * (app/analysis/requests.ts) turn its forms into the options the worker gets and into the command line shown; the
 * line is split into words as a POSIX shell splits it, parsed by the CLI's parser and option readers, and must give
 * back the same options (with every default the analysis fills in filled in on both sides). Then the analysis runs on
 * a small rendered image with the app's options and with the parsed ones, and the two documents must be equal.
 *
 * Covered: orient, profile (texture and --source plate), plate, plate-pair, angle-series (with and without a channel
 * profile on the reading's field), diameter, calibrate (micrometer), fibre: every command the app shows.
 */
import { describe, it, expect } from 'vitest';
import { parseArgs, COMMON_OPTIONS, type ParsedArgs } from '../../src/cli/args.ts';
import { COMMANDS } from '../../src/cli/commands/index.ts';
import { orientOptionsFrom } from '../../src/cli/commands/orient.ts';
import { profileFrom } from '../../src/cli/commands/profile.ts';
import { plateOptionsFrom } from '../../src/cli/commands/plate.ts';
import { platePairOptionsFrom } from '../../src/cli/commands/platePair.ts';
import { angleSeriesFrom } from '../../src/cli/commands/angleSeries.ts';
import { diameterOptionsFrom } from '../../src/cli/commands/diameter.ts';
import { micrometerOptionsFrom } from '../../src/cli/commands/calibrate.ts';
import { fibreRequestFrom } from '../../src/cli/commands/fibre.ts';
import {
  analyseAngleSeries, analyseDiameter, analyseMicrometer, analyseOrientation, analysePlate, analysePlatePair, analyseProfile,
  fibreNumbersResult, COMPENSATOR_OFFSET_DEG, DEFAULT_ANGLES_DEG, DEFAULT_ILLUMINANT, OPTICS_LIMITS,
} from '../../src/analyses/index.ts';
import { MASK_LIMITS, TENSOR_LIMITS } from '../../src/orientation/index.ts';
import { PROFILE_LIMITS, snapWalls, parseWalls } from '../../src/channel/index.ts';
import { DEFAULT_WEIGHTING } from '../../src/order/index.ts';
import { DIAMETER_LIMITS } from '../../src/fibre/index.ts';
import { MICROMETER_OPTION_LIMITS } from '../../src/calibrate/index.ts';
import { renderSampleImage, resolveTrain, turnedTrain, type SampleRetarder } from '../../src/optics/index.ts';
import { makeImage, type Image } from '../../src/image/types.ts';
import type { Plane } from '../../src/common/plane.ts';
import { DEG } from '../../src/common/angles.ts';
import {
  diameterCommandLine, diameterOptionsOf, fibreCommandLine, fibreRequestOf, micrometerCommandLine, micrometerOptionsOf, opticalCommandLine,
  opticalRequestOf, orientCommandLine, orientOptionsOf, plateSourceOf, profileRequestOf, textureProfileCommandLine, withProfile,
  type FibreNumbersForm, type ImageChoice,
} from '../../app/analysis/requests.ts';
import { DEFAULT_DIAMETER_FORM, DEFAULT_OPTICAL_FORM, DEFAULT_SETTINGS, type AnalysisSettings, type OpticalForm } from '../../app/storage/records.ts';
import { grating } from '../support/synthetic.ts';
import { renderFibres } from '../fibre/render.ts';
import { renderRuler } from '../calibrate/render.ts';
import { shellWords } from '../support/shellWords.ts';

/** The line parsed as `retarda` parses it: its command, its file names and its options (no former names). */
function parsed(line: string): { command: string; files: string[]; a: ParsedArgs } {
  const [program, command, ...rest] = shellWords(line);
  expect(program).toBe('retarda');
  const cmd = COMMANDS.find((c) => c.name === command)!;
  expect(cmd, `${command} is a command`).toBeDefined();
  const a = parseArgs(rest, [...cmd.options, ...COMMON_OPTIONS]);
  expect(a.notices).toEqual([]);
  return { command, files: a.positionals, a };
}

/** Keys whose values are undefined are not there (an option left out and one given as undefined are the same). */
const defined = (o: object): Record<string, unknown> => JSON.parse(JSON.stringify(o, (_k, v) => (v === undefined ? undefined : v)));

/** The options with the analysis's defaults filled in where they are not given. */
const filled = (o: object, defaults: Record<string, unknown>): Record<string, unknown> => ({ ...defaults, ...defined(o) });

const TEXTURE_DEFAULTS = {
  sigmaPx: TENSOR_LIMITS.sigmaPx.default, sigmaDerivPx: TENSOR_LIMITS.sigmaDerivPx.default, derivative: 'gaussian',
  strengthFloor: MASK_LIMITS.strengthFloor.default, coherencyMin: MASK_LIMITS.coherencyMin.default, weighting: DEFAULT_WEIGHTING.texture,
};
const REQUEST_DEFAULTS = { bins: PROFILE_LIMITS.bins.default, stations: PROFILE_LIMITS.stations.default, coreMax: PROFILE_LIMITS.coreMax.default, skinMin: PROFILE_LIMITS.skinMin.default };
/** The optical defaults; the compensator axis defaults to the polariser's + 45 deg. */
function opticsFilled(o: object): Record<string, unknown> {
  const d = defined(o) as { polariserDeg?: number; profile?: Record<string, unknown> | null };
  const pol = d.polariserDeg ?? OPTICS_LIMITS.polariserDeg.default;
  const out = filled(d, {
    polariserDeg: pol, compensatorDeg: pol + COMPENSATOR_OFFSET_DEG, illuminant: DEFAULT_ILLUMINANT, retardanceMaxNm: OPTICS_LIMITS.retardanceMaxNm.default,
    retardanceMinNm: OPTICS_LIMITS.retardanceMinNm.default, sign: 'positive', match: 'lab', turnDeg: OPTICS_LIMITS.turnDeg.default,
    maxShiftPx: OPTICS_LIMITS.maxShiftPx.default, amplitudeFloor: OPTICS_LIMITS.amplitudeFloor.default, weighting: DEFAULT_WEIGHTING.optical,
    resolveMirror: false, anglesDeg: DEFAULT_ANGLES_DEG, profile: null,
  });
  if (d.profile) out.profile = filled(d.profile, { ...REQUEST_DEFAULTS, weighting: DEFAULT_WEIGHTING.optical });
  return out;
}

/** Result documents compared as JSON (NaN and null alike, as the command line prints them). */
const asJson = (v: unknown) => JSON.parse(JSON.stringify(v));

// Images: a grating (construction: stripes at 30 deg, period 6 px) for the texture, rendered compensator and
// crossed-polariser images of a -20 deg / 250 nm retarder beside a sample-free strip, a fibre and a ruler.
const W = 64, H = 48;
const g = grating(W, H, 30, 6);
const texture = makeImage({ width: W, height: H, channels: 1, planes: [g.data], bitDepth: 32, encoding: 'linear', source: { name: 'run 1.tif' } });
const sample = (x: number): SampleRetarder => (x < 10 ? { angleRad: 0, retardanceNm: 0 } : { angleRad: -20 * DEG, retardanceNm: 250 });
const cam = { gains: [1, 1, 1] as [number, number, number], exposure: 0.75 };
const train = resolveTrain();
const plateA = { ...renderSampleImage(40, 24, (x) => sample(x), train, { noiseSd: 0.003, seed: 1, camera: cam }), source: { name: 'plate "a".png' } };
const plateB = { ...renderSampleImage(40, 24, (x) => sample(x), turnedTrain(train, 45), { noiseSd: 0.003, seed: 2, camera: cam }), source: { name: 'plate b.png' } };
const angleImages = [0, 22.5, 45, 67.5].map((a, k) => ({
  ...renderSampleImage(40, 24, (x) => sample(x), { polariserDeg: a, analyserDeg: a + 90, compensator: null }, { noiseSd: 0.002, seed: 5 + k, camera: cam }),
  source: { name: `q${k} $x.png` },
}));
const grey = (p: Plane, name: string): Image => makeImage({ width: p.width, height: p.height, channels: 1, planes: [p.data], bitDepth: 16, encoding: 'linear', source: { name } });
const fibre = grey(renderFibres({ width: 120, height: 100, noiseSd: 0.005, fibres: [{ cx: 60, cy: 50, angleDeg: 30, widthPx: 14, contrast: -0.4 }] }), 'fibre.png');
const ruler = grey(renderRuler({ width: 300, height: 120, periodPx: 14.3, linesDeg: 92, contrast: -0.4, noiseSd: 0.01 }), 'ruler.png');

const images: ImageChoice['images'] = [plateA, plateB, ...angleImages].map((img, k) => ({ id: `i${k}`, name: img.source.name }));
const imageById = (id: string): Image => [plateA, plateB, ...angleImages][Number(id.slice(1))];
const choice: ImageChoice = { images, activeId: 'i0' };

const settingsVariants: AnalysisSettings[] = [
  DEFAULT_SETTINGS,
  { ...DEFAULT_SETTINGS, sigmaPx: 3.5, weighting: 'strength-coherency', axisDeg: 15, bins: 12, stations: 2, coreMax: 0.4, skinMin: 0.7 },
  { ...DEFAULT_SETTINGS, sigmaPx: 1.5, weighting: 'none', axisDeg: -30.25, bins: 8 },
];

describe('orient and profile: the app\'s command lines parse back into the options it ran', () => {
  it('orient', async () => {
    for (const s of settingsVariants) {
      const o = orientOptionsOf(s);
      const { files, a } = parsed(orientCommandLine(texture.source.name, o));
      expect(files).toEqual([texture.source.name]);
      const back = orientOptionsFrom(a);
      expect(filled(back, TEXTURE_DEFAULTS)).toEqual(filled(o, TEXTURE_DEFAULTS));
      expect(asJson((await analyseOrientation(texture, back)).result)).toEqual(asJson((await analyseOrientation(texture, o)).result));
    }
  });

  it('profile on the texture field, on walls drawn (kept to 0.1 px) and on walls found', async () => {
    const drawn = snapWalls(parseWalls('2.345,4.04,61.96,5.5;2,43.21,62.5,42.987'));
    for (const s of settingsVariants) {
      for (const found of [false, true]) {
        const request = profileRequestOf(s, drawn, found, true);
        const line = textureProfileCommandLine(texture.source.name, orientOptionsOf(s), request);
        const { files, a } = parsed(line);
        expect(files).toEqual([texture.source.name]);
        const back = profileFrom(a);
        expect(back.source.kind).toBe('texture');
        const tex = back.source.kind === 'texture' ? back.source.texture : {};
        expect(filled(tex, TEXTURE_DEFAULTS)).toEqual(filled({ sigmaPx: s.sigmaPx }, TEXTURE_DEFAULTS));
        const textureRequest = { ...REQUEST_DEFAULTS, weighting: DEFAULT_WEIGHTING.texture };
        expect(filled(back.request, textureRequest)).toEqual(filled(request, textureRequest));
        if (!found) {
          const field = (await analyseOrientation(texture, { sigmaPx: s.sigmaPx })).field;
          const fieldBack = (await analyseOrientation(texture, tex)).field;
          expect(asJson(await analyseProfile(texture, fieldBack, back.request))).toEqual(asJson(await analyseProfile(texture, field, request)));
        }
      }
    }
  });
});

const form = (c: Partial<OpticalForm>): OpticalForm => ({ ...DEFAULT_OPTICAL_FORM, ...c });
const plateForms = [
  form({}),
  form({ background: '0,0,10,24', axisDeg: '45', sampleRetardanceNm: '250', sampleRetardanceToleranceNm: '30', match: 'chroma' }),
  form({ compensatorNm: '560', compensatorDeg: '50', polariserDeg: '5', illuminant: 'D65', retardanceMaxNm: '600', sign: 'negative', resolveMirror: true, background: '1,2,8,20' }),
];

describe('the optical readings: the app\'s command lines parse back into the options it ran', () => {
  it('plate (one compensator image), and a profile on its field (profile --source plate)', async () => {
    const request = { channel: parseWalls('10,2,39,2;10,21,39,21'), bins: 4, stations: 1, coreMax: 0.5, skinMin: 0.8 };
    for (const f of plateForms) {
      const r = opticalRequestOf('plate', f, choice);
      if (r.kind !== 'plate') throw new Error('a plate reading');
      const { command, files, a } = parsed(opticalCommandLine(r));
      expect([command, files]).toEqual(['plate', [plateA.source.name]]);
      const back = plateOptionsFrom(a);
      expect(opticsFilled(back)).toEqual(opticsFilled({ ...r.options, profile: null }));
      expect(asJson((await analysePlate(plateA, back)).result)).toEqual(asJson((await analysePlate(plateA, { ...r.options, profile: null })).result));

      const p = parsed(opticalCommandLine(r, request));
      expect([p.command, p.files]).toEqual(['profile', [plateA.source.name]]);
      const pb = profileFrom(p.a);
      expect(pb.source.kind).toBe('plate');
      if (pb.source.kind !== 'plate') throw new Error('a plate source');
      expect(opticsFilled(pb.source.plate)).toEqual(opticsFilled(plateSourceOf(r.options)));
      const opticalRequest = { ...REQUEST_DEFAULTS, weighting: DEFAULT_WEIGHTING.optical };
      expect(filled(pb.request, opticalRequest)).toEqual(filled(request, opticalRequest));
    }
  });

  it('plate-pair, with and without a profile on its field', async () => {
    const forms = [form({}), form({ background: '0,0,10,24', turnDeg: '-45', axisDeg: '12', retardanceMaxNm: '700' }), form({ imageB: 'i1', compensatorNm: '545' })];
    const request = { channel: parseWalls('10,2,39,2;10,21,39,21'), bins: 4, stations: 1, coreMax: 0.5, skinMin: 0.8 };
    for (const f of forms) {
      const r = opticalRequestOf('plate-pair', f, choice);
      if (r.kind !== 'plate-pair') throw new Error('a plate pair');
      for (const profile of [undefined, request]) {
        const { command, files, a } = parsed(opticalCommandLine(r, profile));
        expect([command, files]).toEqual(['plate-pair', [plateA.source.name, plateB.source.name]]);
        const sent = profile ? withProfile(r.options, profile) : { ...r.options, profile: null };
        const back = platePairOptionsFrom(a);
        expect(opticsFilled(back)).toEqual(opticsFilled(sent));
        if (!profile) expect(asJson((await analysePlatePair(plateA, plateB, back)).result)).toEqual(asJson((await analysePlatePair(plateA, plateB, sent)).result));
      }
    }
  });

  it('angle-series, with a compensator image and other angles, with and without a profile on its field', async () => {
    const forms = [
      form({}),
      form({ quadAngles: ['0', '30', '60', '90'], quadPlate: 'i0', quadPlateBackground: '0,0,10,24', axisDeg: '-20', polariserDeg: '0' }),
    ];
    const request = { autoWalls: true, bins: 6, stations: 2, coreMax: 0.45, skinMin: 0.75 };
    for (const f of forms) {
      const r = opticalRequestOf('angle-series', form({ ...f, quadImages: ['i2', 'i3', 'i4', 'i5'] }), choice);
      if (r.kind !== 'angle-series') throw new Error('an angle series');
      for (const profile of [undefined, request]) {
        const { command, files, a } = parsed(opticalCommandLine(r, profile));
        expect([command, files]).toEqual(['angle-series', angleImages.map((i) => i.source.name)]);
        const back = angleSeriesFrom(a);
        expect(back.files.plate).toBe(r.plateName);
        const sent = profile ? withProfile(r.options, profile) : { ...r.options, profile: null };
        expect(opticsFilled(back.options)).toEqual(opticsFilled(sent));
        if (!profile) {
          const plate = r.plateKey ? imageById(r.plateKey) : undefined;
          expect(asJson((await analyseAngleSeries(angleImages, { ...back.options, plate })).result))
            .toEqual(asJson((await analyseAngleSeries(r.keys.map(imageById), { ...sent, plate })).result));
        }
      }
    }
  });
});

describe('lengths and numbers: the app\'s command lines parse back into the options it ran', () => {
  const DIAMETER_DEFAULTS = { stepPx: DIAMETER_LIMITS.stepPx.default, averagePx: DIAMETER_LIMITS.averageLengthPx.default, polarity: 'auto', shadingDegree: DIAMETER_LIMITS.shadingDegree.default };

  it('diameter, with the pixel size typed, from the session or none', () => {
    const cases = [
      { f: DEFAULT_DIAMETER_FORM, pct: '', session: {} },
      { f: { ...DEFAULT_DIAMETER_FORM, umPerPx: '0.65', stepPx: '6', averagePx: '3', polarity: 'dark' as const, backgroundDegree: '0' }, pct: '0.4', session: {} },
      { f: DEFAULT_DIAMETER_FORM, pct: '', session: { umPerPx: 0.532, uncertainty: 0.0021 } },
    ];
    for (const c of cases) {
      const o = diameterOptionsOf(c.f, c.pct, c.session);
      const { files, a } = parsed(diameterCommandLine(fibre.source.name, o));
      expect(files).toEqual([fibre.source.name]);
      const back = diameterOptionsFrom(a);
      expect(filled(back, DIAMETER_DEFAULTS)).toEqual(filled(o, DIAMETER_DEFAULTS));
      expect(asJson(analyseDiameter(fibre, back))).toEqual(asJson(analyseDiameter(fibre, o)));
    }
  });

  it('calibrate (micrometer)', () => {
    const defaults = { divisionToleranceUm: MICROMETER_OPTION_LIMITS.divisionToleranceUm.default, polarity: 'auto', wavelengthNm: MICROMETER_OPTION_LIMITS.wavelengthNm.default };
    for (const f of [{ divisionUm: '10', toleranceUm: '', polarity: 'auto', na: '' }, { divisionUm: '7.5', toleranceUm: '0.2', polarity: 'dark', na: '0.25' }]) {
      const o = micrometerOptionsOf(f);
      const { files, a } = parsed(micrometerCommandLine(ruler.source.name, o));
      expect(files).toEqual([ruler.source.name]);
      const { opticsUmPerPx, ...back } = micrometerOptionsFrom(a);
      expect(opticsUmPerPx).toBeNull();
      expect(filled(back, defaults)).toEqual(filled(o, defaults));
      expect(asJson(analyseMicrometer(ruler, back))).toEqual(asJson(analyseMicrometer(ruler, o)));
    }
  });

  it('fibre numbers', () => {
    const empty: FibreNumbersForm = {
      diameterUm: '', density: '', linearDensity: '', linearDensityUnit: 'tex', tenacity: '', tenacityUnit: 'N/tex', strengthGPa: '', retardanceNm: '',
      thicknessUm: '', intrinsic: '', uDiameterUm: '', diameterDof: '', uDensity: '', uLinearDensity: '', uTenacity: '', uStrengthGPa: '', uRetardanceNm: '',
      uThicknessUm: '', uIntrinsic: '',
    };
    const forms: FibreNumbersForm[] = [
      { ...empty, diameterUm: '7', density: '1.8' },
      { ...empty, diameterUm: '8.123', density: '1.38', linearDensity: '0.7', linearDensityUnit: 'dtex', tenacity: '4', tenacityUnit: 'cN/dtex', retardanceNm: '350', uDiameterUm: '0.05', diameterDof: '12.5', uDensity: '0.01', uTenacity: '0.2' },
      { ...empty, diameterUm: '12', density: '2.1', linearDensity: '2', linearDensityUnit: 'den', strengthGPa: '3.1', uStrengthGPa: '0.2', thicknessUm: '11', intrinsic: '0.3', uIntrinsic: '0.01' },
    ];
    for (const f of forms) {
      const r = fibreRequestOf(f);
      const { files, a } = parsed(fibreCommandLine(r));
      expect(files).toEqual([]);
      const back = fibreRequestFrom(a);
      expect(defined(back)).toEqual(defined(r));
      expect(asJson(fibreNumbersResult(back))).toEqual(asJson(fibreNumbersResult(r)));
    }
  });
});

describe('the word splitter the test parses with', () => {
  it('splits as a POSIX shell: double quotes keep blanks and ;, backslash escapes $ " \\ inside them', () => {
    // Expected words worked out by hand from POSIX.1-2017 2.2.3 (double quotes) and 2.6.5 (field splitting).
    expect(shellWords('retarda x "a b.png" --walls "1,2,3,4;5,6,7,8" "q \\$x \\"y\\".png" plain')).toEqual(['retarda', 'x', 'a b.png', '--walls', '1,2,3,4;5,6,7,8', 'q $x "y".png', 'plain']);
  });
});
