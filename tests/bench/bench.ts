/**
 * npm run bench: speed and memory of the `retarda` command and the texture pipeline, each figure printed beside
 * its goal (issue 14) and, where there is one, the ratio to native OpenCV (Debian's python3-opencv, one thread)
 * doing the same job on the same files in the same run. Figures are printed, never asserted.
 *
 *   1. start-up: `retarda --help` and `retarda orient` on a 1 MP PNG as whole processes (node on the built bin);
 *   2. `retarda orient` per image on 12 MP and 1280x720 PNG files, PNG decoding included on both sides: whole
 *      processes given 1 and N files, so start-up cancels out ((time for N - time for 1) / (N - 1), best of a few);
 *      native: tests/bench/native_orient.py; grey PNGs with the default Gaussian derivatives and with --derivative
 *      sobel, and RGB PNGs (both sides read them as grey);
 *   3. peak memory of `retarda orient` on one 12 MP PNG;
 *   4. the texture pipeline in this process (field, then a 20-bin channel profile) against native_pipeline.py;
 *   5. optical readings of 12 MP images (benchOptics.ts);
 *   6. `retarda orient` on large 16-bit grey TIFFs (written by Debian's python3-tifffile), whole processes: the
 *      peak memory on a 100 MB file (7071 x 7071, issue 12) and the time and peak on 100 megapixels (10000 x 10000).
 * The machine is shared: every time is the best of several runs, and the ratios compare runs made side by side.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { orientationField, recycleTextureField } from '../../src/orientation/index.ts';
import { channelProfile, parseWalls } from '../../src/channel/index.ts';
import { encodePng } from '../../src/report/png.ts';
import { benchOptics } from './benchOptics.ts';
import { appBench } from './app-bench.ts';
import { printGoalTable, type GoalRow } from './goalTable.ts';

const ROOT = resolve(import.meta.dirname, '../..');
const CLI = join(ROOT, 'dist/retarda.mjs');
const PY = '/usr/bin/python3';
const NATIVE_ORIENT = join(ROOT, 'tests/bench/native_orient.py');
const SIGMA = 2, SIGMA_D = 1, REPEATS = 3;
const NATIVE_ENV = { ...process.env, OMP_NUM_THREADS: '1', OPENCV_FOR_THREADS_NUM: '1' };

/** Goals of issue 14 ("Speed to the native limit"). */
const GOALS = {
  helpS: 0.3, orient1MpS: 0.5, perImageRatio: 1.2, peakMiB12Mp: 400,
  /** Issue 12: any input file of 100 MB or less within 1 GB (10^9 bytes), the whole process. */
  peakMb100MbFile: 1000,
  /** Issue 14: a 100-megapixel 16-bit TIFF in 4 s and 1.5 GB, the whole process. */
  orient100MpS: 4, peakMb100Mp: 1500,
};

const rows: GoalRow[] = [];
const fmt = (s: number) => (s < 1 ? `${(s * 1000).toFixed(s < 0.1 ? 1 : 0)} ms` : `${s.toFixed(2)} s`);

function hasNative(): boolean {
  if (!existsSync(PY)) return false;
  return spawnSync(PY, ['-c', 'import cv2, numpy'], { stdio: 'ignore' }).status === 0;
}

/** Seconds one whole process takes (it must exit 0). */
function timedRun(cmd: string, args: string[], env: NodeJS.ProcessEnv = process.env): number {
  const t0 = performance.now();
  const r = spawnSync(cmd, args, { env, stdio: ['ignore', 'pipe', 'pipe'], maxBuffer: 1 << 28 });
  const s = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
  return s;
}

const best = (n: number, f: () => number) => Math.min(...Array.from({ length: n }, f));

