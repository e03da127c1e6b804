import { analyseOrientation, NOT_DETERMINED, type OrientResult } from '../../analyses/index.ts';
import { parseRect } from '../../common/index.ts';
import { numberOpt, stringOpt, type OptionSpec, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatTable } from '../format.ts';
import { orientCsvRow } from '../../report/rows.ts';
import { loadImageFiles } from '../io.ts';
import { fieldOutPath, writeFieldTiff } from '../fieldExport.ts';
import type { OrientOptions } from '../../analyses/orient.ts';
import { InputError } from '../../common/errors.ts';
import { weightingFrom } from '../channelOptions.ts';

/** Options of the structure-tensor field, shared with `profile`. */
export const TEXTURE_OPTIONS: OptionSpec[] = [
  { name: 'sigma', kind: 'number', help: 'integration scale of the structure tensor, px', defaultText: '2' },
  { name: 'sigma-deriv', kind: 'number', help: 'derivative scale, px', defaultText: '1' },
  { name: 'derivative', kind: 'string', help: 'gaussian or sobel', defaultText: 'gaussian' },
  { name: 'strength-floor', formerName: 'energy-floor', kind: 'number', help: 'mask pixels whose texture strength is below this fraction of its 99th percentile', defaultText: '0.02' },
  { name: 'coherency-min', kind: 'number', help: 'mask pixels below this coherency', defaultText: '0' },
  { name: 'field-out', kind: 'string', help: 'write the field as a float TIFF (angleDeg, coherency, strength, mask)' },
];

export function textureOptionsFrom(a: ParsedArgs): OrientOptions {
  const derivative = stringOpt(a, 'derivative');
  if (derivative !== undefined && derivative !== 'gaussian' && derivative !== 'sobel') {
    throw new InputError(`--derivative must be gaussian or sobel, got "${derivative}"`);
  }
  return {
    sigmaPx: numberOpt(a, 'sigma'),
    sigmaDerivPx: numberOpt(a, 'sigma-deriv'),
    derivative,
    strengthFloor: numberOpt(a, 'strength-floor'),
    coherencyMin: numberOpt(a, 'coherency-min'),
  };
}

export const orientCommand: Command = {
  name: 'orient',
  summary: 'orientation field by the gradient structure tensor: director, 2D order, coherency',
  usage: 'IMAGE... [--sigma PX] [--axis-deg A] [--region x,y,w,h] [--field-out FILE.tif] [--json]',
  options: [
    ...TEXTURE_OPTIONS,
    { name: 'axis-deg', kind: 'number', help: 'also give S_axis against this axis, degrees CCW from +x' },
    { name: 'region', kind: 'string', help: 'only pixels in this rectangle "x,y,w,h" count' },
    { name: 'weighting', kind: 'string', help: 'pixel weights: none, coherency, strength (texture strength), strength-coherency', defaultText: 'coherency' },
    { name: 'block-px', kind: 'number', help: 'block side for the bootstrap intervals, px', defaultText: '6 correlation lengths' },
  ],
  async run(a) {
    if (a.positionals.length === 0) throw new InputError('no image given', 'Name one or more image files');
    const images = await loadImageFiles(a.positionals);
    const regionText = stringOpt(a, 'region');
    const opts: OrientOptions = {
      ...textureOptionsFrom(a),
      axisDeg: numberOpt(a, 'axis-deg'),
      weighting: weightingFrom(a, true),
      blockPx: numberOpt(a, 'block-px'),
      region: regionText ? parseRect(regionText, '--region') : undefined,
    };
    const fieldOut = stringOpt(a, 'field-out');
    const results: OrientResult[] = [];
    for (const img of images) {
      const { result, field } = await analyseOrientation(img, opts);
      if (fieldOut) await writeFieldTiff(fieldOutPath(fieldOut, img.source.name, images.length), field, `retarda orient ${img.source.name}`);
      results.push(result);
    }
    const hasAxis = opts.axisDeg !== undefined;
    const table = formatTable(
      ['image', 'director deg', 'S_2D', 'ci low', 'ci high', ...(hasAxis ? ['S_axis'] : []), 'coherency', 'n'],
      results.map((r) => [r.source, r.notDetermined?.directorDeg ? NOT_DETERMINED : r.directorDeg, ...(r.notDetermined?.order2D ? [NOT_DETERMINED, '', ''] : [r.order2D, r.order2DCiLow, r.order2DCiHigh]), ...(hasAxis ? [r.axisOrder] : []), r.coherencyMean, r.n]),
    );
    return {
      json: results.length === 1 ? results[0] : { schemaVersion: results[0].schemaVersion, analysis: 'orient', results },
      table,
      csvRows: results.map(orientCsvRow),
      warnings: results.flatMap((r) => [
        ...Object.entries(r.notDetermined ?? {}).map(([k, why]) => `${r.source}: ${k} ${NOT_DETERMINED}: ${why}`),
        ...r.warnings.map((w) => `${r.source}: ${w}`),
      ]),
    };
  },
};
