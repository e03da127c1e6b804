/**
 * Order over time, as plain data: the form of the "Over time" screen turned into what the worker's `series` command
 * is asked (frames by key, their times, the options) and the `retarda series` line that gives the same numbers; the
 * fitted curve drawn through the points; the points as CSV rows. No React and no worker here.
 */
import { FRAME_TIME_LIMIT, type SeriesOptions, type SeriesResult } from '../../src/analyses/index.ts';
import { AXIS_DEG_LIMIT, checkLimit, isInputError } from '../../src/common/index.ts';
import { commandLine, seriesArgs, SERIES_OPTIONS, type SeriesTimes } from '../../src/options/index.ts';
import { toCsv } from '../../src/report/index.ts';
import { MIN_POINTS } from '../../src/series/index.ts';
import type { AnalysisSettings } from '../storage/records.ts';
import { formNumber } from '../analysis/requests.ts';

export type SeriesModelChoice = NonNullable<SeriesOptions['model']>;

export interface SeriesForm {
  /** The images used as frames, by id; null = every image of the session, in list order. */
  chosen: string[] | null;
  /** Times evenly spaced (interval and start) or each frame's own. */
  timing: 'interval' | 'each';
  intervalS: string;
  startS: string;
  /** Each frame's time as typed, by image id. */
  timesS: Record<string, string>;
  /** Flow axis, degrees CCW from +x; blank = the first frame's director. */
  axisDeg: string;
  model: SeriesModelChoice;
}

export const EMPTY_SERIES_FORM: SeriesForm = { chosen: null, timing: 'interval', intervalS: '', startS: '', timesS: {}, axisDeg: '', model: 'auto' };

/** What the worker is asked: the frames by key (in time order as listed), each frame's time, the options; and the names for the command line. */
export interface SeriesRequest { keys: string[]; names: string[]; tSeconds: number[]; times: SeriesTimes; options: SeriesOptions }

/** The frames the form uses: the ticked images in the session's list order (all of them until some are unticked). */
export function framesOf(form: SeriesForm, images: readonly { id: string; name: string }[]): { id: string; name: string }[] {
  return form.chosen === null ? [...images] : images.filter((i) => form.chosen!.includes(i.id));
}

/** A limit's check as one plain line (what is wrong, then what to do). */
function checked(limit: Parameters<typeof checkLimit>[0], v: number | undefined, field: string): number {
  try { return checkLimit(limit, v); } catch (e) {
    if (isInputError(e)) throw new Error(`${field}: ${e.message}${(e as { hint?: string }).hint ? `. ${(e as { hint?: string }).hint}` : ''}`);
    throw e;
  }
}

const INTERVAL_LIMIT = SERIES_OPTIONS.find((o) => o.name === 'interval-s')!.limit!;

/**
 * The request the form asks for, with the texture options of the session's settings (as `orient` uses them); a
 * form that cannot run throws an Error whose message is one plain line: fewer frames than a fit needs, a time
 * missing or not a number, an axis out of range.
 */
export function seriesRequestOf(form: SeriesForm, images: readonly { id: string; name: string }[], settings: Pick<AnalysisSettings, 'sigmaPx' | 'weighting'>): SeriesRequest {
  const frames = framesOf(form, images);
  const need = form.model === 'stretched' ? MIN_POINTS.stretched : MIN_POINTS.exponential;
  if (frames.length < need) {
    throw new Error(`A ${form.model === 'stretched' ? 'stretched ' : ''}relaxation fit needs at least ${need} frames and ${frames.length} ${frames.length === 1 ? 'is' : 'are'} ticked: add images to the session or tick more.`);
  }
  let tSeconds: number[], times: SeriesTimes;
  if (form.timing === 'interval') {
    const intervalS = formNumber(form.intervalS, 'Time between frames');
    if (intervalS === undefined) throw new Error('Time between frames is missing: give it in seconds, or choose "each frame\'s time".');
    checked(INTERVAL_LIMIT, intervalS, 'Time between frames');
    const startS = checked(FRAME_TIME_LIMIT, formNumber(form.startS, 'Time of the first frame') ?? 0, 'Time of the first frame');
    tSeconds = frames.map((_, k) => startS + k * intervalS);
    times = { intervalS, startS };
  } else {
    tSeconds = frames.map((f, k) => {
      const v = formNumber(form.timesS[f.id] ?? '', `Time of frame ${k + 1} (${f.name})`);
      if (v === undefined) throw new Error(`Time of frame ${k + 1} (${f.name}) is missing: give every frame its time in seconds.`);
      return checked(FRAME_TIME_LIMIT, v, `Time of frame ${k + 1} (${f.name})`);
    });
    if (new Set(tSeconds).size < 3) throw new Error('The frames hold fewer than three different times: give each frame its own time.');
    times = { timesS: tSeconds };
  }
  const axis = formNumber(form.axisDeg, 'Flow axis');
  const axisDeg = axis === undefined ? undefined : checked(AXIS_DEG_LIMIT, axis, 'Flow axis');
  return {
    keys: frames.map((f) => f.id), names: frames.map((f) => f.name), tSeconds, times,
    options: { sigmaPx: settings.sigmaPx, weighting: settings.weighting, ...(axisDeg !== undefined ? { axisDeg } : {}), model: form.model },
  };
}

/** `retarda series` with the frames' names and the request's options (the same numbers as the screen). */
export const seriesCommandLine = (r: SeriesRequest): string => commandLine('series', [...r.names, ...seriesArgs(r.options, r.times)]);

/** The fitted curve at time t (the analysis's own formula). */
export { relaxationAt } from '../../src/series/index.ts';

/** The series' points as the CSV rows `retarda series --csv` writes (same columns). */
export const seriesPointsCsv = (r: SeriesResult): string =>
  toCsv(r.points.map((p) => ({ frame: p.source, tSeconds: p.tSeconds, order: p.order, ciLow: p.ciLow, ciHigh: p.ciHigh, n: p.n })));
