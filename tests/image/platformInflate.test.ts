import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { deflateSync } from 'node:zlib';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { loadedTensorKernel, loadTensorKernel } from '../../src/wasm/index.ts';
import { isInputError } from '../../src/common/errors.ts';
import { decodeImage, decodeImageAsync, decodeImagePages, usePlatformCodecs, type Image } from '../../src/image/index.ts';
import { inflatePng } from '../../src/image/pngDecode.ts';
import { inflateZlib, oneZlibPiece, ZlibProblem } from '../../src/image/inflate.ts';
import { NODE_CODECS } from '../../src/cli/platform.ts';
import { makeCorpus } from '../corpus/makeCorpus.ts';
import { VARIANTS } from './fixtures.ts';

/**
 * The command line inflates PNG and TIFF Deflate data with node:zlib (src/cli/platform.ts) instead of fflate.
 * Both must read every file to the same bits and refuse the same files: the variant fixtures (checked against
 * Pillow / tifffile / OpenCV in variants.test.ts) and the hostile corpus (tests/corpus/makeCorpus.ts, whose
 * cases say what must happen: 'refuse' files are damaged, cut short, bombs or over the limit). With the tensor
 * kernel loaded, both paths unfilter and convert PNG rows in the kernel: the same bits again.
 */

type Outcome = { planes: Float32Array[][] } | { refused: string };

function decodeWith(codecs: typeof NODE_CODECS | null, bytes: Uint8Array, name: string): Outcome {
  usePlatformCodecs(codecs);
  try {
    return { planes: decodeImagePages(bytes, name).map((p: Image) => p.planes) };
  } catch (e) {
    if (isInputError(e)) return { refused: (e as Error).message };
    throw e;
  } finally {
    usePlatformCodecs(null);
  }
}

const sameBits = (a: Float32Array[][], b: Float32Array[][]) => a.length === b.length &&
  a.every((pages, i) => pages.length === b[i].length && pages.every((p, c) => Buffer.from(p.buffer, p.byteOffset, p.byteLength)
    .equals(Buffer.from(b[i][c].buffer, b[i][c].byteOffset, b[i][c].byteLength))));

afterEach(() => usePlatformCodecs(null));

// Twice: unfiltering in TypeScript, then (the kernel loaded) in the tensor kernel (KernelRows), on both paths.
describe.each([['without', false], ['with', true]])('node:zlib (%s the tensor kernel) and fflate read the same files to the same bits', (_, kernel) => {
  beforeAll(async () => {
    if (kernel) await loadTensorKernel();
    expect(loadedTensorKernel() !== null).toBe(kernel);
  });

  const manifest: { file: string }[] = JSON.parse(readFileSync(VARIANTS + 'manifest.json', 'utf8')).readable;
  const files = manifest.map((v) => v.file).filter((f) => /\.(png|tiff?)$/i.test(f));

  it(`every PNG and TIFF variant fixture (${files.length} files)`, () => {
    expect(files.length).toBeGreaterThan(20);
    // Counts node:zlib's inflations, so the test fails if the readers stopped using it.
    let inflated = 0;
    const counting = { ...NODE_CODECS, inflate: (s: Uint8Array, most: number) => (inflated++, NODE_CODECS.inflate(s, most)) };
    for (const file of files) {
      const bytes = new Uint8Array(readFileSync(VARIANTS + file));
      const a = decodeWith(null, bytes, file), b = decodeWith(counting, bytes, file);
      expect('planes' in a && 'planes' in b && sameBits(a.planes, b.planes), file).toBe(true);
    }
    expect(inflated).toBeGreaterThan(15);
  });

  describe('the hostile corpus', () => {
    const dir = mkdtempSync(join(tmpdir(), 'retarda-inflate-'));
    afterAll(() => rmSync(dir, { recursive: true, force: true }));
    const cases = makeCorpus(dir).filter((c) => /\.(png|tiff?)$/i.test(c.file));

    it(`refuses every 'refuse' case with both, and reads every 'read' case to the same bits (${cases.length} files)`, () => {
      expect(cases.filter((c) => c.expect === 'refuse').length).toBeGreaterThan(50);
      for (const c of cases) {
        const bytes = new Uint8Array(readFileSync(join(dir, c.file)));
        const a = decodeWith(null, bytes, c.file), b = decodeWith(NODE_CODECS, bytes, c.file);
        if (c.expect === 'refuse') {
          expect('refused' in a && 'refused' in b, `${c.file} (${c.why}) refused by both`).toBe(true);
        } else if (c.expect === 'read') {
          expect('planes' in a && 'planes' in b && sameBits(a.planes, b.planes), `${c.file} (${c.why}) read alike`).toBe(true);
        } else {
          // Damage no check can see: both decide alike.
          expect('refused' in a, c.file).toBe('refused' in b);
        }
      }
    }, 120_000);
  });
});

