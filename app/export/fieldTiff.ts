/**
 * The page's side of the float TIFF export: the field lives in the analysis worker, which writes it
 * with src/report/fieldTiff.ts (fieldTiffBytes: the same bytes `--field-out` writes) and hands the
 * bytes over.
 */
import type { AnalysisClient, ProgressFn } from '../worker/client.ts';
import type { CommandTable } from '../worker/protocol.ts';

export async function requestFieldTiff(client: AnalysisClient, args: CommandTable['fieldTiff']['args'], progress?: ProgressFn): Promise<Uint8Array> {
  return new Uint8Array((await client.call('fieldTiff', args, progress)).bytes);
}
