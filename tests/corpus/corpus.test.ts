import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isInputError } from '../../src/common/errors.ts';
import { decodeImagePages } from '../../src/image/index.ts';
import { makeCorpus, type CorpusCase } from './makeCorpus.ts';

/**
 * The hostile corpus (makeCorpus.ts) through every subcommand that reads images, in-process through
 * the CLI's main entry in a worker thread (captured stdout / stderr / exit status; the worker is
 * stopped when a run hangs), and the decompression bombs and a 100 MB file as whole processes with
 * their peak memory measured. The contract (README, "Command line" and "Speed"): exit 0 or 2,
 * never 1 or a crash; a refusal is one plain line on stderr naming the file, with no JavaScript
 * error text; a damaged file is never analysed (exit 0 on a 'refuse' case fails); no run hangs; no
 * file takes the process past 1 GB.
 */

const ROOT = fileURLToPath(new URL('../../', import.meta.url));

/** Every subcommand that reads image files, with the options it cannot run without. */
const COMMANDS: [string, (f: string) => string[]][] = [
  ['orient', (f) => ['orient', f]],
  ['profile', (f) => ['profile', f, '--auto-walls']],
  ['plate', (f) => ['plate', f]],
  ['plate-pair', (f) => ['plate-pair', f, f]],
  ['angle-series', (f) => ['angle-series', f, f, f, f]],
  ['diameter', (f) => ['diameter', f]],
  ['calibrate', (f) => ['calibrate', f, '--division-um', '10']],
  ['series', (f) => ['series', f, f, f, f, '--interval-s', '1']],
  ['trend', (f) => ['trend', f, f, f, '--values', '1,2,3']],
];

/** JavaScript error names, engine messages and stack lines that must never reach a user. */
const JS_TEXT = /RangeError|TypeError|ReferenceError|SyntaxError|EvalError|URIError|InternalError|Invalid typed array|Invalid array length|Cannot read prop|Cannot set prop|is not a function|is not defined|is not iterable|Maximum call stack|out of bounds|undefined|\[object |\bat .*:\d+:\d+|\n\s+at /;

/** Peak memory allowed for one whole run on any file of 100 MB or less (README, "Speed"): 1 GB. */
const MAX_RSS_BYTES = 1e9;
/** A run that takes longer than this in the worker is a hang (the largest corpus file is 23 x 17 to 40 x 120 pixels). */
const HANG_MS = 60_000;

interface Run { code: number | string; out: string; err: string; ms: number }

let dir = '';
let cases: CorpusCase[] = [];
let worker: Worker;
let nextId = 0;
const pending = new Map<number, (r: Run) => void>();

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'retarda-corpus-'));
  cases = makeCorpus(dir);
  worker = new Worker(new URL('./cliWorker.mjs', import.meta.url));
  await new Promise<void>((resolve, reject) => {
    worker.once('error', reject);
    worker.on('message', (m: { ready?: boolean; id?: number } & Run) => {
      if (m.ready) resolve();
      else pending.get(m.id as number)?.(m);
    });
  });
}, 60_000);

