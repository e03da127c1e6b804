/** `retarda trend`: a reading against a process variable, with its words. */
import type { DiameterAnalysisOptions, OrientOptions, ProfileRequest, TrendReading, TrendVariable } from '../analyses/index.ts';
import { TREND_READINGS } from '../analyses/index.ts';

import { CHANNEL_OPTIONS } from './channel.ts';
import { DIAMETER_OPTIONS, diameterArgs } from './measure.ts';
import { profileArgs } from './profile.ts';
import { TEXTURE_OPTIONS, orientArgs } from './texture.ts';
import { numberListText, valueArg, type OptionSpec } from './spec.ts';

/** Options of `retarda trend`: its own, then those of the analysis the reading comes from (orient, profile, diameter). */
export const TREND_OPTIONS: OptionSpec[] = [
  { name: 'reading', kind: 'string', help: `what to follow: ${TREND_READINGS.join(', ')} (whole-image S; core S, skin S and their ratio across a channel; fibre diameter)`, defaultText: 'whole' },
  { name: 'values', kind: 'string', help: 'the variable\'s value for each image, in the order named, comma-separated' },
  { name: 'table', kind: 'string', help: 'a CSV file with a row per image: image,value (and walls, quoted, for core, skin and core-skin); image paths relative to the file' },
  { name: 'variable', kind: 'string', help: 'the variable\'s name, e.g. "draw ratio" (tables and JSON)', defaultText: 'value' },
  { name: 'unit', kind: 'string', help: 'the variable\'s unit, e.g. "deg C"', defaultText: 'none' },
  ...TEXTURE_OPTIONS.filter((o) => o.name !== 'field-out'),
  // --axis-deg serves whole (S_axis against it, else S_2D) as well as the channel readings.
  ...CHANNEL_OPTIONS.map((o) => (o.name === 'axis-deg' ? { ...o, help: 'reference axis, degrees CCW from +x: whole gives S_axis against it (S_2D without it); core, skin, core-skin take it for S', defaultText: 'none for whole; the channel axis for core, skin, core-skin' } : o)),
  { name: 'region', kind: 'string', help: 'whole: only pixels in this rectangle "x,y,w,h" count' },
  ...DIAMETER_OPTIONS,
];

/** What a trend is asked, besides its images and values: the reading, the variable and the options of the reading's analysis. */
export interface TrendSettings {
  reading: TrendReading;
  variable: TrendVariable;
  /** whole: the texture field and whole-image order; core, skin, core-skin: the texture field only. */
  orient: OrientOptions;
  /** core, skin, core-skin: the channel profile (walls here apply to every image; a table's walls column overrides them). */
  profile?: ProfileRequest;
  diameter?: DiameterAnalysisOptions;
}

/** The images' values: given in order (`--values`) or in a table file (`--table`). */
export type TrendValues = { values: number[] } | { table: string };

/** `retarda trend`'s options as words, without the image names. */
export function trendArgs(s: TrendSettings, v: TrendValues): string[] {
  const source = s.reading === 'whole' ? orientArgs(s.orient)
    : s.reading === 'diameter' ? diameterArgs(s.diameter ?? {})
      : profileArgs({ kind: 'texture', texture: s.orient }, s.profile ?? {});
  return [
    ...valueArg('reading', s.reading, 'whole'), ...valueArg('variable', s.variable.name, 'value'), ...valueArg('unit', s.variable.unit, ''),
    ...('values' in v ? ['--values', numberListText(v.values)] : ['--table', v.table]), ...source,
  ];
}

