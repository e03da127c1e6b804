/**
 * The Over time screen's plain pieces (app/series/seriesForm.ts): the fitted curve against its closed form, the
 * form's bad input as one plain line, and the `retarda series` line it shows parsed back by the command line's own
 * reader into the same frames, times and options.
 */
import { describe, expect, it } from 'vitest';
import { parseArgs, COMMON_OPTIONS } from '../../src/cli/args.ts';
import { COMMANDS } from '../../src/cli/commands/index.ts';
import { seriesFrom } from '../../src/cli/commands/series.ts';
import { EMPTY_SERIES_FORM, relaxationAt, seriesCommandLine, seriesRequestOf, type SeriesForm } from '../../app/series/seriesForm.ts';
import { DEFAULT_SETTINGS } from '../../app/storage/records.ts';

const images = Array.from({ length: 6 }, (_, k) => ({ id: `id${k}`, name: `frame-${k}.png` }));
const form = (p: Partial<SeriesForm>): SeriesForm => ({ ...EMPTY_SERIES_FORM, ...p });

describe('relaxationAt', () => {
  it('is S_inf + (S_0 - S_inf) exp(-(t/tau)^beta) (docs/methods.md §17.2)', () => {
    const fit = { tauSeconds: 20, beta: 1, orderZero: 0.8, orderInfinity: 0.05 };
    // t = tau: one e-fold of the decaying part (closed form, e^-1).
    expect(relaxationAt(fit, 20)).toBeCloseTo(0.05 + 0.75 / Math.E, 12);
    expect(relaxationAt(fit, 0)).toBeCloseTo(0.8, 12);
    // stretched, beta 1/2 at t = 4 tau: exp(-(4)^(1/2)) = e^-2 (closed form).
    expect(relaxationAt({ ...fit, beta: 0.5 }, 80)).toBeCloseTo(0.05 + 0.75 * Math.exp(-2), 12);
  });
});

describe('seriesRequestOf', () => {
  it('refuses what cannot run, in one plain line', () => {
    const msg = (f: SeriesForm, imgs = images) => { try { seriesRequestOf(f, imgs, DEFAULT_SETTINGS); return ''; } catch (e) { return (e as Error).message; } };
    expect(msg(form({ intervalS: '2' }), images.slice(0, 3))).toBe('A relaxation fit needs at least 4 frames and 3 are ticked: add images to the session or tick more.');
    expect(msg(form({ intervalS: '2', model: 'stretched' }), images.slice(0, 4))).toMatch(/^A stretched relaxation fit needs at least 5 frames and 4 are ticked/);
    expect(msg(form({}))).toBe('Time between frames is missing: give it in seconds, or choose "each frame\'s time".');
    expect(msg(form({ intervalS: 'two' }))).toBe('Time between frames: "two" is not a number');
    expect(msg(form({ intervalS: '0' }))).toMatch(/^Time between frames: /);
    expect(msg(form({ timing: 'each', timesS: { id0: '0', id1: '1' } }))).toBe('Time of frame 3 (frame-2.png) is missing: give every frame its time in seconds.');
    expect(msg(form({ intervalS: '2', axisDeg: '400' }))).toMatch(/^Flow axis: /);
    for (const m of [msg(form({})), msg(form({ intervalS: '0' })), msg(form({ intervalS: '2', axisDeg: '400' }))]) expect(m).not.toContain('\n');
  });

  it('uses the ticked images in list order, with evenly spaced times or each its own', () => {
    const r = seriesRequestOf(form({ chosen: ['id4', 'id0', 'id2', 'id3'], intervalS: '2.5', startS: '1' }), images, DEFAULT_SETTINGS);
    expect(r.keys).toEqual(['id0', 'id2', 'id3', 'id4']);
    expect(r.tSeconds).toEqual([1, 3.5, 6, 8.5]);
    const e = seriesRequestOf(form({ timing: 'each', timesS: Object.fromEntries(images.map((i, k) => [i.id, String(k * k)])) }), images, DEFAULT_SETTINGS);
    expect(e.tSeconds).toEqual([0, 1, 4, 9, 16, 25]);
  });
});

describe('the retarda series line shown', () => {
  const parsed = (line: string) => {
    const [program, command, ...rest] = line.split(' ');
    expect([program, command]).toEqual(['retarda', 'series']);
    const a = parseArgs(rest, [...COMMANDS.find((c) => c.name === 'series')!.options, ...COMMON_OPTIONS]);
    expect(a.notices).toEqual([]);
    return a;
  };
  it('parses back to the same frames, times and options', () => {
    const cases: SeriesForm[] = [
      form({ intervalS: '6' }),
      form({ intervalS: '0.5', startS: '-2', axisDeg: '23', model: 'stretched' }),
      form({ timing: 'each', timesS: Object.fromEntries(images.map((i, k) => [i.id, String(1.5 * k + 0.25)])), model: 'exponential' }),
    ];
    for (const f of cases) {
      const r = seriesRequestOf(f, images, { ...DEFAULT_SETTINGS, sigmaPx: 3 });
      const a = parsed(seriesCommandLine(r));
      expect(a.positionals).toEqual(r.names);
      const back = seriesFrom(a);
      // times: the CLI's frame times from --interval-s/--start-s or --times
      const times = back.times.timesS ?? r.names.map((_, k) => (back.times.startS ?? 0) + k * back.times.intervalS!);
      expect(times).toEqual(r.tSeconds);
      expect(back.options.sigmaPx).toBe(3);
      expect(back.options.axisDeg).toBe(r.options.axisDeg);
      expect(back.options.model ?? 'auto').toBe(r.options.model);
      expect(back.options.weighting ?? DEFAULT_SETTINGS.weighting).toBe(r.options.weighting);
    }
  });
});
