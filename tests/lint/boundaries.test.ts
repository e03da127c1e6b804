/**
 * The folders' boundaries, kept by oxlint's no-restricted-imports (.oxlintrc.json): another folder of src/ only
 * through its index.ts, src/ never imports app/, app/ never imports src/cli and reaches src/ only through a folder's
 * index.ts. The project itself must lint clean, and the same rules must catch each kind of crossing in a small tree
 * made here.
 */
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const ROOT = join(import.meta.dirname, '../..');
const OXLINT = join(ROOT, 'node_modules/.bin/oxlint');
const CONFIG = join(ROOT, '.oxlintrc.json');

/** The restricted imports oxlint reports for `dirs` under `cwd` (whose .oxlintrc.json it reads), as "file: import path". */
function restricted(cwd: string, dirs: string[]): { status: number | null; found: string[] } {
  const r = spawnSync(OXLINT, ['-c', join(cwd, '.oxlintrc.json'), '-f', 'unix', ...dirs], { cwd, encoding: 'utf8' });
  const found = [...r.stdout.matchAll(/^(.+?):\d+:\d+: '([^']+)' import is restricted/gm)].map((m) => `${m[1]}: ${m[2]}`);
  return { status: r.status, found: [...new Set(found)].sort() };
}

describe('folder boundaries', () => {
  it('hold in src/ and app/', () => {
    const r = restricted(ROOT, ['src', 'app']);
    expect(r.found).toEqual([]);
    expect(r.status).toBe(0);
  });

  it('catch a deep import between folders, src importing app, and app importing src/cli or past an index.ts', () => {
    const dir = mkdtempSync(join(tmpdir(), 'retarda-lint-'));
    try {
      // The project's own rules, whose file patterns are relative to the folder of the configuration.
      copyFileSync(CONFIG, join(dir, '.oxlintrc.json'));
      mkdirSync(join(dir, 'src/a'), { recursive: true });
      mkdirSync(join(dir, 'app'), { recursive: true });
      writeFileSync(join(dir, 'src/a/one.ts'), "import { x } from '../b/deep.ts';\nimport { y } from '../b/index.ts';\nimport { z } from './near.ts';\nimport { w } from '../../app/thing.ts';\nexport const q = [x, y, z, w];\n");
      writeFileSync(join(dir, 'app/two.ts'), "import { c } from '../src/cli/main.ts';\nimport { d } from '../src/b/deep.ts';\nimport { e } from '../src/b/index.ts';\nimport { f } from './near.ts';\nexport const r = [c, d, e, f];\n");
      const r = restricted(dir, ['src', 'app']);
      // Construction: two crossings in each file; the index.ts and same-folder imports pass.
      expect(r.found).toEqual(['app/two.ts: ../src/b/deep.ts', 'app/two.ts: ../src/cli/main.ts', 'src/a/one.ts: ../../app/thing.ts', 'src/a/one.ts: ../b/deep.ts']);
      expect(r.status).not.toBe(0);
    } finally { rmSync(dir, { recursive: true, force: true }); }
  });
});
