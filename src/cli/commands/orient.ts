import { analyseOrientation, analyseOrientationRows, HELD_FIELD_MAX_PIXELS, NOT_DETERMINED, type OrientResult } from '../../analyses/index.ts';
import { giveBack } from '../../common/index.ts';
import { recycleTextureField } from '../../orientation/index.ts';
import { parseRect } from '../../common/index.ts';
import { numberOpt, stringOpt, type ParsedArgs } from '../args.ts';
import { ORIENT_OPTIONS } from '../../options/index.ts';
import type { Command } from '../command.ts';
import { formatTable } from '../format.ts';
import { orientCsvRow } from '../../report/rows.ts';
import { loadGreyImageOrRows, loadImageFiles } from '../io.ts';
import { fieldOutPath, writeFieldTiff } from '../fieldExport.ts';
import type { OrientOptions } from '../../analyses/orient.ts';
import { InputError } from '../../common/errors.ts';
import { ANALYSIS_MAX_PIXELS, checkAnalysisPixels, toGrey } from '../../image/index.ts';
import { startStripSharing, threadCount, watchIdleCores } from '../threads.ts';
import { weightingFrom } from '../channelOptions.ts';

/** The texture field's options (TEXTURE_OPTIONS) as the analyses take them. */
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

/** `retarda orient`'s options (ORIENT_OPTIONS) as analyseOrientation takes them. */
export function orientOptionsFrom(a: ParsedArgs): OrientOptions {
  const regionText = stringOpt(a, 'region');
  return {
    ...textureOptionsFrom(a),
    axisDeg: numberOpt(a, 'axis-deg'),
    weighting: weightingFrom(a, true),
    blockPx: numberOpt(a, 'block-px'),
    region: regionText ? parseRect(regionText, '--region') : undefined,
  };
}

export const orientCommand: Command = {
  name: 'orient',
  summary: 'orientation field by the gradient structure tensor: director, 2D order, coherency',
  usage: 'IMAGE... [--sigma PX] [--axis-deg A] [--region x,y,w,h] [--field-out FILE.tif] [--json]',
  options: ORIENT_OPTIONS,
  async run(a) {
    if (a.positionals.length === 0) throw new InputError('no image given', 'Name one or more image files');
    const opts = orientOptionsFrom(a);
    const fieldOut = stringOpt(a, 'field-out');
    const results: OrientResult[] = [];
    // One image at a time: each is read, analysed and let go (its arrays kept for the next image of its size,
    // so a batch touches fresh memory once), so a batch needs the memory of one image.
    for (const path of a.positionals) {
      // The structure tensor reads grey (toGrey): a colour PNG is decoded straight to luma, the same bits. For
      // numbers only, a large plain grey TIFF's rows are read from the file as the field streams past.
      // Whether a core is free to share a large image's strips with (src/cli/threads.ts), seen while it is read.
      const idle = watchIdleCores();
      const loaded = fieldOut ? { img: (await loadImageFiles([path], { grey: true }))[0] } : await loadGreyImageOrRows(path, HELD_FIELD_MAX_PIXELS, threadCount() > 1);
      if ('rows' in loaded) {
        // Its strips shared with worker threads reading the same file bytes (src/cli/threads.ts).
        const share = startStripSharing({ tiff: loaded.bytes, name: path }, idle);
        try {
          results.push(await analyseOrientationRows(loaded.head, loaded.rows, opts, share?.sharing));
        } finally {
          share?.close();
        }
        continue;
      }
      const { img } = loaded;
      if (fieldOut) checkAnalysisPixels(img, ANALYSIS_MAX_PIXELS.fieldOut);
      if (!fieldOut && img.width * img.height > HELD_FIELD_MAX_PIXELS) {
        // Numbers only, from a large image: the field is streamed, never held (the same numbers), its strips
        // shared with worker threads.
        const grey = toGrey(img), share = startStripSharing({ plane: grey }, idle);
        try {
          results.push(await analyseOrientationRows(img, grey, opts, share?.sharing));
        } finally {
          share?.close();
        }
      } else {
        const { result, field } = await analyseOrientation(img, opts);
        if (fieldOut) await writeFieldTiff(fieldOutPath(fieldOut, img.source.name, a.positionals.length), field, `retarda orient ${img.source.name}`);
        results.push(result);
        recycleTextureField(field);
      }
      giveBack(...img.planes);
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
