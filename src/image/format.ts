import { InputError } from '../common/index.ts';
import { ACCEPTED_FORMATS } from './checks.ts';

export type ImageFormat = 'png' | 'jpeg' | 'tiff';

const startsWith = (bytes: Uint8Array, sig: number[], at = 0) => sig.every((b, i) => bytes[at + i] === b);
const ascii = (s: string) => [...s].map((c) => c.charCodeAt(0));

/** Formats we recognise only to name them in the error (signatures from each format's specification). */
const OTHER_FORMATS: { name: string; test: (b: Uint8Array) => boolean }[] = [
  { name: 'GIF', test: (b) => startsWith(b, ascii('GIF87a')) || startsWith(b, ascii('GIF89a')) },
  { name: 'BMP', test: (b) => startsWith(b, ascii('BM')) && b.length > 14 },
  { name: 'WebP', test: (b) => startsWith(b, ascii('RIFF')) && startsWith(b, ascii('WEBP'), 8) },
  { name: 'JPEG 2000', test: (b) => startsWith(b, [0, 0, 0, 12, 0x6a, 0x50, 0x20, 0x20]) || startsWith(b, [0xff, 0x4f, 0xff, 0x51]) },
  { name: 'JPEG XL', test: (b) => startsWith(b, [0xff, 0x0a]) || startsWith(b, [0, 0, 0, 12, 0x4a, 0x58, 0x4c, 0x20]) },
  { name: 'HEIF/AVIF', test: (b) => startsWith(b, ascii('ftyp'), 4) },
  { name: 'PDF', test: (b) => startsWith(b, ascii('%PDF')) },
  { name: 'ZIP archive', test: (b) => startsWith(b, [0x50, 0x4b, 0x03, 0x04]) },
  { name: 'gzip archive', test: (b) => startsWith(b, [0x1f, 0x8b]) },
];

/** Whether the first bytes look like text (printable ASCII, UTF-8 lead/continuation bytes, whitespace). */
function looksLikeText(bytes: Uint8Array): boolean {
  const head = bytes.subarray(0, 512);
  return head.length > 0 && head.every((b) => b === 9 || b === 10 || b === 13 || (b >= 32 && b !== 127));
}

/**
 * The image format from the file's first bytes (PNG signature 89 50 4E 47 0D 0A 1A 0A; JPEG SOI
 * FF D8 FF; TIFF "II*\0" or "MM\0*", and BigTIFF with 43).
 * The file name is only used in messages; the extension is not trusted.
 */
export function detectFormat(bytes: Uint8Array, name: string): ImageFormat {
  if (bytes.length === 0) {
    throw new InputError(`${name}: the file is empty (0 bytes)`, 'Check that the copy or download finished');
  }
  if (startsWith(bytes, [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])) return 'png';
  if (startsWith(bytes, [0xff, 0xd8, 0xff])) return 'jpeg';
  if (startsWith(bytes, [0x49, 0x49]) && (bytes[2] === 42 || bytes[2] === 43) && bytes[3] === 0) return 'tiff';
  if (startsWith(bytes, [0x4d, 0x4d, 0]) && (bytes[3] === 42 || bytes[3] === 43)) return 'tiff';
  if (bytes.length < 8) {
    throw new InputError(`${name}: the file is only ${bytes.length} byte${bytes.length === 1 ? '' : 's'} long, too short to be an image`,
      'Check that the copy or download finished');
  }
  const other = OTHER_FORMATS.find((f) => f.test(bytes));
  const what = other ? `a ${other.name} file` : looksLikeText(bytes) ? 'a text file, not an image' : 'not an image format we read';
  throw new InputError(`${name}: this is ${what}`, `Accepted formats: ${ACCEPTED_FORMATS}; convert the file to one of them`);
}
