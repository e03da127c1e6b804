import { NOT_DETERMINED, type ProfileRequest, type ProfileResult } from '../../analyses/index.ts';
import { InputError } from '../../common/errors.ts';
import { stringOpt } from '../args.ts';
import type { Command } from '../command.ts';
import { loadImageFiles } from '../io.ts';
import { fieldOutPath, writeFieldTiff } from '../fieldExport.ts';
import { profileCsvRow, profileRequestFrom, profileTable } from '../channelOptions.ts';
import { textureOptionsFrom } from './orient.ts';
import { knownRetardanceFrom, matchFrom, plateReadingFrom } from './plate.ts';
import { analyseOrientation as textureField, analysePlateProfile, analyseProfile, readPlateField } from '../../analyses/index.ts';
import { PROFILE_OPTIONS, type ProfileFieldSource } from '../../options/index.ts';
import type { OrientationField } from '../../orientation/index.ts';
import type { Image } from '../../image/types.ts';
import { ANALYSIS_MAX_PIXELS, checkAnalysisPixels } from '../../image/index.ts';
import type { ParsedArgs } from '../args.ts';

/** `retarda profile`'s options (PROFILE_OPTIONS): where the field comes from, and the profile request. */
export function profileFrom(a: ParsedArgs): { source: ProfileFieldSource; request: ProfileRequest } {
  const source = stringOpt(a, 'source') ?? 'texture';
  if (source !== 'texture' && source !== 'plate') {
    throw new InputError(`--source must be texture or plate, got "${source}"`, 'Use plate-pair or angle-series with --walls for the other readers');
  }
  const request = profileRequestFrom(a, source === 'texture');
  if (!request) throw new InputError('a channel profile needs walls', 'Give --walls "x1,y1,x2,y2;x3,y3,x4,y4" or --auto-walls');
  return {
    source: source === 'texture' ? { kind: 'texture', texture: textureOptionsFrom(a) }
      : { kind: 'plate', plate: { ...plateReadingFrom(a), ...knownRetardanceFrom(a), match: matchFrom(a) } },
    request,
  };
}

/**
 * The profile from the field the source names: the texture (structure tensor), or one compensator image read as
 * `plate` reads it (so the same checks decide whether its order numbers are determined).
 */
async function profileFor(img: Image, source: ProfileFieldSource, request: ProfileRequest): Promise<{ field: OrientationField; result: ProfileResult }> {
  if (source.kind === 'texture') {
    const field = (await textureField(img, source.texture)).field;
    return { field, result: await analyseProfile(img, field, request) };
  }
  const reading = { ...source.plate, axisDeg: request.axisDeg };
  const { field } = readPlateField(img, reading);
  return { field, result: await analysePlateProfile(img, field, reading, request) };
}

export const profileCommand: Command = {
  name: 'profile',
  summary: 'order parameter S across a channel or fibre (bins, stations, core and skin) from the texture field',
  usage: 'IMAGE... (--walls "x1,y1,x2,y2;x3,y3,x4,y4" | --auto-walls) [--bins 20] [--stations 1] [--axis-deg A] [--json]',
  options: PROFILE_OPTIONS,
  async run(a) {
    if (a.positionals.length === 0) throw new InputError('no image given', 'Name one or more image files');
    const { source, request } = profileFrom(a);
    const fieldOut = stringOpt(a, 'field-out');
    const results: ProfileResult[] = [];
    // One image at a time: each is read, profiled and let go, so a batch needs the memory of one image.
    for (const path of a.positionals) {
      const [img] = await loadImageFiles([path]);
      if (source.kind === 'texture') checkAnalysisPixels(img, fieldOut ? ANALYSIS_MAX_PIXELS.profileFieldOut : ANALYSIS_MAX_PIXELS.profile);
      const { field, result } = await profileFor(img, source, request);
      if (fieldOut) await writeFieldTiff(fieldOutPath(fieldOut, img.source.name, a.positionals.length), field, `retarda profile ${img.source.name}`);
      results.push(result);
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
