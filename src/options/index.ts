/**
 * What each `retarda` command takes: its option specs (with the defaults and ranges of the analysis that checks
 * them) and a `...Args(options)` beside each that writes an analysis's options back as the words of its command line.
 * The command line parses with the specs; the app builds its forms and the command lines it shows from them, and
 * tests/cli/round-trip.test.ts proves that every command line the app shows parses back into the options it ran.
 */
export type { OptionSpec } from './spec.ts';
export { commandLine, shellWord, defaultText, rangeText, specOf, valueArg, limitArg, flagArg, numberListText } from './spec.ts';
export { TEXTURE_OPTIONS, ORIENT_OPTIONS, BLOCK_OPTION, TEXTURE_DEFAULT_WEIGHTING, textureArgs, orientArgs } from './texture.ts';
export { CHANNEL_OPTIONS, OPTICAL_DEFAULT_WEIGHTING, channelArgs } from './channel.ts';
export type { AngleSeriesSettings, AngleSeriesFiles } from './optics.ts';
export {
  TRAIN_OPTIONS, KNOWN_RETARDANCE_OPTIONS, PLATE_READING_OPTIONS, MATCH_OPTION, PLATE_OPTIONS, PLATE_PAIR_OPTIONS, ANGLE_SERIES_OPTIONS,
  trainArgs, plateReadingArgs, knownRetardanceArgs, summaryArgs, plateArgs, platePairArgs, angleSeriesArgs,
} from './optics.ts';
export type { PlateSourceOptions, ProfileFieldSource } from './profile.ts';
export { PROFILE_OPTIONS, profileArgs } from './profile.ts';
export { DIAMETER_OPTIONS, CALIBRATE_OPTIONS, FIBRE_OPTIONS, TENACITY_OPTION, diameterArgs, micrometerArgs, fibreArgs } from './measure.ts';
export type { ChartRequest } from './chart.ts';
export { CHART_OPTIONS, chartArgs } from './chart.ts';
export type { SeriesTimes } from './series.ts';
export { SERIES_OPTIONS, seriesArgs } from './series.ts';
export type { TrendSettings, TrendValues } from './trend.ts';
export { TREND_OPTIONS, trendArgs } from './trend.ts';
