import { SCHEMA_VERSION, analyseDiameter, type DiameterDocument } from '../../analyses/index.ts';
import { InputError } from '../../common/errors.ts';
import { numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatTable } from '../format.ts';
import { loadImageFiles } from '../io.ts';

type Polarity = 'auto' | 'dark' | 'bright';

function polarityFrom(a: ParsedArgs): Polarity | undefined {
  const p = stringOpt(a, 'polarity');
  if (p !== undefined && p !== 'auto' && p !== 'dark' && p !== 'bright') {
    throw new InputError(`--polarity must be auto, dark or bright, got "${p}"`);
  }
  return p;
}

export const diameterCommand: Command = {
  name: 'diameter',
  summary: 'fibre diameter at stations along each fibre in the field: mean, SD, CV, 95 % interval',
  usage: 'IMAGE... [--um-per-px U [--um-per-px-uncertainty R]] [--step-px 10] [--polarity auto|dark|bright] [--json]',
  options: [
    { name: 'um-per-px', kind: 'number', help: 'pixel size in the object, um/px (overrides the file\'s resolution tags)' },
    { name: 'um-per-px-uncertainty', kind: 'number',
      help: 'relative standard uncertainty (k = 1) of the pixel size, e.g. 0.002, as `calibrate` gives it (`uncertainty`); enters the um intervals' },
    { name: 'step-px', kind: 'number', help: 'distance between stations along the fibre, px', defaultText: '10' },
    { name: 'average-px', kind: 'number', help: 'length along the fibre each profile is averaged over, px', defaultText: '5' },
    { name: 'polarity', kind: 'string', help: 'fibre darker (dark) or brighter (bright) than the background', defaultText: 'auto' },
    { name: 'shading-degree', formerName: 'background-degree', kind: 'number', help: 'shading: degree of the surface of the uneven lamp field removed first (0 = a flat level, up to 4)', defaultText: '2' },
  ],
  async run(a) {
    if (a.positionals.length === 0) throw new InputError('no image given', 'Name one or more image files');
    const umPerPxOption = numberOpt(a, 'um-per-px');
    if (umPerPxOption !== undefined && !(umPerPxOption > 0)) {
      throw new InputError(`--um-per-px must be above 0, got ${umPerPxOption}`);
    }
    const uncertaintyOption = numberOpt(a, 'um-per-px-uncertainty');
    if (uncertaintyOption !== undefined && !(uncertaintyOption >= 0 && uncertaintyOption <= 0.5)) {
      throw new InputError(`--um-per-px-uncertainty must be a relative uncertainty from 0 to 0.5, got ${uncertaintyOption}`,
        'Give it as a fraction, e.g. 0.002 for 0.2 %');
    }
    const images = await loadImageFiles(a.positionals);
    const options = {
      pixelSizeUmPerPx: umPerPxOption, pixelSizeUncertainty: uncertaintyOption, stepPx: numberOpt(a, 'step-px'), averagePx: numberOpt(a, 'average-px'),
      polarity: polarityFrom(a), shadingDegree: numberOpt(a, 'shading-degree'),
    };
    const docs = images.map((img) => {
      try {
        return analyseDiameter(img, options);
      } catch (e) {
        if (e instanceof InputError && images.length > 1) throw new InputError(`${img.source.name}: ${e.message}`);
        throw e;
      }
    });
    const calibrated = docs.every((d) => d.pixelSizeUmPerPx !== null);
    const unit = calibrated ? 'um' : 'px';
    type Row = DiameterDocument | DiameterDocument['fibres'][number];
    const pick = (f: Row) => calibrated
      ? [f.meanUm, f.sdUm, f.ciLowUm, f.ciHighUm, f.upperBoundUm] : [f.meanPx, f.sdPx, f.ciLowPx, f.ciHighPx, f.upperBoundPx];
    const rows = docs.flatMap((d) => [
      ...d.fibres.map((f) => [d.source, String(f.index), f.axisDeg, f.n, f.dropped, ...pick(f), f.cv]),
      ...(d.fibres.length > 1 ? [[d.source, 'all', null, d.n, d.dropped, ...pick(d), d.cv]] : []),
    ]);
    const table = formatTable(
      ['image', 'fibre', 'axis deg', 'n', 'dropped', `mean ${unit}`, `sd ${unit}`, `ci low ${unit}`, `ci high ${unit}`,
        `at most ${unit}`, 'cv'],
      rows,
    );
    return {
      json: docs.length === 1 ? docs[0] : { schemaVersion: SCHEMA_VERSION, analysis: 'diameter', results: docs },
      table,
      csvRows: docs.map((d) => ({
        image: d.source, fibres: d.fibres.length, n: d.n, dropped: d.dropped, meanPx: d.meanPx, sdPx: d.sdPx,
        meanUm: d.meanUm, sdUm: d.sdUm, cv: d.cv, ciLowUm: d.ciLowUm, ciHighUm: d.ciHighUm, uUm: d.uUm,
        uUmPixelSize: d.uUmPixelSize, upperBoundPx: d.upperBoundPx, upperBoundUm: d.upperBoundUm, minUm: d.minUm,
        maxUm: d.maxUm, pixelSizeUmPerPx: d.pixelSizeUmPerPx, pixelSizeUncertainty: d.pixelSizeUncertainty,
        stepPx: d.options.stepPx,
      })),
      warnings: docs.flatMap((d) => d.warnings.map((w) => `${d.source}: ${w}`)),
    };
  },
};
