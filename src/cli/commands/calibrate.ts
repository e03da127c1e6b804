import { SCHEMA_VERSION } from '../../analyses/index.ts';
import { calibrateFromMicrometer, rayleighResolutionUm, umPerPxFromOptics } from '../../calibrate/index.ts';
import { InputError } from '../../common/errors.ts';
import { toGrey } from '../../image/index.ts';
import { numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatPairs, formatTable } from '../format.ts';
import { loadImageFiles } from '../io.ts';

const UNCERTAINTY_KIND = 'relative standard uncertainty (k = 1) of umPerPx from the least-squares line fit';

function opticsFrom(a: ParsedArgs): number | null {
  const pixel = numberOpt(a, 'camera-pixel-um');
  const objective = numberOpt(a, 'objective-mag');
  if (pixel === undefined && objective === undefined) return null;
  if (pixel === undefined || objective === undefined) {
    throw new InputError('the optics need both --camera-pixel-um and --objective-mag');
  }
  return umPerPxFromOptics({
    cameraPixelUm: pixel, objectiveMagnification: objective, intermediateMagnification: numberOpt(a, 'adapter-mag'),
    binning: numberOpt(a, 'binning'),
  });
}

/** Sampling advice: a pixel larger than half the Rayleigh resolution under-samples the optics. */
function samplingWarning(a: ParsedArgs, umPerPx: number): string[] {
  const na = numberOpt(a, 'na');
  if (na === undefined) return [];
  const r = rayleighResolutionUm(numberOpt(a, 'wavelength-nm') ?? 550, na);
  return umPerPx > r / 2
    ? [`pixel ${umPerPx.toPrecision(4)} um is larger than half the Rayleigh resolution (${(r / 2).toPrecision(4)} um): the image is under-sampled`]
    : [];
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
    const optics = opticsFrom(a);
    const polarity = stringOpt(a, 'polarity');
    if (polarity !== undefined && polarity !== 'auto' && polarity !== 'dark' && polarity !== 'bright') {
      throw new InputError(`--polarity must be auto, dark or bright, got "${polarity}"`);
    }
    if (a.positionals.length === 0) {
      if (optics === null) {
        throw new InputError('no micrometer image and no optics given',
          'Give IMAGE --division-um D, or --camera-pixel-um P --objective-mag M');
      }
      const warnings = samplingWarning(a, optics);
      const doc = { schemaVersion: SCHEMA_VERSION, analysis: 'calibrate', method: 'optics', umPerPx: optics,
        uncertainty: null, uncertaintyUmPerPx: null, periodPx: null, divisions: null, warnings };
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
    const docs = images.map((img) => {
      let c;
      try {
        c = calibrateFromMicrometer(toGrey(img), { divisionUm, polarity: polarity as 'auto' | 'dark' | 'bright' | undefined });
      } catch (e) {
        if (e instanceof InputError && images.length > 1) throw new InputError(`${img.source.name}: ${e.message}`);
        throw e;
      }
      const warnings = [...c.warnings, ...samplingWarning(a, c.umPerPx)];
      let opticsRatio: number | null = null;
      if (optics !== null) {
        opticsRatio = c.umPerPx / optics;
        if (Math.abs(opticsRatio - 1) > 0.02) {
          warnings.push(`the micrometer gives ${c.umPerPx.toPrecision(5)} um/px but the optics give ${optics.toPrecision(5)} ` +
            `(${((opticsRatio - 1) * 100).toFixed(1)} %): check the objective, adapter and binning`);
        }
      }
      return {
        schemaVersion: SCHEMA_VERSION, analysis: 'calibrate', method: 'micrometer', source: img.source.name,
        width: img.width, height: img.height, umPerPx: c.umPerPx, uncertainty: c.relativeUncertainty,
        uncertaintyKind: UNCERTAINTY_KIND, uncertaintyUmPerPx: c.uncertaintyUmPerPx, periodPx: c.periodPx,
        periodStdErrPx: c.periodStdErrPx, divisions: c.divisions, lines: c.lines, rejectedLines: c.rejectedLines,
        rmsResidualPx: c.rmsResidualPx, linesDeg: c.linesDeg, polarity: c.polarity, divisionUm: c.divisionUm,
        opticsUmPerPx: optics, opticsRatio, warnings,
      };
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
