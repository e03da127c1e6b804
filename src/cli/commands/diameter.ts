import { SCHEMA_VERSION, analyseDiameter, type DiameterAnalysisOptions, type DiameterDocument } from '../../analyses/index.ts';
import { checkLimit, withinLimit } from '../../common/index.ts';
import { DIAMETER_LIMITS } from '../../fibre/index.ts';
import { DIAMETER_OPTIONS } from '../../options/index.ts';
import { InputError } from '../../common/errors.ts';
import { numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatTable } from '../format.ts';
import { loadImageFiles } from '../io.ts';
import { ANALYSIS_MAX_PIXELS, checkAnalysisPixels } from '../../image/index.ts';

type Polarity = 'auto' | 'dark' | 'bright';

function polarityFrom(a: ParsedArgs): Polarity | undefined {
  const p = stringOpt(a, 'polarity');
  if (p !== undefined && p !== 'auto' && p !== 'dark' && p !== 'bright') {
    throw new InputError(`--polarity must be auto, dark or bright, got "${p}"`);
  }
  return p;
}

/**
 * `retarda diameter`'s options (DIAMETER_OPTIONS) as analyseDiameter takes them; the pixel size and its uncertainty
 * are checked here, before any image is read.
 */
export function diameterOptionsFrom(a: ParsedArgs): DiameterAnalysisOptions {
  const umPerPx = numberOpt(a, 'um-per-px');
  const uncertainty = numberOpt(a, 'um-per-px-uncertainty');
  if (umPerPx !== undefined) checkLimit({ ...DIAMETER_LIMITS.pixelSizeUmPerPx, what: '--um-per-px' }, umPerPx);
  if (uncertainty !== undefined) {
    if (!withinLimit(DIAMETER_LIMITS.pixelSizeUncertainty, uncertainty)) {
      throw new InputError(`--um-per-px-uncertainty must be a relative uncertainty from 0 to ${DIAMETER_LIMITS.pixelSizeUncertainty.max}, got ${uncertainty}`,
        'Give it as a fraction, e.g. 0.002 for 0.2 %');
    }
  }
  return {
    pixelSizeUmPerPx: umPerPx, pixelSizeUncertainty: uncertainty, stepPx: numberOpt(a, 'step-px'), averagePx: numberOpt(a, 'average-px'),
    polarity: polarityFrom(a), shadingDegree: numberOpt(a, 'shading-degree'),
  };
}

export const diameterCommand: Command = {
  name: 'diameter',
  summary: 'fibre diameter at stations along each fibre in the field: mean, SD, CV, 95 % interval',
  usage: 'IMAGE... [--um-per-px U [--um-per-px-uncertainty R]] [--step-px 10] [--polarity auto|dark|bright] [--json]',
  options: DIAMETER_OPTIONS,
  async run(a) {
    if (a.positionals.length === 0) throw new InputError('no image given', 'Name one or more image files');
    const options = diameterOptionsFrom(a);
    const images = await loadImageFiles(a.positionals);
    for (const img of images) checkAnalysisPixels(img, ANALYSIS_MAX_PIXELS.diameter);
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
