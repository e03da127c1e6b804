import { SCHEMA_VERSION, analyseMicrometer, analyseOpticsCalibration } from '../../analyses/index.ts';
import { umPerPxFromOptics, type OpticsInput } from '../../calibrate/index.ts';
import { InputError } from '../../common/errors.ts';
import { numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatPairs, formatTable } from '../format.ts';
import { loadImageFiles } from '../io.ts';

function opticsInputFrom(a: ParsedArgs): OpticsInput | null {
  const pixel = numberOpt(a, 'camera-pixel-um');
  const objective = numberOpt(a, 'objective-mag');
  if (pixel === undefined && objective === undefined) return null;
  if (pixel === undefined || objective === undefined) {
    throw new InputError('the optics need both --camera-pixel-um and --objective-mag');
  }
  return {
    cameraPixelUm: pixel, objectiveMagnification: objective, intermediateMagnification: numberOpt(a, 'adapter-mag'),
    binning: numberOpt(a, 'binning'),
  };
}

function samplingFrom(a: ParsedArgs) {
  return { na: numberOpt(a, 'na'), wavelengthNm: numberOpt(a, 'wavelength-nm') };
}

export const calibrateCommand: Command = {
  name: 'calibrate',
  summary: 'pixel size from a stage-micrometer image (period of the whole ruler) or from the optics',
  usage: 'IMAGE... --division-um D [--json]   |   --camera-pixel-um P --objective-mag M [--adapter-mag A]',
  options: [
    { name: 'division-um', kind: 'number', help: 'spacing of one micrometer division, um (1 mm / 100 = 10)' },
    { name: 'polarity', kind: 'string', help: 'ruler lines dark or bright', defaultText: 'auto' },
    { name: 'camera-pixel-um', kind: 'number', help: 'camera sensor pixel pitch, um (optics mode or cross-check)' },
    { name: 'objective-mag', kind: 'number', help: 'objective magnification' },
    { name: 'adapter-mag', kind: 'number', help: 'camera adapter / intermediate lens magnification', defaultText: '1' },
    { name: 'binning', kind: 'number', help: 'camera binning', defaultText: '1' },
    { name: 'na', kind: 'number', help: 'objective numerical aperture, for a sampling check' },
    { name: 'wavelength-nm', kind: 'number', help: 'wavelength for the sampling check, nm', defaultText: '550' },
  ],
  async run(a) {
    const opticsInput = opticsInputFrom(a);
    const optics = opticsInput ? umPerPxFromOptics(opticsInput) : null;
    const polarity = stringOpt(a, 'polarity');
    if (polarity !== undefined && polarity !== 'auto' && polarity !== 'dark' && polarity !== 'bright') {
      throw new InputError(`--polarity must be auto, dark or bright, got "${polarity}"`);
    }
    if (a.positionals.length === 0) {
      if (optics === null) {
        throw new InputError('no micrometer image and no optics given',
          'Give IMAGE --division-um D, or --camera-pixel-um P --objective-mag M');
      }
      const doc = analyseOpticsCalibration({ ...opticsInput!, ...samplingFrom(a) });
      const warnings = doc.warnings;
      return {
        json: doc, table: formatPairs([['method', 'optics'], ['um per px', optics]]),
        csvRows: [{ method: 'optics', umPerPx: optics }], warnings,
      };
    }
    const divisionUm = numberOpt(a, 'division-um');
    if (divisionUm === undefined) {
      throw new InputError('--division-um is needed with a micrometer image', 'Give the division spacing, e.g. --division-um 10');
    }
    const images = await loadImageFiles(a.positionals);
    const options = { divisionUm, polarity: polarity as 'auto' | 'dark' | 'bright' | undefined, opticsUmPerPx: optics, ...samplingFrom(a) };
    const docs = images.map((img) => {
      try {
        return analyseMicrometer(img, options);
      } catch (e) {
        if (e instanceof InputError && images.length > 1) throw new InputError(`${img.source.name}: ${e.message}`);
        throw e;
      }
    });
    const table = formatTable(
      ['image', 'um/px', 'u(um/px)', 'rel u', 'period px', 'divisions', 'lines deg'],
      docs.map((d) => [d.source, d.umPerPx, d.uncertaintyUmPerPx, d.uncertainty, d.periodPx, d.divisions, d.linesDeg]),
    );
    return {
      json: docs.length === 1 ? docs[0] : { schemaVersion: SCHEMA_VERSION, analysis: 'calibrate', results: docs },
      table,
      csvRows: docs.map((d) => ({
        image: d.source, umPerPx: d.umPerPx, uncertaintyUmPerPx: d.uncertaintyUmPerPx, relativeUncertainty: d.uncertainty,
        periodPx: d.periodPx, divisions: d.divisions, linesDeg: d.linesDeg, divisionUm: d.divisionUm,
      })),
      warnings: docs.flatMap((d) => d.warnings.map((w) => `${d.source}: ${w}`)),
    };
  },
};
