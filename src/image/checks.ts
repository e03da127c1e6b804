import { InputError } from '../common/errors.ts';
import { MAX_PIXELS } from './types.ts';

/** Accepted input formats, named in every "unknown format" message. */
export const ACCEPTED_FORMATS = 'PNG (8/16-bit), JPEG, TIFF (8/16-bit integer or 32-bit float; grey or RGB)';

/**
 * Rejects a header size of zero or more than MAX_PIXELS pixels before any pixel buffer exists.
 * `what` names the file (and page) in the message.
 */
export function checkHeaderSize(what: string, format: string, width: number, height: number): void {
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new InputError(`${what}: the ${format} header gives an image size of ${width} x ${height} pixels`,
      'The file is damaged or empty; export the image again');
  }
  const pixels = width * height;
  if (pixels > MAX_PIXELS) {
    throw new InputError(
      `${what}: the ${format} image is ${width} x ${height} pixels (${(pixels / 1e6).toFixed(0)} MP), ` +
        `more than the ${MAX_PIXELS / 1e6} MP limit`,
      'Crop the region of interest or bin the image (e.g. 2x2) before loading it');
  }
}

/**
 * Turns an error thrown by a decoder library into an InputError that names the file and the format.
 * `extra` adds what is known about the cause (e.g. a missing end marker).
 */
export function decodeFailure(what: string, format: string, e: unknown, extra = ''): InputError {
  const why = extra ? `${extra}; ` : '';
  return new InputError(`${what}: the ${format} data could not be decoded (${why}detail: ${errorText(e)})`,
    'The file is corrupt or truncated; copy it again from the source or re-export it');
}

/** An error's message with its cause's (libraries wrap zlib errors), without a dangling colon. */
function errorText(e: unknown): string {
  if (!(e instanceof Error)) return String(e);
  const own = e.message.replace(/:\s*$/, '');
  return e.cause instanceof Error ? `${own}: ${e.cause.message}` : own;
}

/** An InputError for a valid file whose kind of samples the analysis does not take. */
export function unsupported(what: string, format: string, detail: string, hint: string): InputError {
  return new InputError(`${what}: ${format} with ${detail} is not supported`, hint);
}
