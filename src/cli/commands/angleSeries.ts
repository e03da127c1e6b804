import { InputError } from '../../common/errors.ts';
import { analyseAngleSeries, DEFAULT_ANGLES_DEG } from '../../analyses/index.ts';
import { parseRect } from '../../common/index.ts';
import { numberList, numberOpt, stringOpt } from '../args.ts';
import type { Command } from '../command.ts';
import { loadImageFiles } from '../io.ts';
import { writeFieldTiff } from '../fieldExport.ts';
import { CHANNEL_OPTIONS } from '../channelOptions.ts';
import { TRAIN_OPTIONS, opticsOutput, summaryFrom, trainOptionsFrom } from './plate.ts';

export const angleSeriesCommand: Command = {
  name: 'angle-series',
  formerName: 'quad',
  summary: 'angle series: orientation (mod 90 deg), relative amplitude (not nm) and fit residual from crossed polarisers at three or more angles',
  usage: 'IMAGE... [--angles 0,22.5,45,67.5] [--plate IMAGE] [--flat FILE] [--dark FILE] [--field-out FILE.tif] [--json]',
  options: [
    { name: 'angles', kind: 'string', help: 'angles of the crossed polarisers for the images, degrees, one per image', defaultText: '0,22.5,45,67.5' },
    { name: 'plate', kind: 'string', help: 'compensator image that decides the 90-deg choice (its train: the options below)' },
    { name: 'plate-sample-free', formerName: 'plate-background', kind: 'string', help: 'sample-free area "x,y,w,h" of the compensator image' },
    { name: 'flat', kind: 'string', help: 'open-beam or blank-slide image for flat-field division' },
    { name: 'dark', kind: 'string', help: 'dark image subtracted first' },
    { name: 'amplitude-floor', kind: 'number', help: 'mask pixels below this fraction of the 99th-percentile amplitude', defaultText: '0.02' },
    { name: 'field-out', kind: 'string', help: 'write the field as a float TIFF (angleDeg, confidence, mask)' },
    ...TRAIN_OPTIONS,
    ...CHANNEL_OPTIONS,
  ],
  async run(a) {
    const anglesText = stringOpt(a, 'angles');
    const anglesDeg = anglesText ? numberList(anglesText, '--angles') : DEFAULT_ANGLES_DEG;
    if (a.positionals.length !== anglesDeg.length) {
      throw new InputError(`${a.positionals.length} images for ${anglesDeg.length} angles`, 'Give one image per angle (and --angles for other sets)');
    }
    const bg = stringOpt(a, 'plate-sample-free');
    const options = { ...trainOptionsFrom(a), ...summaryFrom(a), anglesDeg, amplitudeFloor: numberOpt(a, 'amplitude-floor'), plateSampleFree: bg ? parseRect(bg, '--plate-sample-free') : undefined };
    const images = await loadImageFiles(a.positionals);
    const one = async (name: string | undefined) => (name ? (await loadImageFiles([name]))[0] : undefined);
    const { result, field } = await analyseAngleSeries(images, {
      ...options, plate: await one(stringOpt(a, 'plate')), flatField: await one(stringOpt(a, 'flat')), dark: await one(stringOpt(a, 'dark')),
    });
    const fieldOut = stringOpt(a, 'field-out');
    if (fieldOut) await writeFieldTiff(fieldOut, field, `retarda angle-series ${images.map((i) => i.source.name).join(' ')}`);
    return opticsOutput('angle-series', [result]);
  },
};
