import { spawnSync } from 'node:child_process';
import { build } from 'esbuild';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { SERIES_SCALE, writeBenchImages, type BenchReading, type FreshTimes } from '../optics/benchFresh.ts';

/** One line of the bench's closing table: a figure beside its goal. */
export interface GoalRow { what: string; value: string; goal: string; met: boolean }

/** Goals for reading 12 MP images (README, "Speed"): one compensator image, the two-image reading, an angle series. */
const GOALS_S: Record<BenchReading, number> = { plate: 0.6, pair: 1.5, series: 1.0 };

/** Fresh processes per reading: the figures are the best of these. */
const PROCESSES = 2;

const ROOT = resolve(import.meta.dirname, '../..');

/**
 * tests/optics/benchFresh.ts's readings bundled into one JavaScript file, as bin/build-cli.mjs bundles the command (the
 * code a user's `retarda` runs: run through tsx, module by module, the same readings took up to a tenth longer).
 */
async function bundleChild(outfile: string): Promise<void> {
  await build({
    stdin: {
      contents: "import { timeReadings } from './tests/optics/benchFresh.ts';\nconst [dir, kind] = process.argv.slice(2);\nconsole.log(JSON.stringify(await timeReadings(dir, kind)));\n",
      resolveDir: ROOT, sourcefile: 'bench-optics-entry.ts', loader: 'ts',
    },
    outfile, bundle: true, platform: 'node', format: 'esm', target: 'node20', logLevel: 'warning',
  });
}

/** One fresh process (the bundle `child`) reading `kind` from the images in `dir`: its first and repeated reading. */
function freshProcess(child: string, dir: string, kind: BenchReading): FreshTimes {
  const r = spawnSync(process.execPath, [child, dir, kind], { encoding: 'utf8', maxBuffer: 1 << 24 });
  if (r.status !== 0) throw new Error(`benchFresh.ts ${kind} exited ${r.status}: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!) as FreshTimes;
}

/**
 * Optics part of the benchmark: each reading of 12 MP images as a user meets it, the first in a fresh process (the
 * figure held against the goal: `retarda plate-pair A B` reads once per process), and beside it the same reading
 * again in that process (its look-up tables kept; the angle series' arrays handed back, as the app's worker does).
 * Best of PROCESSES processes, the readings taking turns.
 */
export async function benchOptics(): Promise<GoalRow[]> {
  const dir = mkdtempSync(join(tmpdir(), 'retarda-bench-optics-'));
  const runs: Record<BenchReading, FreshTimes[]> = { plate: [], pair: [], series: [] };
  try {
    const child = join(dir, 'bench-optics.mjs');
    await bundleChild(child);
    writeBenchImages(dir);
    for (let p = 0; p < PROCESSES; p++) for (const kind of ['plate', 'pair', 'series'] as const) runs[kind].push(freshProcess(child, dir, kind));
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  const best = (kind: BenchReading, key: 'firstS' | 'againS') => Math.min(...runs[kind].map((r) => r[key]));
  const range = (kind: BenchReading) => runs[kind].map((r) => r.firstS.toFixed(2)).sort().join(', ');
  const mp = (kind: BenchReading) => (runs[kind][0].pixels / 1e6).toFixed(1);
  const names: Record<BenchReading, string> = {
    plate: `one compensator image (plate), ${mp('plate')} MP`, pair: `two images (plate-pair), ${mp('pair')} MP`,
    series: `angle series of four, ${mp('series')} MP${SERIES_SCALE < 1 ? ' (its pixel limit)' : ''}`,
  };
  console.log(`\noptical readings, the first in a fresh process (best of ${PROCESSES} processes: each one's first) and the same reading again in it`);
  for (const kind of ['plate', 'pair', 'series'] as const) {
    const cells = kind === 'plate' ? `  (${runs.plate[0].cells} colour cells searched)` : '';
    console.log(`  ${names[kind].padEnd(44)} first ${best(kind, 'firstS').toFixed(2)} s (${range(kind)}), again ${best(kind, 'againS').toFixed(2)} s   goal <= ${GOALS_S[kind]} s${cells}`);
  }
  return (['plate', 'pair', 'series'] as const).map((kind) => ({
    what: `${names[kind]}, first in a process`, value: `${best(kind, 'firstS').toFixed(2)} s (again ${best(kind, 'againS').toFixed(2)} s)`,
    goal: `<= ${GOALS_S[kind]} s`, met: best(kind, 'firstS') <= GOALS_S[kind],
  }));
}
