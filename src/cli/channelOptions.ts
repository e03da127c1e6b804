import type { Image } from '../image/index.ts';
import type { OrientationField } from '../orientation/index.ts';
import { parseWalls } from '../channel/index.ts';
import { analyseProfile, NOT_DETERMINED, type ProfileRequest, type ProfileResult } from '../analyses/index.ts';
import { checkWeighting, formerWeighting, type Weighting } from '../order/index.ts';
import { flagOpt, numberOpt, renamedNotice, stringOpt, type ParsedArgs } from './args.ts';
import { formatTable, formatPairs } from './format.ts';
export { CHANNEL_OPTIONS } from '../options/index.ts';
export { profileCsvRow } from '../report/index.ts';

/**
 * --weighting as the analyses take it, for a texture field or an optical reading; a weighting name of schema 1
 * (energy, energy-confidence, confidence on a texture field) is read as its new name with a notice.
 */
export function weightingFrom(a: ParsedArgs, texture: boolean): Weighting | undefined {
  const w = stringOpt(a, 'weighting');
  if (w === undefined) return undefined;
  const now = formerWeighting(w, texture);
  if (now) {
    a.notices.push(renamedNotice(`--weighting ${w}`, `--weighting ${now}`));
    return now;
  }
  return checkWeighting(w, { method: texture ? 'texture' : 'plate' });
}

/** The profile request the options describe (CHANNEL_OPTIONS), or null when no channel was asked for. */
export function profileRequestFrom(a: ParsedArgs, texture: boolean): ProfileRequest | null {
  const walls = stringOpt(a, 'walls');
  const auto = flagOpt(a, 'auto-walls');
  if (!walls && !auto) return null;
  return {
    channel: walls ? parseWalls(walls) : undefined,
    autoWalls: auto || undefined,
    bins: numberOpt(a, 'bins'),
    stations: numberOpt(a, 'stations'),
    axisDeg: numberOpt(a, 'axis-deg'),
    coreMax: numberOpt(a, 'core-max'),
    skinMin: numberOpt(a, 'skin-min'),
    weighting: weightingFrom(a, texture),
    blockPx: numberOpt(a, 'block-px'),
  };
}

/** Runs the channel profile when the options ask for one; null otherwise. */
export async function channelProfileOutput(img: Image, field: OrientationField, a: ParsedArgs, fieldOptions: Record<string, unknown> = {}): Promise<ProfileResult | null> {
  const req = profileRequestFrom(a, field.method === 'texture');
  return req ? analyseProfile(img, field, req, fieldOptions) : null;
}

const ci = (lo: number, hi: number) => `${lo.toFixed(3)}..${hi.toFixed(3)}`;
const shown = (v: number): number | string => (Number.isFinite(v) ? v : NOT_DETERMINED);
const band = (b: ProfileResult['core']) => (Number.isFinite(b.order) ? `${b.order.toFixed(3)} (${ci(b.ciLow, b.ciHigh)}) n=${b.n}` : `${NOT_DETERMINED} n=${b.n}`);

export function profileTable(r: ProfileResult): string {
  const nd = r.notDetermined?.order;
  const walls = `${r.wallsFound ? 'found' : 'given'}: ${r.walls.map((w) => [w.x1, w.y1, w.x2, w.y2].map((v) => v.toFixed(1)).join(',')).join(';')}`;
  if (nd) return formatPairs([['image', r.source], ['field', r.fieldMethod], ['walls', walls], ['S across the channel', `${NOT_DETERMINED}: ${nd}`]]);
  const head = formatPairs([
    ['image', r.source],
    ['field', r.fieldMethod],
    ['walls', walls],
    ['axis deg', r.axisDeg],
    ['taper deg', r.taperDeg],
    ['core S (95% CI)', band(r.core)],
    ['skin S (95% CI)', band(r.skin)],
    ['core/skin', r.notDetermined?.coreSkinRatio ? `${NOT_DETERMINED}: ${r.notDetermined.coreSkinRatio}` : Number.isFinite(r.coreSkinRatio) ? `${r.coreSkinRatio.toFixed(3)} (${ci(r.coreSkinRatioCiLow, r.coreSkinRatioCiHigh)})` : NOT_DETERMINED],
  ]);
  // A bin or band withheld (clipped pixels, an unsettled 90-deg choice) reads "not determined"; why is in the warnings.
  const rows = r.bins.map((b) => (Number.isFinite(b.order) ? [b.s, b.order, b.ciLow, b.ciHigh, b.n, b.directorDeg] : [b.s, NOT_DETERMINED, '', '', b.n, '']));
  const stationLines = r.stations.length > 1
    ? '\n\n' + formatTable(['station', 'from px', 'to px', 'width px', 'core S', 'skin S', 'core/skin'],
      r.stations.map((s) => [s.station, s.alongFromPx, s.alongToPx, s.widthPx, shown(s.core.order), shown(s.skin.order), shown(s.coreSkinRatio)]))
    : '';
  return `${head}\n\n${formatTable(['position s', 'S_axis', 'ci low', 'ci high', 'n', 'director deg'], rows)}${stationLines}`;
}
