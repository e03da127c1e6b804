import { InputError } from '../../common/errors.ts';
import { analysePlatePair } from '../../analyses/index.ts';
import { numberOpt, stringOpt } from '../args.ts';
import type { Command } from '../command.ts';
import { loadImageFiles } from '../io.ts';
import { writeFieldTiff } from '../fieldExport.ts';
import { CHANNEL_OPTIONS } from '../channelOptions.ts';
import { KNOWN_RETARDANCE_OPTIONS, PLATE_OPTIONS, opticsOutput, plateReadingFrom, summaryFrom } from './plate.ts';

export const platePairCommand: Command = {
  name: 'plate-pair',
  formerName: 'plate2',
  summary: 'plate pair: full orientation (0-180 deg) and retardance from two compensator images, the optics turned by 45 deg between them',
  usage: 'IMAGE_A IMAGE_B [--turn-deg 45] [--compensator-nm 550] [--sample-free "x,y,w,h"] [--field-out FILE.tif] [--json]',
  options: [
    // Two images give the retardance themselves: the one-image known-retardance band does not apply.
    ...PLATE_OPTIONS.filter((o) => !KNOWN_RETARDANCE_OPTIONS.includes(o)),
    { name: 'turn-deg', kind: 'number', help: 'turn of the polariser-compensator-analyser assembly for image B (sample turned the other way)', defaultText: '45' },
    { name: 'max-shift-px', kind: 'number', help: 'warn when the images are shifted against each other by more than this', defaultText: '1' },
    ...CHANNEL_OPTIONS,
  ],
  async run(a) {
    if (a.positionals.length !== 2) {
      throw new InputError(`a plate pair needs exactly two images, got ${a.positionals.length}`, 'Give the image with the assembly as set and the one turned by 45 deg');
    }
    const options = { ...plateReadingFrom(a), ...summaryFrom(a), turnDeg: numberOpt(a, 'turn-deg'), maxShiftPx: numberOpt(a, 'max-shift-px') };
    const [imgA, imgB] = await loadImageFiles(a.positionals);
    const { result, field } = await analysePlatePair(imgA, imgB, options);
    const fieldOut = stringOpt(a, 'field-out');
    if (fieldOut) await writeFieldTiff(fieldOut, field, `retarda plate-pair ${imgA.source.name} ${imgB.source.name}`);
    return opticsOutput('plate-pair', [result]);
  },
};
