import { chmodSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { isInputError } from '../../src/common/errors.ts';
import { loadImageFiles, loadImagePages, writeBytes } from '../../src/cli/io.ts';
import { FIXTURES, manifest } from './fixtures.ts';

async function inputError(run: () => Promise<unknown>): Promise<string> {
  let caught: unknown;
  try {
    await run();
  } catch (e) {
    caught = e;
  }
  expect(isInputError(caught), `expected an InputError, got ${String(caught)}`).toBe(true);
  return (caught as Error).message;
}

describe('loadImageFiles / loadImagePages (src/cli/io.ts)', () => {
  const dir = mkdtempSync(join(tmpdir(), 'retarda-io-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('loads the first page of each file, in order, named by its path', async () => {
    const paths = [join(FIXTURES, 'grey8.png'), join(FIXTURES, 'multipage.tif'), join(FIXTURES, 'rgb444.jpg')];
    const images = await loadImageFiles(paths);
    expect(images.map((im) => [im.source.name, im.width, im.height, im.channels])).toEqual([
      [paths[0], 23, 17, 1], [paths[1], 23, 17, 1], [paths[2], 37, 29, 3]]);
  });

  it('loadImagePages returns every TIFF page (three in multipage.tif, as tifffile wrote)', async () => {
    const pages = await loadImagePages(join(FIXTURES, manifest.multipage.file));
    expect(pages.map((p) => [p.width, p.height])).toEqual(manifest.multipage.pages.map((p) => [p.width, p.height]));
  });

  it('a missing file, a folder, an unreadable file and a file used as a folder are InputErrors naming the path', async () => {
    const missing = join(dir, 'nope.tif');
    expect(await inputError(() => loadImageFiles([missing]))).toContain(`${missing}: cannot read the image (no such file`);
    expect(await inputError(() => loadImagePages(dir))).toContain(`${dir}: is a folder`);
    const locked = join(dir, 'locked.png');
    writeFileSync(locked, readFileSync(join(FIXTURES, 'grey8.png')));
    chmodSync(locked, 0o000);
    // root reads any file regardless of mode, so the permission case is only checkable as a normal user.
    if (process.getuid?.() !== 0) expect(await inputError(() => loadImageFiles([locked]))).toContain('permission denied');
    chmodSync(locked, 0o600);
    const throughFile = join(locked, 'inner.png'); // a file used as a folder
    expect(await inputError(() => loadImageFiles([throughFile]))).toContain('a part of the path is not a folder');
  });

  it('a corrupt file is an InputError naming the path', async () => {
    const bad = join(dir, 'bad.png');
    writeFileSync(bad, 'not an image at all');
    expect(await inputError(() => loadImageFiles([bad]))).toContain(`${bad}: this is a text file`);
  });

  it('writeBytes writes the bytes; a missing folder is an InputError naming the path', async () => {
    const out = join(dir, 'out.bin');
    await writeBytes(out, Uint8Array.from([1, 2, 3, 250]));
    expect(Array.from(readFileSync(out))).toEqual([1, 2, 3, 250]);
    const nowhere = join(dir, 'missing-folder', 'out.bin');
    expect(await inputError(() => writeBytes(nowhere, new Uint8Array(1)))).toContain(`${nowhere}: cannot write the file (no such file`);
  });
});
