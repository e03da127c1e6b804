import type { Image } from '../../image/index.ts';
import { InputError } from '../../common/errors.ts';
import { analyseAngleSeries, checkReadingSize, DEFAULT_ANGLES_DEG } from '../../analyses/index.ts';
import { seriesIntensityImage } from '../../optics/index.ts';
import { giveBack, parseRect } from '../../common/index.ts';
import { ANGLE_SERIES_OPTIONS, type AngleSeriesFiles, type AngleSeriesSettings } from '../../options/index.ts';
import { numberList, numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { loadImageFiles } from '../io.ts';
import { writeFieldTiff } from '../fieldExport.ts';
import { opticsOutput, summaryFrom, trainOptionsFrom } from './plate.ts';

/** `retarda angle-series`'s options (ANGLE_SERIES_OPTIONS): the settings analyseAngleSeries takes, and the files it reads besides the images. */
export function angleSeriesFrom(a: ParsedArgs): { options: AngleSeriesSettings & { anglesDeg: number[] }; files: AngleSeriesFiles } {
  const anglesText = stringOpt(a, 'angles');
  const bg = stringOpt(a, 'plate-sample-free');
  return {
    options: {
      ...trainOptionsFrom(a), ...summaryFrom(a), anglesDeg: anglesText ? numberList(anglesText, '--angles') : DEFAULT_ANGLES_DEG,
      amplitudeFloor: numberOpt(a, 'amplitude-floor'), plateSampleFree: bg ? parseRect(bg, '--plate-sample-free') : undefined,
    },
    files: { plate: stringOpt(a, 'plate'), flat: stringOpt(a, 'flat'), dark: stringOpt(a, 'dark') },
  };
}

export const angleSeriesCommand: Command = {
  name: 'angle-series',
  formerName: 'quad',
  summary: 'angle series: orientation (mod 90 deg), relative amplitude (not nm) and fit residual from crossed polarisers at three or more angles',
  usage: 'IMAGE... [--angles 0,22.5,45,67.5] [--plate IMAGE] [--flat FILE] [--dark FILE] [--field-out FILE.tif] [--json]',
  options: ANGLE_SERIES_OPTIONS,
  async run(a) {
    const { options, files } = angleSeriesFrom(a);
    if (a.positionals.length !== options.anglesDeg.length) {
      throw new InputError(`${a.positionals.length} images for ${options.anglesDeg.length} angles`, 'Give one image per angle (and --angles for other sets)');
    }
    // One file at a time, each refused at once when too large to read, and held as the linear intensity the reading
    // takes of it (a third of an RGB image's memory, the same reading); the first as it is when walls are to be found on it.
    const one = async (name: string) => {
      const [img] = await loadImageFiles([name]);
      checkReadingSize('angle-series', img, !!files.plate);
      return img;
    };
    // The decoded colour planes go back to the pool once the intensity is made, so the next file's decode reuses them.
    const intensity = (img: Image, markClipped?: boolean) => {
      const out = seriesIntensityImage(img, markClipped);
      if (out !== img) giveBack(...img.planes);
      return out;
    };
    const images = [];
    for (const [k, name] of a.positionals.entries()) images.push(k === 0 && options.profile?.autoWalls ? await one(name) : intensity(await one(name)));
    const plate = files.plate ? await one(files.plate) : undefined;
    const flatField = files.flat ? intensity(await one(files.flat), false) : undefined;
    const dark = files.dark ? intensity(await one(files.dark), false) : undefined;
    const { result, field } = await analyseAngleSeries(images, { ...options, plate, flatField, dark });
    const fieldOut = stringOpt(a, 'field-out');
    const description = `retarda angle-series ${images.map((i) => i.source.name).join(' ')}`;
    images.length = 0; // the images are read; let them go before the field's pages are written
    if (fieldOut) await writeFieldTiff(fieldOut, field, description);
    return opticsOutput('angle-series', [result]);
  },
};