/** The bench's texture, as in native_orient.py (stripes whose angle swings across the height, hash noise), 8-bit. */
function scene8(width: number, height: number): Uint8Array {
  const d = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    const a = 0.5 * Math.sin((Math.PI * y) / height);
    const ca = Math.cos(a), sa = Math.sin(a);
    for (let x = 0; x < width; x++) {
      const h = Math.imul(x * 374761393 + y * 668265263, 1274126177) >>> 0;
      d[y * width + x] = Math.max(0, Math.min(255, Math.round(255 * (0.5 + 0.3 * Math.sin((2 * Math.PI * (-x * sa + y * ca)) / 7) + 0.05 * (h / 4294967296 - 0.5)))));
    }
  }
  return d;
}

/**
 * A test PNG, grey or RGB (the grey scene in all three channels): written by OpenCV's PNG writer when
 * python3-opencv is there (as a camera tool would), else by ours.
 */
function writeScenePng(path: string, width: number, height: number, native: boolean, rgb = false): void {
  if (native) execFileSync(PY, [NATIVE_ORIENT, '--write', String(width), String(height), path, ...(rgb ? ['--rgb'] : [])], { env: NATIVE_ENV });
  else {
    const grey = scene8(width, height);
    const data = rgb ? Uint8Array.from({ length: 3 * grey.length }, (_, i) => grey[(i / 3) | 0]) : grey;
    writeFileSync(path, encodePng({ width, height, channels: rgb ? 3 : 1, data }));
  }
}

function startUp(dir: string, native: boolean): void {
  console.log('\nstart-up (whole processes, node on the built bin dist/retarda.mjs; best of 5 and of 3)');
  const help = best(5, () => timedRun(process.execPath, [CLI, '--help']));
  const png1 = join(dir, 'one-mp.png');
  writeScenePng(png1, 1000, 1000, native);
  const one = best(3, () => timedRun(process.execPath, [CLI, 'orient', png1]));
  console.log(`  retarda --help                 ${fmt(help).padStart(8)}   goal <= ${fmt(GOALS.helpS)}`);
  console.log(`  retarda orient, 1 MP PNG       ${fmt(one).padStart(8)}   goal <= ${fmt(GOALS.orient1MpS)}`);
  rows.push({ what: 'retarda --help (whole process)', value: fmt(help), goal: `<= ${fmt(GOALS.helpS)}`, met: help <= GOALS.helpS });
  rows.push({ what: 'retarda orient, 1 MP PNG (whole process)', value: fmt(one), goal: `<= ${fmt(GOALS.orient1MpS)}`, met: one <= GOALS.orient1MpS });
  if (native) {
    const py = best(3, () => timedRun(PY, ['-c', 'import cv2, numpy'], NATIVE_ENV));
    console.log(`  (python3 importing cv2: ${fmt(py)})`);
  }
}

type Run = (files: string[]) => number;

/**
 * Per-image seconds of commands given 1 and `n` copies of a file: (T(n) - T(1)) / (n - 1), with T the best of
 * the runs. The commands take turns run by run, so a spell of other work on the machine falls on both.
 */
function perImage(runs: Run[], file: string, n: number, repeats: number[]): { perImageS: number; oneS: number }[] {
  const one = runs.map(() => Infinity), many = runs.map(() => Infinity);
  for (let r = 0; r < Math.max(...repeats); r++) {
    runs.forEach((run, k) => {
      if (r >= repeats[k]) return;
      one[k] = Math.min(one[k], run([file]));
      many[k] = Math.min(many[k], run(Array.from({ length: n }, () => file)));
    });
  }
  return runs.map((_, k) => ({ perImageS: (many[k] - one[k]) / (n - 1), oneS: one[k] }));
}

