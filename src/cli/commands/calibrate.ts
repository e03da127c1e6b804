import { SCHEMA_VERSION, analyseMicrometer, analyseOpticsCalibration, type MicrometerAnalysisOptions, type MicrometerDocument } from '../../analyses/index.ts';
import { CALIBRATE_OPTIONS } from '../../options/index.ts';
import { roundWithUncertainty, umPerPxFromOptics, type OpticsInput } from '../../calibrate/index.ts';
import { InputError } from '../../common/errors.ts';
import { numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatCell, formatPairs } from '../format.ts';
import { loadImageFiles } from '../io.ts';
import { ANALYSIS_MAX_PIXELS, checkAnalysisPixels } from '../../image/index.ts';

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

/** The micrometer result as the terminal shows it: the number with its method, uncertainty, interval and warnings beside it. */
export function micrometerBlock(d: MicrometerDocument): string {
  const v = roundWithUncertainty(d.umPerPx, d.uncertaintyUmPerPx);
  const [lo, hi] = d.intervalUmPerPx.map((x) => x.toFixed(v.digits));
  const k = d.coverageFactor.toFixed(2);
  const pairs: [string, string][] = [
    ['image', d.source],
    ['um per px', `${v.value} um/px`],
    ['u (k = 1)', `${v.u} um/px (${(100 * d.uncertainty).toPrecision(2)} %)`],
    [`interval (k = ${k})`, `${lo} .. ${hi} um/px (${(100 * d.coverageProbability).toFixed(2)} % coverage, ` +
      `${Number.isFinite(d.effectiveDof) ? d.effectiveDof.toFixed(0) : 'infinite'} degrees of freedom)`],
    ['method', d.methodDescription],
    ['period', `${formatCell(d.periodPx)} px over ${d.divisions} divisions, ${d.lines} ticks fitted; residual ` +
      `${formatCell(d.rmsResidualPx)} px rms (${(100 * d.residualFraction).toFixed(2)} % of a division)`],
    ['budget (k = 1)', `fit ${(100 * d.uncertaintyBudget.fitRelative).toPrecision(2)} %, tick direction ` +
      `${(100 * d.uncertaintyBudget.directionRelative).toPrecision(2)} %, graticule ` +
      (d.divisionToleranceUm > 0 ? `${(100 * d.uncertaintyBudget.graticuleRelative).toPrecision(2)} % (+-${d.divisionToleranceUm} um)`
        : 'not included (give --division-tolerance-um from the certificate)')],
    ['ticks', `${formatCell(d.linesDeg)} deg, ${d.polarity} on ${d.polarity === 'dark' ? 'bright' : 'dark'}`],
  ];
  return [formatPairs(pairs), ...d.warnings.map((w) => `warning: ${w}`)].join('\n');
}

function samplingFrom(a: ParsedArgs) {
  return { na: numberOpt(a, 'na'), wavelengthNm: numberOpt(a, 'wavelength-nm') };
}

/** --polarity of the ruler lines, checked. */
function polarityFrom(a: ParsedArgs): 'auto' | 'dark' | 'bright' | undefined {
  const polarity = stringOpt(a, 'polarity');
  if (polarity !== undefined && polarity !== 'auto' && polarity !== 'dark' && polarity !== 'bright') {
    throw new InputError(`--polarity must be auto, dark or bright, got "${polarity}"`);
  }
  return polarity;
}

/**
 * `retarda calibrate`'s options for a micrometer image (CALIBRATE_OPTIONS) as analyseMicrometer takes them, with the
 * optics' pixel size as its cross-check (null when the optics were not given).
 */
export function micrometerOptionsFrom(a: ParsedArgs, opticsUmPerPx: number | null = null): MicrometerAnalysisOptions {
  const divisionUm = numberOpt(a, 'division-um');
  if (divisionUm === undefined) {
    throw new InputError('--division-um is needed with a micrometer image', 'Give the division spacing, e.g. --division-um 10');
  }
  return {
    divisionUm, divisionToleranceUm: numberOpt(a, 'division-tolerance-um'), polarity: polarityFrom(a), opticsUmPerPx, ...samplingFrom(a),
  };
}

export const calibrateCommand: Command = {
  name: 'calibrate',
  summary: 'pixel size from a stage-micrometer image (ticks fitted along their own direction, GUM uncertainty) or from the optics',
  usage: 'IMAGE... --division-um D [--division-tolerance-um T] [--json]   |   --camera-pixel-um P --objective-mag M [--adapter-mag A]\n\n' +
    'The table gives um/px with its standard uncertainty (k = 1), the interval at k = 2 (Student t factor when few ticks),\n' +
    'the method and any warning beside the number; --json gives umPerPx and uncertainty (relative, k = 1).',
  options: CALIBRATE_OPTIONS,
  async run(a) {
    polarityFrom(a);
    const opticsInput = opticsInputFrom(a);
    const optics = opticsInput ? umPerPxFromOptics(opticsInput) : null;
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
    const options = micrometerOptionsFrom(a, optics);
    const images = await loadImageFiles(a.positionals);
    for (const img of images) checkAnalysisPixels(img, ANALYSIS_MAX_PIXELS.micrometer);
    const docs = images.map((img) => {
      try {
        return analyseMicrometer(img, options);
      } catch (e) {
        if (e instanceof InputError && images.length > 1) throw new InputError(`${img.source.name}: ${e.message}`);
        throw e;
      }
    });
    return {
      json: docs.length === 1 ? docs[0] : { schemaVersion: SCHEMA_VERSION, analysis: 'calibrate', results: docs },
      // Warnings stand beside the number in the table (and in the JSON), so they are not repeated on stderr.
      table: docs.map(micrometerBlock).join('\n\n'),
      csvRows: docs.map((d) => ({
        image: d.source, umPerPx: d.umPerPx, uncertaintyUmPerPx: d.uncertaintyUmPerPx, relativeUncertainty: d.uncertainty,
        coverageFactor: d.coverageFactor, intervalLowUmPerPx: d.intervalUmPerPx[0], intervalHighUmPerPx: d.intervalUmPerPx[1],
        periodPx: d.periodPx, divisions: d.divisions, lines: d.lines, rmsResidualPx: d.rmsResidualPx, linesDeg: d.linesDeg,
        divisionUm: d.divisionUm, divisionToleranceUm: d.divisionToleranceUm, warnings: d.warnings.join('; '),
      })),
      warnings: [],
    };
  },
};
