import { SCHEMA_VERSION } from '../../analyses/index.ts';
import { InputError } from '../../common/errors.ts';
import { measureFibreDiameters, type DiameterResult } from '../../fibre/index.ts';
import { toGrey } from '../../image/index.ts';
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

/** One image's JSON document: the pooled summary first, then each fibre. */
function documentFor(source: string, width: number, height: number, pixelSizeFrom: string | null, r: DiameterResult) {
  const station = (s: DiameterResult['stations'][number]) => ({
    alongPx: s.alongPx, diameterPx: s.diameterPx, diameterUm: s.diameterUm, fibre: s.fibre, xPx: s.xPx, yPx: s.yPx,
    edgeSigmaPx: s.edgeSigmaPx, edgeStdErrPx: s.edgeStdErrPx,
  });
  const summary = (f: DiameterResult | DiameterResult['fibres'][number]) => ({
    meanPx: f.meanPx, meanUm: f.meanUm, sdPx: f.sdPx, sdUm: f.sdUm, cv: f.cv, n: f.n,
    ciLowPx: f.ciLowPx, ciHighPx: f.ciHighPx, ciLowUm: f.ciLowUm, ciHighUm: f.ciHighUm,
    minPx: f.minPx, maxPx: f.maxPx, minUm: f.minUm, maxUm: f.maxUm,
    lag1Correlation: f.lag1Correlation, nEffective: f.nEffective, dropped: f.dropped, droppedByReason: f.droppedByReason,
  });
  return {
    schemaVersion: SCHEMA_VERSION, analysis: 'diameter', source, width, height,
    pixelSizeUmPerPx: r.pixelSizeUmPerPx, pixelSizeFrom, warnings: r.warnings,
    ...summary(r),
    stations: r.stations.map(station),
    fibres: r.fibres.map((f) => ({
      index: f.index, axisDeg: f.axisDeg, startXPx: f.startXPx, startYPx: f.startYPx, lengthPx: f.lengthPx, ...summary(f),
      stations: f.stations.map(station), droppedStations: f.droppedStations,
    })),
    polarity: r.polarity, contrast: r.contrast, noiseSd: r.noiseSd, backgroundDegree: r.backgroundDegree,
    ignoredObjects: r.ignoredObjects, options: r.options,
    interval: r.fibres.filter((f) => f.n > 0).length > 1
      ? '95 % t interval with the fibres as the sampling unit (t(0.975, k - 1) SD(fibre means) / sqrt k); per fibre: station interval'
      : '95 % t interval on the station mean, n reduced to nEffective = n (1 - r1)/(1 + r1) for lag-1 correlation r1',
  };
}

export const diameterCommand: Command = {
  name: 'diameter',
  summary: 'fibre diameter at stations along each fibre in the field: mean, SD, CV, 95 % interval',
  usage: 'IMAGE... [--um-per-px U] [--step-px 10] [--polarity auto|dark|bright] [--json]',
  options: [
    { name: 'um-per-px', kind: 'number', help: 'pixel size in the object, um/px (overrides the file\'s resolution tags)' },
    { name: 'step-px', kind: 'number', help: 'distance between stations along the fibre, px', defaultText: '10' },
    { name: 'average-px', kind: 'number', help: 'length along the fibre each profile is averaged over, px', defaultText: '5' },
    { name: 'polarity', kind: 'string', help: 'fibre darker (dark) or brighter (bright) than the background', defaultText: 'auto' },
    { name: 'background-degree', kind: 'number', help: 'degree of the illumination surface removed first (0-4)', defaultText: '2' },
  ],
  async run(a) {
    if (a.positionals.length === 0) throw new InputError('no image given', 'Name one or more image files');
    const umPerPxOption = numberOpt(a, 'um-per-px');
    if (umPerPxOption !== undefined && !(umPerPxOption > 0)) {
      throw new InputError(`--um-per-px must be above 0, got ${umPerPxOption}`);
    }
    const images = await loadImageFiles(a.positionals);
    const docs = images.map((img) => {
      const pixelSize = umPerPxOption ?? img.pixelSizeUmPerPx;
      const pixelSizeFrom = umPerPxOption !== undefined ? 'option' : img.pixelSizeUmPerPx !== undefined ? 'file' : null;
      let r: DiameterResult;
      try {
        r = measureFibreDiameters(toGrey(img), {
          pixelSizeUmPerPx: pixelSize, stepPx: numberOpt(a, 'step-px'), averageLengthPx: numberOpt(a, 'average-px'),
          polarity: polarityFrom(a), backgroundDegree: numberOpt(a, 'background-degree'),
        });
      } catch (e) {
        if (e instanceof InputError && images.length > 1) throw new InputError(`${img.source.name}: ${e.message}`);
        throw e;
      }
      if (pixelSizeFrom === null) {
        r.warnings = r.warnings.map((w) => (w.startsWith('no pixel size')
          ? 'no pixel size (no --um-per-px and none in the file): diameters are in px only, um fields are null' : w));
      }
      return documentFor(img.source.name, img.width, img.height, pixelSizeFrom, r);
    });
    const calibrated = docs.every((d) => d.pixelSizeUmPerPx !== null);
    const unit = calibrated ? 'um' : 'px';
    const pick = (f: { meanPx: number | null; meanUm: number | null; sdPx: number | null; sdUm: number | null;
      ciLowPx: number | null; ciLowUm: number | null; ciHighPx: number | null; ciHighUm: number | null }) => calibrated
      ? [f.meanUm, f.sdUm, f.ciLowUm, f.ciHighUm] : [f.meanPx, f.sdPx, f.ciLowPx, f.ciHighPx];
    const rows = docs.flatMap((d) => [
      ...d.fibres.map((f) => [d.source, String(f.index), f.axisDeg, f.n, f.dropped, ...pick(f), f.cv]),
      ...(d.fibres.length > 1 ? [[d.source, 'all', null, d.n, d.dropped, ...pick(d), d.cv]] : []),
    ]);
    const table = formatTable(
      ['image', 'fibre', 'axis deg', 'n', 'dropped', `mean ${unit}`, `sd ${unit}`, `ci low ${unit}`, `ci high ${unit}`, 'cv'],
      rows,
    );
    return {
      json: docs.length === 1 ? docs[0] : { schemaVersion: SCHEMA_VERSION, analysis: 'diameter', results: docs },
      table,
      csvRows: docs.map((d) => ({
        image: d.source, fibres: d.fibres.length, n: d.n, dropped: d.dropped, meanPx: d.meanPx, sdPx: d.sdPx,
        meanUm: d.meanUm, sdUm: d.sdUm, cv: d.cv, ciLowUm: d.ciLowUm, ciHighUm: d.ciHighUm, minUm: d.minUm,
        maxUm: d.maxUm, pixelSizeUmPerPx: d.pixelSizeUmPerPx, stepPx: d.options.stepPx,
      })),
      warnings: docs.flatMap((d) => d.warnings.map((w) => `${d.source}: ${w}`)),
    };
  },
};
