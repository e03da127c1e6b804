/**
 * Access to tests/fixtures/images: the files Pillow/tifffile/OpenCV wrote and the reference sample
 * values numpy handed to them (or Pillow decoded), as listed in manifest.json by make_fixtures.py.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

export const FIXTURES = fileURLToPath(new URL('../fixtures/images/', import.meta.url));
/** Decoder variants written by tests/fixtures/variants/make_variant_fixtures.py. */
export const VARIANTS = fileURLToPath(new URL('../fixtures/variants/', import.meta.url));

export interface RawPage {
  raw: string;
  dtype: 'uint8' | 'uint16' | 'uint32' | 'float32' | 'float64';
  shape: number[];
  width: number;
  height: number;
  bitDepth?: number;
  encoding?: string;
}

export interface ReadableFixture {
  file: string;
  channels: number;
  bitDepth: number;
  encoding: string;
  pixelSizeUmPerPx: number | null;
  tolerance: number;
  meanTolerance: number;
  pages: RawPage[];
  note: string;
}

export interface RejectedFixture {
  file: string;
  messageContains: string;
  note: string;
}

export interface Manifest {
  readable: ReadableFixture[];
  rejected: RejectedFixture[];
  multipage: { file: string; pages: RawPage[] };
}

export const manifest: Manifest = JSON.parse(readFileSync(FIXTURES + 'manifest.json', 'utf8'));

/** A fixture file's bytes as a Uint8Array of exactly the file (own buffer). */
export function fixtureBytes(file: string): Uint8Array {
  return new Uint8Array(readFileSync(FIXTURES + file));
}

/** The reference samples of one page, interleaved as stored (channels last). */
export function rawSamples(page: RawPage, dir = FIXTURES): Uint8Array | Uint16Array | Uint32Array | Float32Array | Float64Array {
  const bytes = readFileSync(dir + page.raw);
  const buffer = bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength);
  if (page.dtype === 'uint8') return new Uint8Array(buffer);
  if (page.dtype === 'uint16') return new Uint16Array(buffer);
  if (page.dtype === 'uint32') return new Uint32Array(buffer);
  if (page.dtype === 'float64') return new Float64Array(buffer);
  return new Float32Array(buffer);
}

/** The largest integer code of a dtype, or 0 for float (kept as stored). */
export const maxCode = (dtype: RawPage['dtype']) =>
  (dtype === 'uint8' ? 255 : dtype === 'uint16' ? 65535 : dtype === 'uint32' ? 4294967295 : 0);
