/** `retarda chart`: the interference colour chart, with its words. */
import { CHART_LIMITS } from '../optics/index.ts';
import { OPTICS_LIMITS, DEFAULT_ILLUMINANT } from '../analyses/index.ts';
import { limitArg, valueArg, type OptionSpec } from './spec.ts';

/** Options of `retarda chart`. */
export const CHART_OPTIONS: OptionSpec[] = [
  { name: 'compensator-nm', kind: 'number', help: 'full-wave compensator retardance, nm', limit: OPTICS_LIMITS.compensatorNm },
  { name: 'illuminant', kind: 'string', help: 'lamp: a colour temperature such as 3200K (a blackbody), or D65, or A', defaultText: DEFAULT_ILLUMINANT },
  { name: 'max-nm', kind: 'number', help: 'largest retardance on the chart, nm', limit: CHART_LIMITS.maxNm },
  { name: 'step-nm', kind: 'number', help: 'retardance step of the table, nm', limit: CHART_LIMITS.stepNm },
  { name: 'width-px', kind: 'number', help: 'width of the PNG, px', limit: CHART_LIMITS.widthPx },
  { name: 'out', kind: 'string', help: 'write the chart picture as a PNG' },
];

/** What `retarda chart` is asked for. */
export interface ChartRequest { compensatorNm?: number; illuminant?: string; maxNm?: number; stepNm?: number; widthPx?: number; out?: string }

/** `retarda chart`'s options as words. */
export function chartArgs(o: ChartRequest): string[] {
  return [
    ...limitArg('compensator-nm', OPTICS_LIMITS.compensatorNm, o.compensatorNm), ...valueArg('illuminant', o.illuminant, DEFAULT_ILLUMINANT),
    ...limitArg('max-nm', CHART_LIMITS.maxNm, o.maxNm), ...limitArg('step-nm', CHART_LIMITS.stepNm, o.stepNm),
    ...limitArg('width-px', CHART_LIMITS.widthPx, o.widthPx), ...valueArg('out', o.out),
  ];
}
