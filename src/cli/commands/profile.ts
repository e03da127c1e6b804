import { NOT_DETERMINED, type ProfileResult } from '../../analyses/index.ts';
import { InputError } from '../../common/errors.ts';
import { stringOpt } from '../args.ts';
import type { Command } from '../command.ts';
import { loadImageFiles } from '../io.ts';
import { fieldOutPath, writeFieldTiff } from '../fieldExport.ts';
import { CHANNEL_OPTIONS, channelProfileOutput, profileCsvRow, profileRequestFrom, profileTable } from '../channelOptions.ts';
import { TEXTURE_OPTIONS, textureOptionsFrom } from './orient.ts';
import { MATCH_OPTION, PLATE_OPTIONS, knownRetardanceFrom, matchFrom, plateReadingFrom } from './plate.ts';
import { analyseOrientation as textureField, analysePlateProfile, readPlateField } from '../../analyses/index.ts';
import type { OrientationField } from '../../orientation/index.ts';
import type { Image } from '../../image/types.ts';
import type { ParsedArgs } from '../args.ts';

/**
 * The profile from the field `--source` names: the texture (structure tensor), or one compensator image
 * read as `plate` reads it (so the same checks decide whether its order numbers are determined).
 */
async function profileFor(img: Image, a: ParsedArgs): Promise<{ field: OrientationField; result: ProfileResult | null }> {
  const source = stringOpt(a, 'source') ?? 'texture';
  if (source === 'texture') {
    const field = (await textureField(img, textureOptionsFrom(a))).field;
    return { field, result: await channelProfileOutput(img, field, a) };
  }
  if (source === 'plate') {
    const request = profileRequestFrom(a, false);
    const reading = { ...plateReadingFrom(a), ...knownRetardanceFrom(a), match: matchFrom(a), axisDeg: request?.axisDeg };
    const { field } = readPlateField(img, reading);
    return { field, result: request && await analysePlateProfile(img, field, reading, request) };
  }
  throw new InputError(`--source must be texture or plate, got "${source}"`, 'Use plate-pair or angle-series with --walls for the other readers');
}

export const profileCommand: Command = {
  name: 'profile',
  summary: 'order parameter S across a channel or fibre (bins, stations, core and skin) from the texture field',
  usage: 'IMAGE... (--walls "x1,y1,x2,y2;x3,y3,x4,y4" | --auto-walls) [--bins 20] [--stations 1] [--axis-deg A] [--json]',
  options: [
    ...CHANNEL_OPTIONS,
    { name: 'source', kind: 'string', help: 'orientation from: texture (structure tensor) or plate (compensator colour image)', defaultText: 'texture' },
    ...TEXTURE_OPTIONS,
    ...PLATE_OPTIONS.filter((o) => o.name !== 'field-out'),
    MATCH_OPTION,
  ],
  async run(a) {
    if (a.positionals.length === 0) throw new InputError('no image given', 'Name one or more image files');
    if (!stringOpt(a, 'walls') && !a.options.has('auto-walls')) {
      throw new InputError('a channel profile needs walls', 'Give --walls "x1,y1,x2,y2;x3,y3,x4,y4" or --auto-walls');
    }
    const images = await loadImageFiles(a.positionals);
    const fieldOut = stringOpt(a, 'field-out');
    const results: ProfileResult[] = [];
    for (const img of images) {
      const { field, result: r } = await profileFor(img, a);
      if (fieldOut) await writeFieldTiff(fieldOutPath(fieldOut, img.source.name, images.length), field, `retarda profile ${img.source.name}`);
      if (r) results.push(r);
    }
    return {
      json: results.length === 1 ? results[0] : { schemaVersion: results[0].schemaVersion, analysis: 'profile', results },
      table: results.map(profileTable).join('\n\n'),
      csvRows: results.map(profileCsvRow),
      warnings: results.flatMap((r) => [
        ...Object.entries(r.notDetermined ?? {}).map(([k, why]) => `${r.source}: ${k === 'order' ? 'order numbers' : k} ${NOT_DETERMINED}: ${why}`),
        ...r.warnings.map((w) => `${r.source}: ${w}`),
      ]),
    };
  },
};