function orientPerImage(dir: string, native: boolean): void {
  console.log('\nretarda orient per image, PNG decoding included (whole processes given 1 and N files, taking turns with native_orient.py, one thread)');
  for (const [w, h, n] of [[4000, 3000, 4], [1280, 720, 10]]) {
    const png = join(dir, `scene-${w}x${h}.png`), rgbPng = join(dir, `scene-${w}x${h}-rgb.png`);
    writeScenePng(png, w, h, native);
    writeScenePng(rgbPng, w, h, native, true);
    for (const derivative of ['gaussian', 'sobel', 'rgb']) {
      const extra = derivative === 'sobel' ? ['--derivative', 'sobel'] : [];
      const file = derivative === 'rgb' ? rgbPng : png;
      // Python's first touch of large new memory here takes from 0.3 to 3 s of system time (transparent huge
      // pages being made), so a native 12 MP run varies threefold: it gets more runs, and the best of them.
      const repeats = [REPEATS, w * h > 5e6 ? 8 : REPEATS];
      const runs: Run[] = [(files) => timedRun(process.execPath, [CLI, 'orient', ...extra, ...files])];
      if (native) runs.push((files) => timedRun(PY, [NATIVE_ORIENT, ...extra, ...files], NATIVE_ENV));
      // Python's first touch of new memory can make its one-file run slower than its N-file run: measured again then.
      let [ours, nat] = perImage(runs, file, n, repeats);
      for (let again = 0; again < 2 && nat && !(nat.perImageS > 0); again++) [ours, nat] = perImage(runs, file, n, repeats);
      const label = `${w}x${h} ${derivative === 'sobel' ? '--derivative sobel' : derivative === 'rgb' ? 'RGB PNG' : '(default)'}`;
      let line = `  ${label.padEnd(30)} retarda ${fmt(ours.perImageS).padStart(8)}/image (1 file: ${fmt(ours.oneS)})`;
      if (nat) {
        if (!(nat.perImageS > 0) || !(ours.perImageS > 0)) {
          console.log(`${line}   native ${fmt(nat.perImageS)}/image: too noisy to compare (other work on the machine); run the bench again`);
          rows.push({ what: `orient per image ${label}`, value: 'not compared: native times too noisy', goal: `<= ${GOALS.perImageRatio}x`, met: false });
          continue;
        }
        const ratio = ours.perImageS / nat.perImageS;
        line += `   native ${fmt(nat.perImageS).padStart(8)}/image (1 file: ${fmt(nat.oneS)})   ratio ${ratio.toFixed(2)}x   goal <= ${GOALS.perImageRatio}x`;
        rows.push({ what: `orient per image ${label}`, value: `${fmt(ours.perImageS)} (native ${fmt(nat.perImageS)}) = ${ratio.toFixed(2)}x`, goal: `<= ${GOALS.perImageRatio}x`, met: ratio <= GOALS.perImageRatio });
      }
      console.log(line);
    }
  }
}

/** Seconds and peak resident memory (KiB) of one whole `retarda ARGS` process (tests/bench/maxrss.mjs). */
function measuredRun(dir: string, args: string[], env: NodeJS.ProcessEnv = {}): { s: number; kib: number } {
  const file = join(dir, 'maxrss.txt');
  const s = timedRun(process.execPath, [join(ROOT, 'tests/bench/maxrss.mjs'), CLI, ...args], { ...process.env, ...env, RETARDA_MAXRSS_FILE: file });
  return { s, kib: Number(readFileSync(file, 'utf8')) };
}

/**
 * A 16-bit grey TIFF (uncompressed, as tifffile writes by default) of the bench's scene: stripes of period 7 px
 * whose angle swings across the height, and 5 % noise. Null when python3-tifffile is not installed.
 */
function writeSceneTiff16(path: string, width: number, height: number): boolean {
  if (spawnSync(PY, ['-c', 'import tifffile, numpy'], { stdio: 'ignore' }).status !== 0) return false;
  const script = [
    'import sys, numpy as np, tifffile',
    'w, h = int(sys.argv[1]), int(sys.argv[2])',
    'y = np.arange(h, dtype=np.float32)[:, None]; x = np.arange(w, dtype=np.float32)[None, :]',
    'a = 0.5 * np.sin(np.pi * y / h)',
    'v = 0.5 + 0.3 * np.sin(2 * np.pi * (-x * np.sin(a) + y * np.cos(a)) / 7)',
    'v += 0.05 * (np.random.default_rng(1).random((h, w), dtype=np.float32) - 0.5)',
    'tifffile.imwrite(sys.argv[3], np.clip(np.round(65535 * v), 0, 65535).astype(np.uint16))',
  ].join('\n');
  execFileSync(PY, ['-c', script, String(width), String(height), path]);
  return true;
}

