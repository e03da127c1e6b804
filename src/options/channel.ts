/**
 * The channel options every command that gives an S profile across a channel takes (profile, plate, plate-pair,
 * angle-series), with their words.
 */
import { AXIS_DEG_LIMIT } from '../common/index.ts';
import { PROFILE_LIMITS, wallsText } from '../channel/index.ts';
import { DEFAULT_WEIGHTING, OPTICAL_WEIGHTINGS, TEXTURE_WEIGHTINGS } from '../order/index.ts';
import type { ProfileRequest } from '../analyses/index.ts';
import { BLOCK_OPTION, TEXTURE_DEFAULT_WEIGHTING } from './texture.ts';
import { limitArg, valueArg, type OptionSpec } from './spec.ts';

/** The optical readings' default weighting: none (their confidence would bias S; defaultWeighting in src/order). */
export const OPTICAL_DEFAULT_WEIGHTING = DEFAULT_WEIGHTING.optical;

/** Channel options shared by every command that can give an S profile across a channel. */
export const CHANNEL_OPTIONS: OptionSpec[] = [
  { name: 'walls', kind: 'string', help: 'two wall segments in pixels: "x1,y1,x2,y2;x3,y3,x4,y4" (s = -1 at the first)' },
  { name: 'auto-walls', kind: 'flag', help: 'find the walls as the two strongest long straight edges' },
  { name: 'bins', kind: 'number', help: 'bins across the width', limit: PROFILE_LIMITS.bins },
  { name: 'stations', kind: 'number', help: 'stations along the channel', limit: PROFILE_LIMITS.stations },
  { name: 'axis-deg', kind: 'number', help: 'reference axis for S, degrees CCW from +x', limit: AXIS_DEG_LIMIT, defaultText: 'the channel axis' },
  { name: 'core-max', kind: 'number', help: 'core band: position |s| below this', limit: PROFILE_LIMITS.coreMax },
  { name: 'skin-min', kind: 'number', help: 'skin band: position |s| above this', limit: PROFILE_LIMITS.skinMin },
  {
    name: 'weighting', kind: 'string', defaultText: `${TEXTURE_DEFAULT_WEIGHTING} for texture, ${OPTICAL_DEFAULT_WEIGHTING} for optical readings`,
    help: `pixel weights: texture fields ${TEXTURE_WEIGHTINGS.join(', ')}; optical readings ${OPTICAL_WEIGHTINGS.join(', ')}`,
  },
  BLOCK_OPTION,
];

/**
 * A profile request as words: the walls (or --auto-walls), bins, stations and bands, and, unless `order` is false
 * (an optical reading writes its reference axis, weighting and block side once for the whole field and the profile
 * alike), the axis, weighting and block side. `texture` says which default weighting is left out.
 */
export function channelArgs(r: ProfileRequest, texture: boolean, order = true): string[] {
  return [
    ...(r.channel ? ['--walls', wallsText(r.channel.walls)] : r.autoWalls ? ['--auto-walls'] : []),
    ...limitArg('bins', PROFILE_LIMITS.bins, r.bins), ...limitArg('stations', PROFILE_LIMITS.stations, r.stations),
    ...limitArg('core-max', PROFILE_LIMITS.coreMax, r.coreMax), ...limitArg('skin-min', PROFILE_LIMITS.skinMin, r.skinMin),
    ...(order ? [
      ...valueArg('axis-deg', r.axisDeg), ...valueArg('weighting', r.weighting, texture ? TEXTURE_DEFAULT_WEIGHTING : OPTICAL_DEFAULT_WEIGHTING),
      ...valueArg('block-px', r.blockPx),
    ] : []),
  ];
}