afterAll(async () => {
  await worker?.terminate();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

/** Runs one command line in the worker; a run over HANG_MS ends the worker and reports the hang. */
function runInWorker(argv: string[]): Promise<Run> {
  const id = nextId++;
  return new Promise((resolve) => {
    const timer = setTimeout(() => {
      pending.delete(id);
      void worker.terminate();
      resolve({ code: 'hang', out: '', err: '', ms: HANG_MS });
    }, HANG_MS);
    pending.set(id, (r) => {
      clearTimeout(timer);
      pending.delete(id);
      resolve(r);
    });
    worker.postMessage({ id, argv });
  });
}

/** What is wrong with one run of one case, or '' when it keeps the contract. */
function judge(c: CorpusCase, command: string, r: Run): string {
  if (r.code !== 0 && r.code !== 2) return `exit ${r.code}: ${r.err.slice(0, 300)}`;
  if (JS_TEXT.test(r.err)) return `JavaScript text in the message: ${r.err.slice(0, 300)}`;
  const lines = r.err.split('\n').filter((l) => l !== '');
  if (r.code === 2) {
    if (lines.length !== 1 || !r.err.endsWith('\n')) return `not one line on stderr: ${JSON.stringify(r.err)}`;
    if (!lines[0].startsWith(`retarda ${command}: `)) return `stderr does not start with the command: ${lines[0]}`;
  } else {
    if (r.out.trim() === '') return 'exit 0 with nothing printed';
    if (lines.some((l) => !l.startsWith('warning: '))) return `exit 0 with a stderr line that is not a warning: ${r.err}`;
  }
  if (c.expect === 'refuse') {
    if (r.code === 0) return 'a damaged or impossible file was analysed (exit 0)';
    if (!r.err.includes(c.file)) return `refused, but the message does not name the file: ${lines[0]}`;
  }
  if (c.expect === 'read' && r.code === 2 && /is damaged|is not supported|limit of this program|left of this program/.test(r.err)) {
    return `a valid file was refused by the reader: ${lines[0]}`;
  }
  return '';
}

describe('hostile corpus (tests/corpus/makeCorpus.ts)', () => {
  it('has at least 100 files, with truncations, checksums, lying headers, huge and zero sizes, odd depths, pages and bombs', () => {
    expect(cases.length).toBeGreaterThanOrEqual(100);
    const prefixes = ['cut-', 'crc-', 'adler', 'lie-', 'huge-', 'zero-', 'odd-', 'bomb-', 'read-tif-50-pages', 'lzw-damaged'];
    for (const p of prefixes) expect(cases.filter((c) => c.file.startsWith(p)).length, p).toBeGreaterThan(0);
    expect(cases.filter((c) => c.file.startsWith('cut-')).length).toBeGreaterThanOrEqual(50);
  });

  it('the reader refuses every damaged, impossible or too large file and reads every valid one (in-process)', () => {
    const wrong: string[] = [];
    for (const c of cases) {
      let outcome = 'read';
      let message = '';
      try {
        decodeImagePages(new Uint8Array(readFileSync(join(dir, c.file))), c.file);
      } catch (e) {
        outcome = isInputError(e) ? 'refuse' : `fault (${(e as Error).name})`;
        message = (e as Error).message;
      }
      if (c.expect === 'either' ? outcome.startsWith('fault') : outcome !== c.expect) {
        wrong.push(`${c.file} (${c.why}): expected ${c.expect}, got ${outcome} ${message}`);
      }
      if (JS_TEXT.test(message)) wrong.push(`${c.file}: JavaScript text in "${message}"`);
    }
    expect(wrong).toEqual([]);
  });

  it('every file through every image subcommand keeps the CLI contract (exit 0 / 2, one plain line, no silent numbers, no hang)', async () => {
    const failures: string[] = [];
    const outcomes = { runs: 0, exit0: 0, exit2: 0 };
    for (const c of cases) {
      for (const [command, argv] of COMMANDS) {
        const r = await runInWorker(argv(join(dir, c.file)));
        outcomes.runs++;
        if (r.code === 0) outcomes.exit0++;
        if (r.code === 2) outcomes.exit2++;
        const problem = judge(c, command, r);
        if (problem) failures.push(`${command} ${c.file} (${c.why}): ${problem}`);
        if (r.code === 'hang') break;
      }
      if (failures.some((f) => f.includes('exit hang'))) break;
    }
    console.log(`corpus: ${cases.length} files, ${outcomes.runs} runs, ${outcomes.exit0} exit 0, ${outcomes.exit2} exit 2, ` +
      `${failures.length} failures`);
    expect(failures).toEqual([]);
    // The 'refuse' cases alone must give exit 2 on every subcommand (checked per run above); this
    // counts them, so the test fails if the corpus silently lost its damaged files.
    expect(outcomes.exit2).toBeGreaterThanOrEqual(cases.filter((c) => c.expect === 'refuse').length * COMMANDS.length);
  }, 300_000);
});

/** Runs a whole `retarda` process (tests/corpus/measured.mjs) and returns its status, output and peak memory. */
function runProcess(args: string[]): { code: number | null; out: string; err: string; maxRssBytes: number } {
  const rssFile = join(dir, `rss-${nextId++}.txt`);
  const r = spawnSync(process.execPath, [join(ROOT, 'tests/corpus/measured.mjs'), ...args], {
    cwd: ROOT, encoding: 'utf8', timeout: 120_000, env: { ...process.env, RETARDA_MAXRSS_FILE: rssFile, RETARDA_DEBUG: '' },
  });
  const maxRssBytes = Number(readFileSync(rssFile, 'utf8')) * 1024;
  return { code: r.status, out: r.stdout, err: r.stderr, maxRssBytes };
}

describe('whole processes: the contract and peak memory', () => {
  it('every bomb and huge header, as its own process through orient, exits as its case says and stays under 1 GB', () => {
    const bombs = cases.filter((c) => c.bomb);
    expect(bombs.length).toBeGreaterThanOrEqual(10);
    const rows: string[] = [];
    for (const c of bombs) {
      const r = runProcess(['orient', join(dir, c.file)]);
      rows.push(`${c.file}: exit ${r.code}, ${(r.maxRssBytes / 1e6).toFixed(0)} MB`);
      expect(judge(c, 'orient', { code: r.code ?? 'killed', out: r.out, err: r.err, ms: 0 }), c.file).toBe('');
      expect(r.maxRssBytes, `${c.file} peak memory`).toBeLessThan(MAX_RSS_BYTES);
    }
    console.log(`bombs as whole processes: ${rows.join('; ')}`);
  }, 180_000);

  it('a refused file in plate-pair and angle-series, and a valid YCCK JPEG in orient, keep the contract as whole processes', () => {
    const cut = cases.find((c) => c.file.startsWith('cut-png-rgb8-')) as CorpusCase;
    for (const [command, argv] of COMMANDS.filter(([n]) => n === 'plate-pair' || n === 'angle-series')) {
      const r = runProcess(argv(join(dir, cut.file)));
      expect(r.code).toBe(2);
      expect(judge(cut, command, { code: r.code ?? 'killed', out: r.out, err: r.err, ms: 0 })).toBe('');
    }
    const ycck = cases.find((c) => c.file === 'read-ycck.jpg') as CorpusCase;
    const r = runProcess(['orient', join(dir, ycck.file)]);
    expect(judge(ycck, 'orient', { code: r.code ?? 'killed', out: r.out, err: r.err, ms: 0 })).toBe('');
  }, 120_000);

  it('reading a 100 MB file (a 7071 x 7071 16-bit TIFF, 50 MP) stays under 1 GB', () => {
    // Classic little-endian TIFF, one uncompressed strip (TIFF 6.0 baseline), written here.
    const w = 7071;
    const h = 7071;
    const dataBytes = w * h * 2;
    const header = new Uint8Array(8 + 2 + 12 * 8 + 4);
    const v = new DataView(header.buffer);
    header.set([0x49, 0x49, 42, 0]);
    v.setUint32(4, 8, true);
    const entries: [number, number, number][] = [[256, 4, w], [257, 4, h], [258, 3, 16], [259, 3, 1], [262, 3, 1],
      [273, 4, header.length], [278, 4, h], [279, 4, dataBytes]];
    v.setUint16(8, entries.length, true);
    entries.forEach(([tag, type, value], k) => {
      const at = 10 + 12 * k;
      v.setUint16(at, tag, true);
      v.setUint16(at + 2, type, true);
      v.setUint32(at + 4, 1, true);
      if (type === 3) v.setUint16(at + 8, value, true);
      else v.setUint32(at + 8, value, true);
    });
    const data = new Uint8Array(dataBytes);
    for (let i = 0; i < dataBytes; i += 2) data[i + 1] = (i >> 9) & 255; // a ramp, not all zeros
    const file = join(dir, 'big-100MB.tif');
    writeFileSync(file, Buffer.concat([header, data]));
    const r = runProcess(['--decode-only', file]);
    expect(r.code, r.err).toBe(0);
    expect(r.out).toContain('7071 x 7071');
    console.log(`100 MB TIFF (50 MP, 16-bit): read in one process with peak memory ${(r.maxRssBytes / 1e6).toFixed(0)} MB`);
    expect(r.maxRssBytes).toBeLessThan(MAX_RSS_BYTES);
    rmSync(file);
  }, 120_000);
});
