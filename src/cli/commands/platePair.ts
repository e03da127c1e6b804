import { InputError } from '../../common/errors.ts';
import { analysePlatePair, type PlatePairAnalysisOptions } from '../../analyses/index.ts';
import { PLATE_PAIR_OPTIONS } from '../../options/index.ts';
import { numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { loadImageFiles } from '../io.ts';
import { writeFieldTiff } from '../fieldExport.ts';
import { opticsOutput, plateReadingFrom, summaryFrom } from './plate.ts';

/** `retarda plate-pair`'s options (PLATE_PAIR_OPTIONS) as analysePlatePair takes them. */
export function platePairOptionsFrom(a: ParsedArgs): PlatePairAnalysisOptions {
  return { ...plateReadingFrom(a), ...summaryFrom(a), turnDeg: numberOpt(a, 'turn-deg'), maxShiftPx: numberOpt(a, 'max-shift-px') };
}

export const platePairCommand: Command = {
  name: 'plate-pair',
  formerName: 'plate2',
  summary: 'plate pair: full orientation (0-180 deg) and retardance from two compensator images, the optics turned by 45 deg between them',
  usage: 'IMAGE_A IMAGE_B [--turn-deg 45] [--compensator-nm 550] [--sample-free "x,y,w,h"] [--field-out FILE.tif] [--json]',
  // Two images give the retardance themselves: the one-image known-retardance band does not apply.
  options: PLATE_PAIR_OPTIONS,
  async run(a) {
    if (a.positionals.length !== 2) {
      throw new InputError(`a plate pair needs exactly two images, got ${a.positionals.length}`, 'Give the image with the assembly as set and the one turned by 45 deg');
    }
    const options = platePairOptionsFrom(a);
    const [imgA, imgB] = await loadImageFiles(a.positionals);
    const { result, field } = await analysePlatePair(imgA, imgB, options);
    const fieldOut = stringOpt(a, 'field-out');
    if (fieldOut) await writeFieldTiff(fieldOut, field, `retarda plate-pair ${imgA.source.name} ${imgB.source.name}`);
    return opticsOutput('plate-pair', [result]);
  },
};
