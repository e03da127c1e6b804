/**
 * The Against a variable screen's plain pieces (app/trend/trendForm.ts, TrendPlot's band) and what is kept with the
 * session: the `retarda trend` line the screen shows, run as a command (split as a POSIX shell splits it), gives the
 * same points and line as the screen made from the readings kept with the session (whole-image S named with
 * --values; core S with walls drawn by hand through the CSV table the screen saves); the form's bad input in one
 * plain line; the line's 95 % band against its closed form; and both screens' forms (Against a variable, Over time)
 * coming back from storage, an unreadable one set aside in a note.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { analyseOrientation, analyseProfile, type OrientResult, type ProfileResult } from '../../src/analyses/index.ts';
import { encodePng } from '../../src/report/png.ts';
import { decodeImage, type Image } from '../../src/image/index.ts';
import { orientOptionsOf, profileRequestOf } from '../../app/analysis/requests.ts';
import { EMPTY_SERIES_FORM } from '../../app/series/seriesForm.ts';
import { DEFAULT_SETTINGS, EMPTY_WORK, newSession, restoreSession, screensWithIds, type SessionRecord } from '../../app/storage/records.ts';
import { lineSeAt } from '../../app/trend/TrendPlot.tsx';
import { trendLine, trendOf, type TrendForm } from '../../app/trend/trendForm.ts';
import { renderScene, scene } from '../validation/render/index.ts';
import { runCli } from '../support/cliRun.ts';
import { shellWords } from '../support/shellWords.ts';

let dir = '';
let session: SessionRecord;
const X = [10, 20, 30, 40];

async function png(img: Image, path: string): Promise<Image> {
  const data = new Uint16Array(img.width * img.height);
  img.planes[0].forEach((v, i) => { data[i] = Math.round(Math.min(1, Math.max(0, v)) * 65535); });
  const bytes = encodePng({ width: img.width, height: img.height, channels: 1, data, bitDepth: 16 });
  writeFileSync(path, bytes);
  return decodeImage(bytes, path);
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'retarda trend app-'));
  session = { ...newSession('s1', 'bath series'), settings: { ...DEFAULT_SETTINGS, axisDeg: null } };
  for (const [k, x] of X.entries()) {
    const c = renderScene(scene({ name: 'trend-app', seed: 6100 + k, width: 300, height: 220, order: { core: 0.85 - 0.008 * x, skin: 0.4 } }));
    const path = join(dir, `bath ${x}C.png`);
    const img = await png(c.image, path);
    const { result: orient, field } = await analyseOrientation(img, orientOptionsOf(session.settings));
    // Walls drawn by hand on the first two images (the rendering's own), found on the others.
    const hand = k < 2;
    const request = profileRequestOf(session.settings, { walls: c.truth.walls! }, !hand, true);
    const profile = await analyseProfile(img, field, request, { sigmaPx: session.settings.sigmaPx });
    const id = `i${k}`;
    session.images.push({ id, name: path, type: 'image/png', size: 1, page: 0, addedAt: new Date(0).toISOString() });
    session.work[id] = { ...EMPTY_WORK, orient: orient as OrientResult, profile: profile as ProfileResult, walls: { walls: profile.walls }, wallsFound: profile.wallsFound };
  }
}, 60_000);

const formOf = (p: Partial<TrendForm>): TrendForm => ({ reading: 'whole', variable: 'bath temperature', unit: 'deg C', values: Object.fromEntries(X.map((x, k) => [`i${k}`, String(x)])), ...p });

/** Runs the screen's line (and writes the table it reads, when it reads one) and returns its JSON. */
async function runLine(form: TrendForm) {
  const l = trendLine(session, form, join(dir, 'trend table'));
  if (l.table) writeFileSync(l.table.name, l.table.text);
  const [program, ...argv] = shellWords(l.line);
  expect(program).toBe('retarda');
  const r = await runCli([...argv, '--json']);
  expect(r.code, r.err).toBe(0);
  return { line: l, json: JSON.parse(r.out) };
}

describe('the screen\'s retarda trend line gives the screen\'s numbers', () => {
  it('whole-image S, images named with --values', async () => {
    const form = formOf({});
    const app = trendOf(session, form);
    const { line, json } = await runLine(form);
    expect(line.table).toBeNull();
    expect(line.differs).toBeNull();
    expect(json.points.map((p: { reading: number }) => p.reading)).toEqual(app.points.map((p) => p.reading));
    expect(json.fit.slope).toBe(app.fit.slope);
    expect(json.fit.slopeCiHigh).toBe(app.fit.slopeCiHigh);
  });
  it('core S with two images\' walls drawn by hand: the line reads a table with their walls, and gives the same line', async () => {
    const form = formOf({ reading: 'core' });
    const app = trendOf(session, form);
    const { line, json } = await runLine(form);
    expect(line.table?.text).toMatch(/^image,value,walls\r\n/);
    expect(line.line).toMatch(/--reading core .*--table .*--auto-walls/);
    expect(json.points.map((p: { reading: number }) => p.reading)).toEqual(app.points.map((p) => p.reading));
    expect(json.fit.slope).toBe(app.fit.slope);
    expect(json.fit.interceptCiLow).toBe(app.fit.interceptCiLow);
    // Rendered core S = 0.85 - 0.008 x (construction): the slope's interval holds -0.008 per deg C.
    expect(app.fit.slopeCiLow).toBeLessThanOrEqual(-0.008);
    expect(app.fit.slopeCiHigh).toBeGreaterThanOrEqual(-0.008);
  });
  it('names the readings made with other settings than the line\'s', () => {
    const changed = { ...session, settings: { ...session.settings, sigmaPx: session.settings.sigmaPx + 1 } };
    expect(trendLine(changed, formOf({})).differs).toMatch(/4 of the readings .* were made with other settings/);
  });
});