describe('the app\'s reader: image data inflated by Compression Streams (decodeImageAsync)', () => {
  const manifest: { file: string }[] = JSON.parse(readFileSync(VARIANTS + 'manifest.json', 'utf8')).readable;
  const asyncOutcome = async (bytes: Uint8Array, name: string): Promise<Outcome> => {
    try {
      return { planes: [(await decodeImageAsync(bytes, name)).planes] };
    } catch (e) {
      if (isInputError(e)) return { refused: (e as Error).message };
      throw e;
    }
  };
  const syncOutcome = (bytes: Uint8Array, name: string): Outcome => {
    try {
      return { planes: [decodeImage(bytes, name).planes] };
    } catch (e) {
      if (isInputError(e)) return { refused: (e as Error).message };
      throw e;
    }
  };

  it('inflates a PNG\'s data by the platform\'s streams (Node.js has them too)', async () => {
    const file = manifest.map((v) => v.file).find((f) => /\.png$/i.test(f))!;
    const bytes = new Uint8Array(readFileSync(VARIANTS + file));
    expect(await inflatePng(bytes, file)).toBeInstanceOf(Uint8Array);
  });

  describe('the hostile corpus', () => {
    const dir = mkdtempSync(join(tmpdir(), 'retarda-streams-'));
    afterAll(() => rmSync(dir, { recursive: true, force: true }));
    const cases = makeCorpus(dir).filter((c) => /\.png$/i.test(c.file));

    it(`refuses what decodeImage refuses, in the same words, and reads the rest to the same bits (${cases.length} PNG files)`, async () => {
      expect(cases.filter((c) => c.expect === 'refuse').length).toBeGreaterThan(20);
      let fast = 0;
      for (const c of cases) {
        const bytes = new Uint8Array(readFileSync(join(dir, c.file)));
        if (await inflatePng(bytes, c.file)) fast++;
        const a = syncOutcome(bytes, c.file), b = await asyncOutcome(bytes, c.file);
        if ('refused' in a) expect('refused' in b && b.refused, `${c.file} (${c.why})`).toBe(a.refused);
        else expect('planes' in b && sameBits(a.planes, b.planes), `${c.file} (${c.why}) read alike`).toBe(true);
      }
      // The streams read the sound files (some corpus files are sound: 'read' cases).
      expect(fast).toBeGreaterThan(0);
    }, 120_000);
  });
});

describe('inflateZlib through node:zlib', () => {
  // zlib streams made by node:zlib's deflate (the zlib library's own writer, RFC 1950).
  const data = Uint8Array.from({ length: 5000 }, (_, i) => (i * 7) % 251);
  const stream = new Uint8Array(deflateSync(data));
  const run = (s: Uint8Array, most: number) => {
    usePlatformCodecs(NODE_CODECS);
    const parts: Uint8Array[] = [];
    try {
      const n = inflateZlib(oneZlibPiece(s), most, (c) => parts.push(c), true);
      return { n, parts };
    } catch (e) {
      return { why: e instanceof ZlibProblem ? e.why : String(e) };
    }
  };

  it('gives the data back in one piece', () => {
    const r = run(stream, data.length);
    expect(r.n).toBe(data.length);
    expect(Buffer.from(r.parts![0]).equals(Buffer.from(data))).toBe(true);
  });

  it('stops at the cap instead of making the rest', () => {
    expect(run(stream, data.length - 1).why).toMatch(/expands to more than the 4999 bytes/);
  });

  it('refuses a changed Adler-32, a cut-short stream and bytes after the stream\'s end, in plain words', () => {
    const adler = stream.slice();
    adler[adler.length - 1] ^= 1;
    expect(run(adler, data.length).why).toMatch(/Adler-32\) does not match/);
    expect(run(stream.subarray(0, stream.length - 6), data.length).why).toMatch(/ends too soon/);
    const longer = new Uint8Array(stream.length + 3);
    longer.set(stream);
    expect(run(longer, data.length).why).toMatch(/goes on for 3 bytes after the end/);
  });
});
