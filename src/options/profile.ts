/** `retarda profile`: S across a channel from the texture field or from one compensator image, with its words. */
import type { MatchSpace } from '../optics/index.ts';
import type { OrientationFieldOptions } from '../orientation/index.ts';
import type { KnownRetardanceOptions, PlateReadingOptions, ProfileRequest } from '../analyses/index.ts';
import { CHANNEL_OPTIONS, channelArgs } from './channel.ts';
import { KNOWN_RETARDANCE_OPTIONS, MATCH_OPTION, PLATE_READING_OPTIONS, knownRetardanceArgs, plateReadingArgs } from './optics.ts';
import { TEXTURE_OPTIONS, textureArgs } from './texture.ts';
import { valueArg, type OptionSpec } from './spec.ts';

/** Options of `retarda profile`. */
export const PROFILE_OPTIONS: OptionSpec[] = [
  ...CHANNEL_OPTIONS,
  { name: 'source', kind: 'string', help: 'orientation from: texture (structure tensor) or plate (one compensator colour image)', defaultText: 'texture' },
  ...TEXTURE_OPTIONS,
  ...PLATE_READING_OPTIONS.filter((o) => o.name !== 'field-out'),
  ...KNOWN_RETARDANCE_OPTIONS,
  MATCH_OPTION,
];

/** One compensator image read for a profile (`--source plate`), as the analysis takes it. */
export type PlateSourceOptions = PlateReadingOptions & KnownRetardanceOptions & { match?: MatchSpace };

/** What `retarda profile` reads the field from: the texture with its options, or one compensator image. */
export type ProfileFieldSource = { kind: 'texture'; texture: OrientationFieldOptions } | { kind: 'plate'; plate: PlateSourceOptions };

/** `retarda profile`'s options as words, without the image names. */
export function profileArgs(source: ProfileFieldSource, request: ProfileRequest): string[] {
  if (source.kind === 'texture') return [...channelArgs(request, true), ...textureArgs(source.texture)];
  const p = source.plate;
  return [...channelArgs(request, false), '--source', 'plate', ...plateReadingArgs(p), ...knownRetardanceArgs(p), ...valueArg('match', p.match, 'lab')];
}