describe('the form', () => {
  it('says in one plain line what is wrong: no values, a value that is not a number', () => {
    expect(() => trendOf(session, formOf({ values: {} }))).toThrow(/^No image has a value yet: type the variable's value beside each image\.$/);
    expect(() => trendOf(session, formOf({ values: { i0: '12 C' } }))).toThrow(/The value of .*bath 10C\.png is "12 C", not a number/);
  });
  it('an image without the reading is a point left out, with what to do', () => {
    const s = { ...session, work: { ...session.work, i3: { ...EMPTY_WORK } } };
    const r = trendOf(s, formOf({ reading: 'core' }));
    expect(r.points[3].used).toBe(false);
    expect(r.points[3].why).toMatch(/run "Profile across the channel"/);
  });
});

describe('the line\'s 95 % band', () => {
  it('its standard error is u(intercept) at x = 0 and sqrt(u^2(a) + x^2 u^2(b) - 2 x xbar u^2(b)) elsewhere (closed form, cov(a, b) = -xbar u^2(b))', () => {
    const r = trendOf(session, formOf({}));
    const f = r.fit;
    expect(lineSeAt(f, 0)).toBeCloseTo(f.interceptSe, 12);
    const x = 33;
    expect(lineSeAt(f, x)).toBeCloseTo(Math.sqrt(f.interceptSe ** 2 + x * x * f.slopeSe ** 2 - 2 * x * f.xMean * f.slopeSe ** 2), 12);
  });
});

describe('kept with the session', () => {
  it('both screens\' forms come back from storage; an unreadable one is left out with a note', () => {
    const series = { form: { ...EMPTY_SERIES_FORM, chosen: ['i0', 'i1'], intervalS: '5', model: 'exponential' as const }, run: null };
    const trend = formOf({ reading: 'diameter' });
    const back = restoreSession(JSON.parse(JSON.stringify({ ...session, series, trend })));
    if (!back.ok) throw new Error(back.reason);
    expect(back.value.series).toEqual(series);
    expect(back.value.trend).toEqual(trend);
    expect(back.lossy).toBe(false);
    const bad = restoreSession(JSON.parse(JSON.stringify({ ...session, series: { form: { ...series.form, model: 'cubic' } }, trend: { ...trend, reading: 'tenacity' } })));
    if (!bad.ok) throw new Error(bad.reason);
    expect(bad.value.series).toBeUndefined();
    expect(bad.value.trend).toBeUndefined();
    expect(bad.notes).toEqual(expect.arrayContaining(['the Over time screen\'s form was unreadable', 'the Against a variable screen\'s form was unreadable']));
  });
  it('a session copied under new image ids takes both screens\' state with it, under the new ids', () => {
    const ids = new Map([['i0', 'n0'], ['i1', 'n1']]);
    const run = { request: { keys: ['i0', 'i1'], names: ['a', 'b'], tSeconds: [0, 1], times: { intervalS: 1 }, options: {} }, result: {} as never };
    const out = screensWithIds({ trend: formOf({ values: { i0: '1', i1: '2', gone: '3' } }), series: { form: { ...EMPTY_SERIES_FORM, chosen: ['i1', 'gone'], timesS: { i0: '5' } }, run } }, ids);
    expect(out.trend?.values).toEqual({ n0: '1', n1: '2' });
    expect(out.series?.form.chosen).toEqual(['n1']);
    expect(out.series?.form.timesS).toEqual({ n0: '5' });
    expect(out.series?.run?.request.keys).toEqual(['n0', 'n1']);
  });
  it('a kept Over time run comes back with its result', () => {
    const result = { schemaVersion: 2, analysis: 'series', source: 'a', width: 1, height: 1, pixelSizeUmPerPx: null, axisDeg: 0, axisFrom: 'given', points: [], fit: null, options: {}, warnings: [] };
    const run = { request: { keys: ['i0'], names: ['a'], tSeconds: [0], times: { intervalS: 1 }, options: {} }, result };
    const back = restoreSession(JSON.parse(JSON.stringify({ ...session, series: { form: EMPTY_SERIES_FORM, run } })));
    if (!back.ok) throw new Error(back.reason);
    expect(back.value.series?.run?.result.analysis).toBe('series');
    expect(back.value.series?.run?.request.keys).toEqual(['i0']);
  });
});
