import { closeSync, openSync, readFileSync, readSync, statSync } from 'node:fs';
import { open, writeFile, type FileHandle } from 'node:fs/promises';
import { InputError } from '../common/index.ts';
import { loadTensorKernel } from '../wasm/index.ts';
import { decodeImage, decodeImagePages, detectFormat, greyTiffRows, MAX_DECODE_BYTES, usePlatformCodecs, type GreyRows, type Image, type ImageHead } from '../image/index.ts';
import { NODE_CODECS } from './platform.ts';

/** Node's readFile refuses files over 2 GiB; a 250 MP 16-bit RGB TIFF is 1.5 GB. */
const MAX_FILE_BYTES = 2 ** 31 - 1;

function fsProblem(path: string, e: unknown, doing: string): InputError {
  const code = (e as NodeJS.ErrnoException)?.code;
  const reason: Record<string, string> = {
    ENOENT: 'no such file or folder', EACCES: 'permission denied', EPERM: 'permission denied',
    EISDIR: 'it is a folder, not a file', ENOTDIR: 'a part of the path is not a folder', EROFS: 'the disk is read-only',
    ENOSPC: 'the disk is full',
  };
  const why = (code && reason[code]) ?? (code ? `the system reports ${code}` : 'the system refused');
  return new InputError(`${path}: cannot ${doing} (${why})`, 'Check the path and its permissions');
}

/**
 * Reads a whole file, with file-system problems as InputError naming the path. A file of `sharedFrom` bytes or
 * more is read into a SharedArrayBuffer, which worker threads can read without a copy.
 */
async function readImageBytes(path: string, sharedFrom = Infinity): Promise<Uint8Array> {
  // Read in one call on this thread: the command does one thing at a time, and the asynchronous read's
  // hand-offs cost a millisecond or two per file.
  let info;
  try {
    info = statSync(path);
  } catch (e) {
    throw fsProblem(path, e, 'read the image');
  }
  if (info.isDirectory()) {
    throw new InputError(`${path}: is a folder, not an image file`, 'Give the path of an image file inside it');
  }
  if (info.size > MAX_FILE_BYTES) {
    throw new InputError(`${path}: the file is ${(info.size / 2 ** 30).toFixed(1)} GiB, too large to load`,
      'Crop or bin the image, or split the stack into smaller files');
  }
  try {
    if (info.size >= sharedFrom) return readShared(path, info.size);
    const buf = readFileSync(path);
    return new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength);
  } catch (e) {
    throw fsProblem(path, e, 'read the image');
  }
}

/** The file's `size` bytes in a SharedArrayBuffer. */
function readShared(path: string, size: number): Uint8Array {
  const out = new Uint8Array(new SharedArrayBuffer(size)), fd = openSync(path, 'r');
  try {
    for (let at = 0; at < size;) {
      const got = readSync(fd, out, at, Math.min(size - at, 2 ** 30), at);
      if (got === 0) throw new Error(`${path}: the file ended early`);
      at += got;
    }
  } finally {
    closeSync(fd);
  }
  return out;
}

/** Bytes an image's planes hold (4 per float sample). */
const planeBytes = (img: Image) => img.planes.reduce((sum, p) => sum + p.byteLength, 0);

/**
 * The decoders' platform parts: node:zlib's inflater, and the tensor kernel, which unfilters PNG rows (the same
 * bits as without it, only quicker; a Node.js without WebAssembly SIMD decodes without it).
 */
async function useNodeDecoders(): Promise<void> {
  usePlatformCodecs(NODE_CODECS);
  await loadTensorKernel().catch(() => null);
}

/**
 * Loads the first page of each image file (PNG, JPEG, TIFF; see decodeImage), in the order given.
 * All of them are held at once, so together they share one MAX_DECODE_BYTES: each file may take
 * what the ones before it left.
 * With `grey`, colour images come as one plane of luma (decodeImage), for analyses that read grey only.
 * @throws InputError naming the path for a missing, unreadable, folder, corrupt or unsupported file,
 *   or one that does not fit in what is left of the limit
 */
export async function loadImageFiles(paths: string[], options: { grey?: boolean } = {}): Promise<Image[]> {
  await useNodeDecoders();
  const images: Image[] = [];
  let held = 0;
  for (const path of paths) {
    const img = decodeImage(await readImageBytes(path), path, 0, MAX_DECODE_BYTES - held, options);
    held += planeBytes(img);
    images.push(img);
  }
  return images;
}

/**
 * One image file for an analysis that can stream its grey rows: a plain grey TIFF (greyTiffRows) of more than
 * `rowsAbove` pixels comes as rows read from the file on demand (no plane of 4 bytes a pixel), anything else
 * decoded as loadImageFiles does with `grey` (the same values either way). With `shared`, a file that may
 * come as rows (at least `rowsAbove` bytes) is read into a SharedArrayBuffer, and the rows' file bytes are
 * returned too (`bytes`: worker threads read the rows from them).
 * @throws InputError as loadImageFiles
 */
export async function loadGreyImageOrRows(path: string, rowsAbove: number, shared = false): Promise<{ img: Image } | { head: ImageHead; rows: GreyRows; bytes: Uint8Array }> {
  await useNodeDecoders();
  const bytes = await readImageBytes(path, shared ? rowsAbove : Infinity);
  if (detectFormat(bytes, path) === 'tiff') {
    const found = greyTiffRows(bytes, path);
    if (found && found.head.width * found.head.height > rowsAbove) return { ...found, bytes };
  }
  // The decoders take plain buffers.
  const plain = bytes.buffer instanceof SharedArrayBuffer ? bytes.slice() : bytes;
  return { img: decodeImage(plain, path, 0, MAX_DECODE_BYTES, { grey: true }) };
}

/**
 * Loads every page of one image file (all TIFF pages; one for PNG/JPEG; see decodeImagePages).
 * @throws InputError as loadImageFiles
 */
export async function loadImagePages(path: string): Promise<Image[]> {
  await useNodeDecoders();
  return decodeImagePages(await readImageBytes(path), path);
}

/** Chunks gathered into one write of about this many bytes. */
const WRITE_BATCH_BYTES = 4 * 2 ** 20;

/**
 * Writes chunks to a file in order, replacing it, holding about WRITE_BATCH_BYTES at a time.
 * @throws InputError naming the path when the folder is missing, not writable, or the disk is full
 */
export async function writeChunks(path: string, chunks: Iterable<Uint8Array>): Promise<void> {
  let file: FileHandle | undefined;
  try {
    file = await open(path, 'w');
    // Strips are small: gather them into writes of about 4 MB.
    const batch: Uint8Array[] = [];
    let size = 0;
    for (const c of chunks) {
      batch.push(c); size += c.length;
      if (size >= WRITE_BATCH_BYTES) { await file.writev(batch); batch.length = 0; size = 0; }
    }
    if (batch.length) await file.writev(batch);
  } catch (e) {
    if (e instanceof InputError) throw e;
    throw fsProblem(path, e, 'write the file');
  } finally {
    await file?.close();
  }
}

/**
 * Writes bytes to a file, replacing it.
 * @throws InputError naming the path when the folder is missing, not writable, or the disk is full
 */
export async function writeBytes(path: string, bytes: Uint8Array): Promise<void> {
  try {
    await writeFile(path, bytes);
  } catch (e) {
    throw fsProblem(path, e, 'write the file');
  }
}
