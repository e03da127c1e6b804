import { InputError } from '../../common/errors.ts';
import { fourAngleAnalysis, parseRect } from '../../optics/index.ts';
import { numberList, numberOpt, stringOpt } from '../args.ts';
import type { Command } from '../command.ts';
import { loadImageFiles } from '../io.ts';
import { writeFieldTiff } from '../fieldExport.ts';
import { CHANNEL_OPTIONS } from '../channelOptions.ts';
import { TRAIN_OPTIONS, opticsOutput, opticsResult, trainFrom } from './plate.ts';

export const quadCommand: Command = {
  name: 'quad',
  summary: 'orientation (mod 90 deg), retardance amplitude and fit residual from crossed polars at several angles',
  usage: 'IMG0 IMG22 IMG45 IMG67 [--angles 0,22.5,45,67.5] [--plate IMAGE] [--flat FILE] [--dark FILE] [--field-out FILE.tif] [--json]',
  options: [
    { name: 'angles', kind: 'string', help: 'angles of the crossed pair for the images, degrees', defaultText: '0,22.5,45,67.5' },
    { name: 'plate', kind: 'string', help: 'compensator image that decides the 90-deg choice (its train: the options below)' },
    { name: 'plate-background', kind: 'string', help: 'sample-free rectangle "x,y,w,h" of the compensator image' },
    { name: 'flat', kind: 'string', help: 'open-beam or blank-slide image for flat-field division' },
    { name: 'dark', kind: 'string', help: 'dark image subtracted first' },
    { name: 'amplitude-floor', kind: 'number', help: 'mask pixels below this fraction of the 99th-percentile amplitude', defaultText: '0.02' },
    { name: 'field-out', kind: 'string', help: 'write the field as a float TIFF (angleDeg, confidence, mask)' },
    ...TRAIN_OPTIONS,
    ...CHANNEL_OPTIONS,
  ],
  async run(a) {
    const anglesText = stringOpt(a, 'angles');
    const anglesDeg = anglesText ? numberList(anglesText, '--angles') : [0, 22.5, 45, 67.5];
    if (a.positionals.length !== anglesDeg.length) {
      throw new InputError(`${a.positionals.length} images for ${anglesDeg.length} angles`, 'Give one image per angle (and --angles for other sets)');
    }
    const images = await loadImageFiles(a.positionals);
    const one = async (name: string | undefined) => (name ? (await loadImageFiles([name]))[0] : undefined);
    const plate = await one(stringOpt(a, 'plate'));
    const bg = stringOpt(a, 'plate-background');
    const r = fourAngleAnalysis(images, {
      anglesDeg, flatField: await one(stringOpt(a, 'flat')), dark: await one(stringOpt(a, 'dark')),
      amplitudeFloor: numberOpt(a, 'amplitude-floor'),
      plate, plateOptions: { train: trainFrom(a), background: bg ? parseRect(bg) : undefined },
    });
    const fieldOut = stringOpt(a, 'field-out');
    if (fieldOut) await writeFieldTiff(fieldOut, r.field, `retarda quad ${images.map((i) => i.source.name).join(' ')}`);
    const amp: number[] = [], res: number[] = [];
    for (let i = 0; i < r.amplitude.length; i++) if (r.field.mask[i]) { amp.push(r.amplitude[i]); res.push(r.residual[i]); }
    const med = (v: number[]) => (v.length ? v.sort((x, y) => x - y)[v.length >> 1] : null);
    const result = await opticsResult('quad', images[0], r.field, a, {
      anglesDeg, amplitudeMedian: med(amp), residualMedian: med(res), plateResolvedFraction: plate ? r.resolvedFraction : null,
    });
    return opticsOutput('quad', [result]);
  },
};
