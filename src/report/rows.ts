import type { OrientResult, ProfileResult } from '../analyses/index.ts';
import type { CsvValue } from './csv.ts';

/**
 * CSV rows of the results, one source for the command line's --csv and the app's CSV downloads, so the
 * two always have the same columns (units in the names).
 */
export function orientCsvRow(r: OrientResult): Record<string, CsvValue> {
  return {
    image: r.source, directorDeg: r.directorDeg, order2D: r.order2D, order2DCiLow: r.order2DCiLow, order2DCiHigh: r.order2DCiHigh,
    axisDeg: r.axisDeg, axisOrder: r.axisOrder, coherencyMean: r.coherencyMean, n: r.n,
    sigmaPx: r.options.sigmaPx as number, weighting: String(r.options.weighting),
  };
}

export function profileCsvRow(r: ProfileResult): Record<string, CsvValue> {
  return {
    image: r.source, field: r.fieldMethod, axisDeg: r.axisDeg, taperDeg: r.taperDeg,
    coreOrder: r.core.order, coreCiLow: r.core.ciLow, coreCiHigh: r.core.ciHigh, coreN: r.core.n,
    skinOrder: r.skin.order, skinCiLow: r.skin.ciLow, skinCiHigh: r.skin.ciHigh, skinN: r.skin.n,
    coreSkinRatio: r.coreSkinRatio, coreSkinRatioCiLow: r.coreSkinRatioCiLow, coreSkinRatioCiHigh: r.coreSkinRatioCiHigh,
    coreMax: r.options.coreMax as number, skinMin: r.options.skinMin as number, weighting: String(r.options.weighting),
  };
}

/** Per-bin rows of a profile: the S curve itself. */
export function profileBinRows(r: ProfileResult): Record<string, CsvValue>[] {
  return r.bins.map((b) => ({ image: r.source, s: b.s, sLow: b.sLow, sHigh: b.sHigh, order: b.order, ciLow: b.ciLow, ciHigh: b.ciHigh, n: b.n, order2D: b.order2D, directorDeg: b.directorDeg }));
}
