/**
 * Fibre diameter as an analysis: one image + options -> the JSON document `retarda diameter --json`
 * prints (pooled summary first, then every station and every fibre with its dropped stations).
 */
import { InputError } from '../common/index.ts';
import { measureFibreDiameters, type DiameterResult } from '../fibre/index.ts';
import { toGrey, type Image } from '../image/index.ts';
import { SCHEMA_VERSION } from './schema.ts';

export interface DiameterAnalysisOptions {
  /** Pixel size in the object, um/px; overrides the file's resolution tags. */
  pixelSizeUmPerPx?: number;
  /** Relative standard uncertainty (k = 1) of the pixel size, as `retarda calibrate` gives it (`uncertainty`). */
  pixelSizeUncertainty?: number;
  /** Distance between stations along the fibre, px (default 10). */
  stepPx?: number;
  /** Length along the fibre each profile is averaged over, px (default 5). */
  averagePx?: number;
  /** Fibre darker (dark) or brighter (bright) than the background; default auto. */
  polarity?: 'auto' | 'dark' | 'bright';
  /** Shading: degree of the polynomial surface of the uneven lamp field removed first, 0-4 (default 2). */
  shadingDegree?: number;
}

type Station = DiameterResult['stations'][number];
type Summary = DiameterResult | DiameterResult['fibres'][number];

const stationJson = (s: Station) => ({
  alongPx: s.alongPx, diameterPx: s.diameterPx, diameterUm: s.diameterUm, fibre: s.fibre, xPx: s.xPx, yPx: s.yPx,
  profileFit: s.profileFit, edgeSigmaPx: s.edgeSigmaPx, edgeStdErrPx: s.edgeStdErrPx,
});

const summaryJson = (f: Summary) => ({
  meanPx: f.meanPx, meanUm: f.meanUm, sdPx: f.sdPx, sdUm: f.sdUm, cv: f.cv, n: f.n,
  ciLowPx: f.ciLowPx, ciHighPx: f.ciHighPx, ciLowUm: f.ciLowUm, ciHighUm: f.ciHighUm,
  uPx: f.uPx, dofPx: f.dofPx, uUm: f.uUm, uUmPixelSize: f.uUmPixelSize, dofUm: f.dofUm,
  determined: f.determined, upperBoundPx: f.upperBoundPx, upperBoundUm: f.upperBoundUm,
  minPx: f.minPx, maxPx: f.maxPx, minUm: f.minUm, maxUm: f.maxUm,
  lag1Correlation: f.lag1Correlation, nEffective: f.nEffective, dropped: f.dropped, droppedByReason: f.droppedByReason,
});

function documentFor(source: string, width: number, height: number, pixelSizeFrom: 'option' | 'file' | null, r: DiameterResult) {
  return {
    schemaVersion: SCHEMA_VERSION, analysis: 'diameter' as const, source, width, height,
    pixelSizeUmPerPx: r.pixelSizeUmPerPx, pixelSizeFrom, pixelSizeUncertainty: r.pixelSizeUncertainty, warnings: r.warnings,
    ...summaryJson(r),
    stations: r.stations.map(stationJson),
    fibres: r.fibres.map((f) => ({
      index: f.index, axisDeg: f.axisDeg, startXPx: f.startXPx, startYPx: f.startYPx, lengthPx: f.lengthPx,
      profileFit: f.profileFit, psfSigmaPx: f.psfSigmaPx, psfSigmaUPx: f.psfSigmaUPx, ...summaryJson(f),
      stations: f.stations.map(stationJson), droppedStations: f.droppedStations,
    })),
    polarity: r.polarity, contrast: r.contrast, noiseSd: r.noiseSd, shadingDegree: r.shadingDegree,
    ignoredObjects: r.ignoredObjects, options: r.options,
    interval: intervalText(r),
  };
}

/** How the 95 % intervals of this document were made, in words. */
function intervalText(r: DiameterResult): string {
  const statistic = r.fibres.filter((f) => f.n > 0).length > 1
    ? '95 % interval with the fibres as the sampling unit (t(0.975, k - 1) SD(fibre means) / sqrt k); per fibre: station interval'
    : '95 % interval on the station mean, n reduced to nEffective = n (1 - r1)/(1 + r1) for lag-1 correlation r1' +
      (r.fibres.some((f) => f.psfSigmaUPx !== null) ? ', with the pooled PSF sigma\'s share added (GUM)' : '');
  const pixel = r.pixelSizeUmPerPx === null ? '' : r.pixelSizeUncertainty === null
    ? '; um intervals without the pixel size\'s uncertainty (not given)'
    : `; um intervals include the pixel size's relative standard uncertainty ${r.pixelSizeUncertainty} (k = 1)`;
  return statistic + pixel + '; coverage factor t(0.975, effective dof), Welch-Satterthwaite';
}

/** The JSON document of one image's diameters (ResultHead fields first). */
export type DiameterDocument = ReturnType<typeof documentFor>;

/**
 * Fibre diameters at stations along each fibre of the image (measureFibreDiameters on the grey image):
 * mean, SD, CV and 95 % interval pooled and per fibre (in um including the pixel size's uncertainty when
 * given); a fibre below the resolvable width has `determined` false, a null mean and an upper bound;
 * dropped stations are listed with their reason.
 * Lengths in um when a pixel size is given or read from the file (`pixelSizeFrom` says which), else px only.
 * @throws InputError for a non-positive pixel size, an unknown polarity, or an image without a fibre
 */
export function analyseDiameter(img: Image, o: DiameterAnalysisOptions = {}): DiameterDocument {
  if (o.pixelSizeUmPerPx !== undefined && !(o.pixelSizeUmPerPx > 0)) {
    throw new InputError(`the pixel size must be above 0 um/px, got ${o.pixelSizeUmPerPx}`, 'Give the pixel size in um/px, e.g. 0.65');
  }
  const p = o.polarity;
  if (p !== undefined && p !== 'auto' && p !== 'dark' && p !== 'bright') {
    throw new InputError(`the fibre polarity must be auto, dark or bright, got "${String(p)}"`);
  }
  const pixelSize = o.pixelSizeUmPerPx ?? img.pixelSizeUmPerPx;
  if (o.pixelSizeUncertainty !== undefined && pixelSize === undefined) {
    throw new InputError('a pixel-size uncertainty was given without a pixel size',
      'Give the pixel size too (--um-per-px), or leave the uncertainty out');
  }
  const pixelSizeFrom = o.pixelSizeUmPerPx !== undefined ? 'option' : img.pixelSizeUmPerPx !== undefined ? 'file' : null;
  const r = measureFibreDiameters(toGrey(img), {
    pixelSizeUmPerPx: pixelSize, pixelSizeUncertainty: pixelSize === undefined ? undefined : o.pixelSizeUncertainty, stepPx: o.stepPx, averageLengthPx: o.averagePx, polarity: p, shadingDegree: o.shadingDegree,
  });
  if (pixelSizeFrom === null) {
    r.warnings = r.warnings.map((w) => (w.startsWith('no pixel size')
      ? 'no pixel size, given or in the file (--um-per-px): diameters are in px only, um fields are null' : w));
  }
  return documentFor(img.source.name, img.width, img.height, pixelSizeFrom, r);
}
