import { analyseSeries, NOT_DETERMINED, SERIES_MODELS, type SeriesFrame, type SeriesOptions } from '../../analyses/index.ts';
import { giveBack, InputError, parseRect } from '../../common/index.ts';
import { checkAnalysisPixels, ANALYSIS_MAX_PIXELS } from '../../image/index.ts';
import { SERIES_OPTIONS, type SeriesTimes } from '../../options/index.ts';
import { numberList, numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatTable } from '../format.ts';
import { loadImageFiles, loadImagePages } from '../io.ts';
import { weightingFrom } from '../channelOptions.ts';
import { textureOptionsFrom } from './orient.ts';

/** `retarda series`'s options (SERIES_OPTIONS) as analyseSeries takes them, and how the frames' times are given. */
export function seriesFrom(a: ParsedArgs): { options: SeriesOptions; times: SeriesTimes } {
  const model = stringOpt(a, 'model');
  if (model !== undefined && !(SERIES_MODELS as readonly string[]).includes(model)) {
    throw new InputError(`--model must be one of ${SERIES_MODELS.join(', ')}, got "${model}"`);
  }
  const regionText = stringOpt(a, 'region'), timesText = stringOpt(a, 'times');
  const intervalS = numberOpt(a, 'interval-s'), startS = numberOpt(a, 'start-s');
  if (timesText && (intervalS !== undefined || startS !== undefined)) throw new InputError('give the frames\' times either as --times or as --interval-s (and --start-s), not both');
  return {
    options: {
      ...textureOptionsFrom(a), axisDeg: numberOpt(a, 'axis-deg'), model: model as SeriesOptions['model'], weighting: weightingFrom(a, true),
      blockPx: numberOpt(a, 'block-px'), region: regionText ? parseRect(regionText, '--region') : undefined,
    },
    times: timesText ? { timesS: numberList(timesText, '--times') } : { intervalS, startS },
  };
}

/** The frames' times: given one by one, or evenly spaced. */
function frameTimes(t: SeriesTimes, count: number): number[] {
  if (t.timesS) {
    if (t.timesS.length !== count) throw new InputError(`${t.timesS.length} times for ${count} frames`, 'Give one time per frame in --times');
    return t.timesS;
  }
  if (t.intervalS === undefined) throw new InputError('the frames\' times are not given', 'Give --interval-s (the time between frames) or --times t1,t2,...');
  return Array.from({ length: count }, (_, k) => (t.startS ?? 0) + k * t.intervalS!);
}

export const seriesCommand: Command = {
  name: 'series',
  summary: 'order over time: S_axis of every frame (texture) and its relaxation fit, tau and beta with 95 % intervals',
  usage: 'FRAME... (--interval-s S [--start-s S] | --times t1,t2,...) [--axis-deg A] [--model auto|exponential|stretched] [--region x,y,w,h] [--json]',
  options: SERIES_OPTIONS,
  async run(a) {
    const { options, times } = seriesFrom(a);
    if (a.positionals.length === 0) throw new InputError('no frames given', 'Name the frames in time order, or one multi-page TIFF');
    // One multi-page TIFF is a stack of frames; otherwise one frame per file, read one at a time.
    const stack = a.positionals.length === 1 ? await loadImagePages(a.positionals[0]) : null;
    const count = stack ? stack.length : a.positionals.length;
    const t = frameTimes(times, count);
    async function* frames(): AsyncGenerator<SeriesFrame> {
      for (let k = 0; k < count; k++) {
        const image = stack ? stack[k] : (await loadImageFiles([a.positionals[k]], { grey: true }))[0];
        checkAnalysisPixels(image, ANALYSIS_MAX_PIXELS.series);
        yield { image, tSeconds: t[k] };
        if (!stack) giveBack(...image.planes);
      }
    }
    const r = await analyseSeries(frames(), options);
    const f = r.fit;
    const tauText = (v: number) => (Number.isFinite(v) && v > 0 ? v.toPrecision(3) : 'open');
    const nd: Record<string, string> = r.notDetermined ?? {};
    const shown = (key: string, v: number) => (nd[key] ? NOT_DETERMINED : v);
    const table = [
      `S_axis against ${r.axisDeg.toFixed(1)} deg (${r.axisFrom})`,
      formatTable(['frame', 't s', 'S_axis', 'ci low', 'ci high', 'n'], r.points.map((p) => [p.source, p.tSeconds, p.order, p.ciLow, p.ciHigh, p.n])),
      f ? formatTable(['model', 'tau s', 'tau ci low', 'tau ci high', 'beta', 'S_0', 'S_inf', 'mean tau s'], [[
        f.model, shown('tauSeconds', f.tauSeconds), tauText(f.tauCi[0]), tauText(f.tauCi[1]),
        f.betaCi ? (nd.beta ? NOT_DETERMINED : `${f.beta.toFixed(2)} (${f.betaCi[0].toFixed(2)}-${f.betaCi[1].toFixed(2)})`) : '1 (exponential)',
        shown('orderZero', f.orderZero), shown('orderInfinity', f.orderInfinity), shown('meanTauSeconds', f.meanTauSeconds),
      ]]) : `fit: ${NOT_DETERMINED}`,
    ].join('\n');
    return {
      json: r, table,
      csvRows: r.points.map((p) => ({ frame: p.source, tSeconds: p.tSeconds, order: p.order, ciLow: p.ciLow, ciHigh: p.ciHigh, n: p.n })),
      warnings: [...Object.entries(r.notDetermined ?? {}).map(([k, why]) => `${k} ${NOT_DETERMINED}: ${why}`), ...r.warnings],
    };
  },
};