function largeTiffs(dir: string): void {
  console.log('\nretarda orient on large 16-bit grey TIFFs (whole processes; tifffile writes them)');
  const file100Mb = join(dir, 'scene-7071x7071-16bit.tif'), file100Mp = join(dir, 'scene-10000x10000-16bit.tif');
  if (!writeSceneTiff16(file100Mb, 7071, 7071)) {
    console.log('  python3-tifffile not found (apt-get install -y python3-tifffile): skipped');
    return;
  }
  const mb = (kib: number) => (kib * 1024) / 1e6;
  const small = measuredRun(dir, ['orient', file100Mb]);
  rmSync(file100Mb);
  console.log(`  7071x7071 (100 MB file): peak ${mb(small.kib).toFixed(0)} MB   goal <= ${GOALS.peakMb100MbFile} MB   (${fmt(small.s)})`);
  rows.push({ what: 'peak memory, orient on a 100 MB 16-bit TIFF', value: `${mb(small.kib).toFixed(0)} MB`, goal: `<= ${GOALS.peakMb100MbFile} MB`, met: mb(small.kib) <= GOALS.peakMb100MbFile });
  writeSceneTiff16(file100Mp, 10000, 10000);
  // Taking turns with one thread (RETARDA_THREADS=1; src/cli/threads.ts): the command shares the strips with a
  // worker thread when a core was free while the file was read.
  const runs: Array<{ s: number; kib: number }> = [], alone: Array<{ s: number; kib: number }> = [];
  for (let k = 0; k < REPEATS; k++) {
    runs.push(measuredRun(dir, ['orient', file100Mp]));
    alone.push(measuredRun(dir, ['orient', file100Mp], { RETARDA_THREADS: '1' }));
  }
  rmSync(file100Mp);
  const s = Math.min(...runs.map((r) => r.s)), kib = Math.max(...runs.map((r) => r.kib));
  console.log(`  10000x10000 (100 MP): ${fmt(s)} (best of ${REPEATS}; ${runs.map((r) => r.s.toFixed(2)).join(', ')} s)   goal <= ${fmt(GOALS.orient100MpS)}; peak ${mb(kib).toFixed(0)} MB   goal <= ${GOALS.peakMb100Mp} MB`);
  console.log(`    one thread in turns: ${alone.map((r) => r.s.toFixed(2)).join(', ')} s, peak ${mb(Math.max(...alone.map((r) => r.kib))).toFixed(0)} MB`);
  rows.push({ what: 'orient on a 100 MP 16-bit TIFF (whole process)', value: fmt(s), goal: `<= ${fmt(GOALS.orient100MpS)}`, met: s <= GOALS.orient100MpS });
  rows.push({ what: 'peak memory, orient on a 100 MP 16-bit TIFF', value: `${mb(kib).toFixed(0)} MB`, goal: `<= ${GOALS.peakMb100Mp} MB`, met: mb(kib) <= GOALS.peakMb100Mp });
}

function peakMemory(dir: string): void {
  const png = join(dir, 'scene-4000x3000.png');
  const mib = measuredRun(dir, ['orient', png]).kib / 1024;
  console.log(`\npeak memory of retarda orient on one 12 MP PNG: ${mib.toFixed(0)} MiB   goal <= ${GOALS.peakMiB12Mp} MiB`);
  rows.push({ what: 'peak memory, orient on one 12 MP PNG', value: `${mib.toFixed(0)} MiB`, goal: `<= ${GOALS.peakMiB12Mp} MiB`, met: mib <= GOALS.peakMiB12Mp });
}

