/** `retarda series`: order over time from a stack of frames, with its relaxation fit. */
import { AXIS_DEG_LIMIT, rectText } from '../common/index.ts';
import { FRAME_TIME_LIMIT, SERIES_MODELS, type SeriesOptions } from '../analyses/index.ts';
import { TEXTURE_DEFAULT_WEIGHTING, TEXTURE_OPTIONS, BLOCK_OPTION, textureArgs } from './texture.ts';
import { valueArg, type OptionSpec } from './spec.ts';
import { TEXTURE_WEIGHTINGS } from '../order/index.ts';

/** How the frames' times are given. */
export interface SeriesTimes { intervalS?: number; startS?: number; timesS?: number[] }

export const SERIES_OPTIONS: OptionSpec[] = [
  ...TEXTURE_OPTIONS.filter((o) => o.name !== 'field-out'),
  { name: 'interval-s', kind: 'number', help: 'time between frames, s (the first at --start-s)', limit: { what: 'time between frames', min: 1e-6, max: 1e9, unit: 's' } },
  { name: 'start-s', kind: 'number', help: 'time of the first frame, s, counted from when the flow stopped', limit: { ...FRAME_TIME_LIMIT, default: 0 } },
  { name: 'times', kind: 'string', help: 'each frame\'s time, s, comma-separated (instead of --interval-s)' },
  { name: 'axis-deg', kind: 'number', help: 'follow S_axis against this axis (the flow direction), degrees CCW from +x', limit: AXIS_DEG_LIMIT, defaultText: "the first frame's director" },
  { name: 'model', kind: 'string', help: `relaxation model: ${SERIES_MODELS.join(', ')} (auto: the better by AIC)`, defaultText: 'auto' },
  { name: 'region', kind: 'string', help: 'only pixels in this rectangle "x,y,w,h" count' },
  { name: 'weighting', kind: 'string', help: `pixel weights: ${TEXTURE_WEIGHTINGS.join(', ')}`, defaultText: TEXTURE_DEFAULT_WEIGHTING },
  BLOCK_OPTION,
];

/** `retarda series`'s options as words, without the frame names. */
export function seriesArgs(o: SeriesOptions, t: SeriesTimes): string[] {
  return [
    ...textureArgs(o), ...(t.timesS ? ['--times', t.timesS.join(',')] : [...valueArg('interval-s', t.intervalS), ...valueArg('start-s', t.startS, 0)]),
    ...valueArg('axis-deg', o.axisDeg), ...valueArg('model', o.model, 'auto'), ...(o.region ? ['--region', rectText(o.region)] : []),
    ...valueArg('weighting', o.weighting, TEXTURE_DEFAULT_WEIGHTING), ...valueArg('block-px', o.blockPx),
  ];
}
