/**
 * The page's side of the float TIFF export: the field lives in the analysis worker, which writes it
 * with src/report/fieldTiff.ts (fieldTiffBytes: the bytes `--field-out` writes) and hands the
 * bytes over. The worker command is declared here until it joins the worker's command table.
 */
import type { OrientOptions } from '../../src/analyses/index.ts';
import type { AnalysisClient, ProgressFn } from '../worker/client.ts';

/**
 * Worker command `fieldTiff`: the texture field of the image held under `key`, made with `options`
 * (the cached one when the options match), as fieldTiffBytes(field, description).
 */
export interface FieldTiffCommand { args: { key: string; options: OrientOptions; description: string }; reply: { bytes: ArrayBuffer } }

export class FieldExportUnavailable extends Error {
  constructor() {
    super('this version of the analysis worker cannot hand over fields yet; use the command line shown under the results (--field-out FILE.tif) to write the same file');
    this.name = 'FieldExportUnavailable';
  }
}

/** Asks the worker for the field TIFF; FieldExportUnavailable when the worker lacks the command. */
export async function requestFieldTiff(client: AnalysisClient, args: FieldTiffCommand['args'], progress?: ProgressFn): Promise<Uint8Array> {
  const call = client.call as unknown as (c: 'fieldTiff', a: FieldTiffCommand['args'], p?: ProgressFn) => Promise<FieldTiffCommand['reply']>;
  try {
    return new Uint8Array((await call.call(client, 'fieldTiff', args, progress)).bytes);
  } catch (e) {
    if (/unknown command "fieldTiff"/.test((e as Error).message)) throw new FieldExportUnavailable();
    throw e;
  }
}