function scene(width: number, height: number): Float32Array {
  const d8 = scene8(width, height), d = new Float32Array(width * height);
  for (let i = 0; i < d.length; i++) d[i] = d8[i] / 255;
  return d;
}

async function jsPipeline(width: number, height: number, data: Float32Array) {
  const plane = { width, height, data };
  const walls = parseWalls(`0,${0.1 * height},${width - 1},${0.1 * height};0,${0.9 * height},${width - 1},${0.9 * height}`);
  let bestT = Infinity, bestP = Infinity;
  for (let r = 0; r < REPEATS; r++) {
    const t0 = performance.now();
    const field = await orientationField(plane, { sigmaPx: SIGMA, sigmaDerivPx: SIGMA_D });
    const t1 = performance.now();
    channelProfile(field, walls, { bins: 20 });
    const t2 = performance.now();
    // Its arrays handed back for the next run, as the command line and the app's worker hand theirs back.
    recycleTextureField(field);
    bestT = Math.min(bestT, (t1 - t0) / 1000);
    bestP = Math.min(bestP, (t2 - t1) / 1000);
  }
  return { tensorS: bestT, profileS: bestP };
}

function nativePipeline(dir: string, width: number, height: number, data: Float32Array): { tensorS: number; profileS: number } {
  const raw = join(dir, 'img.f32');
  writeFileSync(raw, new Uint8Array(data.buffer, data.byteOffset, data.byteLength));
  const out = execFileSync(PY, [join(ROOT, 'tests/bench/native_pipeline.py'), raw, String(width), String(height), String(SIGMA), String(SIGMA_D), String(REPEATS)], { env: NATIVE_ENV, encoding: 'utf8' });
  return JSON.parse(out.trim().split('\n').pop()!);
}

async function inProcess(dir: string, native: boolean): Promise<void> {
  console.log('\ntexture pipeline in this process (field: tensor, coherency, strength, mask; then a 20-bin channel profile; best of 3;\n  native_pipeline.py\'s profile is the bins\' weighted means only, retarda\'s adds each bin\'s, the core\'s and the skin\'s interval)');
  for (const [w, h] of [[4000, 3000], [1280, 720], ...(process.env.RETARDA_BENCH_BIG ? [[10000, 10000]] : [])]) {
    const data = scene(w, h);
    const js = await jsPipeline(w, h, data);
    let line = `  ${`${w}x${h}`.padEnd(12)} retarda field ${fmt(js.tensorS)}, profile ${fmt(js.profileS)}`;
    if (native) {
      const nat = nativePipeline(dir, w, h, data);
      line += `   native field ${fmt(nat.tensorS)}, profile ${fmt(nat.profileS)}   ratio field ${(js.tensorS / nat.tensorS).toFixed(2)}x, total ${((js.tensorS + js.profileS) / (nat.tensorS + nat.profileS)).toFixed(2)}x`;
    }
    console.log(line);
  }
}

async function main() {
  // The bench times the command as built from the sources now.
  execFileSync(process.execPath, [join(ROOT, 'bin/build-cli.mjs')], { stdio: 'inherit' });
  const native = hasNative();
  if (!native) console.log('python3-opencv not found (apt-get install -y python3-opencv): no native ratios, and the PNGs are written by retarda');
  const dir = mkdtempSync(join(tmpdir(), 'retarda-bench-'));
  try {
    startUp(dir, native);
    orientPerImage(dir, native);
    peakMemory(dir);
    largeTiffs(dir);
    await inProcess(dir, native);
    rows.push(...await benchOptics());
    // The app in headless Chromium (tests/bench/app-bench.ts; RETARDA_BENCH_APP=0 leaves it out).
    if (process.env.RETARDA_BENCH_APP !== '0') rows.push(...await appBench());
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  printGoalTable(rows);
}

await main();
