import { availableParallelism, cpus } from 'node:os';
import { isMainThread, parentPort, Worker, workerData } from 'node:worker_threads';
import type { Plane } from '../common/index.ts';
import { greyTiffRows } from '../image/index.ts';
import { surveyStrip, tensorHaloPx, type PlaneRows, type StructureTensorOptions } from '../orientation/index.ts';
import { sumsStrip, type StripHelper, type StripSharing, type SumsJob, type SurveyJob } from '../order/index.ts';

/**
 * The command's second core: a large image's texture field streams in horizontal strips, shared between this
 * thread and worker threads (node:worker_threads) running this same file (streamedOrderParameters: the same
 * numbers to the bit as one thread). Only images streamed for their numbers (more than HELD_FIELD_MAX_PIXELS,
 * 24 MP) are shared, where a worker's start (about 0.1 s) is small beside the work. Node-only; the core in
 * src/ only sees StripHelper.
 */

/**
 * Environment variable setting the threads `retarda orient` uses for a large image: `1` keeps it to one thread
 * (the same numbers, to the bit), `2` and more use that many (at most MAX_THREADS); unset, one per core when a
 * core was free while the image was read (watchIdleCores), else one.
 */
export const THREADS_ENV = 'RETARDA_THREADS';

/** Environment variable: when `1`, the command says on stderr how many strips its worker threads computed (for tests). */
export const THREADS_REPORT_ENV = 'RETARDA_THREADS_REPORT';

/** Threads at most (this one and its workers); more were not measured (the machines here have two cores). */
const MAX_THREADS = 4;

/** Where a worker reads the image's rows: the grey TIFF's file bytes (shared, not copied), or crops sent with each job. */
type RowsFrom = { tiff: Uint8Array; name: string } | { plane: Plane };

/** What a worker is started with. */
interface StripWorkerData { retardaStrips: true; tiff: Uint8Array | null; name: string }

/** A job as posted to a worker: the rows of a held plane it needs come with it ([top, top + rows) of the image). */
type StripMessage = { id: number; kind: 'survey'; job: SurveyJob; crop: Crop | null } | { id: number; kind: 'sums'; job: SumsJob; crop: Crop | null };
interface Crop { width: number; height: number; top: number; data: Float32Array }

/** THREADS_ENV as a whole number from 1, or null when not given so. */
function threadsGiven(env: NodeJS.ProcessEnv): number | null {
  const given = env[THREADS_ENV]?.trim();
  return given !== undefined && /^\d+$/.test(given) ? Math.max(1, Number(given)) : null;
}

/** The threads to use at most: THREADS_ENV if given (a whole number from 1), else one per core; at most MAX_THREADS. */
export function threadCount(env: NodeJS.ProcessEnv = process.env): number {
  return Math.min(MAX_THREADS, threadsGiven(env) ?? availableParallelism());
}

/** Total idle time of the machine's cores so far (ms), or null where the system does not say. */
function idleMs(): number | null {
  const all = cpus();
  return all.length > 0 ? all.reduce((sum, c) => sum + c.times.idle, 0) : null;
}

/**
 * Starts watching how idle the machine's cores are (os.cpus() idle times). `freeCores()` is then the cores
 * idle on average since (Infinity when the system does not say, or too little time passed to tell).
 */
export function watchIdleCores(): { freeCores: () => number } {
  const t0 = performance.now(), idle0 = idleMs();
  return {
    freeCores() {
      const dt = performance.now() - t0, idle1 = idleMs();
      return idle0 === null || idle1 === null || dt < MIN_WATCH_MS ? Infinity : (idle1 - idle0) / dt;
    },
  };
}

/** Shortest watch that tells idle cores (the system counts idle time in steps of 10 ms). */
const MIN_WATCH_MS = 50;

/**
 * Cores that must have been idle, on average, while the image was read, for workers to be started when
 * THREADS_ENV is not given: on this project's 2-core machines, with both cores busy with other programs, a
 * second thread got no more time and cost 15 % more work (worker start, halos, shared caches), so the command
 * was 10-40 % slower than alone; with a core free it was about 1.45 times quicker (README "Speed").
 */
const FREE_CORES_FOR_WORKERS = 0.5;

/** This file as the bundled command (dist/retarda.mjs), or null when run from its TypeScript source (no workers then). */
function workerScript(): URL | null {
  const url = new URL(import.meta.url);
  return /\.m?js$/.test(url.pathname) ? url : null;
}

/** The rows of a crop posted with a job, as rows of the whole image (only the crop's may be read). */
function cropRows(c: Crop): PlaneRows {
  const rows = c.data.length / c.width;
  return {
    width: c.width, height: c.height,
    readRow(y, x, w, out) {
      if (y < c.top || y >= c.top + rows) throw new Error(`row ${y} is not in the strip sent (rows ${c.top} to ${c.top + rows - 1})`);
      const at = (y - c.top) * c.width + x;
      out.set(c.data.subarray(at, at + w));
    },
  };
}

/** The rows y0 - halo to y1 + halo of a held plane, copied to be sent. */
function cropFor(plane: Plane, y0: number, y1: number, tensor: Required<StructureTensorOptions>): Crop {
  const halo = tensorHaloPx(tensor), top = Math.max(0, y0 - halo), bottom = Math.min(plane.height, y1 + halo);
  return { width: plane.width, height: plane.height, top, data: plane.data.slice(top * plane.width, bottom * plane.width) };
}

/**
 * Starts the helpers for one image (threadCount() - 1 workers) and returns the sharing to hand to
 * streamedOrderParameters, and `close` to end the workers afterwards. Undefined when only one thread is to
 * be used, when THREADS_ENV is not given and `idle` (watched while the image was read) saw less than
 * FREE_CORES_FOR_WORKERS cores free, or when workers cannot be started here (then one thread does it all: the
 * same numbers).
 */
export function startStripSharing(from: RowsFrom, idle?: { freeCores: () => number }): { sharing: StripSharing; close: () => void } | undefined {
  const threads = threadCount(), script = workerScript();
  if (threads < 2 || !script || !isMainThread) return undefined;
  if (threadsGiven(process.env) === null && idle && idle.freeCores() < FREE_CORES_FOR_WORKERS) return undefined;
  const tiff = 'tiff' in from ? from.tiff : null;
  if (tiff && !(tiff.buffer instanceof SharedArrayBuffer)) return undefined;
  const workers: Worker[] = [];
  const helpers: StripHelper[] = [];
  const answered = { strips: 0 };
  try {
    for (let k = 1; k < threads; k++) {
      const data: StripWorkerData = { retardaStrips: true, tiff, name: 'tiff' in from ? from.name : '' };
      // Not unref'd: while this thread waits for a worker's answer, the worker is what keeps the command alive
      // (close ends it).
      const worker = new Worker(script, { workerData: data, stdout: true, stderr: true });
      workers.push(worker);
      helpers.push(helperFor(worker, 'plane' in from ? from.plane : null, answered));
    }
  } catch {
    for (const w of workers) void w.terminate();
    return undefined;
  }
  return {
    sharing: { helpers, threads },
    close: () => {
      for (const w of workers) void w.terminate();
      if (process.env[THREADS_REPORT_ENV] === '1') process.stderr.write(`retarda: ${workers.length} worker thread(s) computed ${answered.strips} strip(s)\n`);
    },
  };
}

/** A StripHelper that posts each job to `worker`: it rejects every job once the worker has failed or ended. */
function helperFor(worker: Worker, plane: Plane | null, answered: { strips: number }): StripHelper {
  let next = 0, broken: Error | null = null;
  const waiting = new Map<number, { resolve: (part: never) => void; reject: (e: Error) => void }>();
  const fail = (e: Error) => {
    broken ??= e;
    for (const w of waiting.values()) w.reject(e);
    waiting.clear();
  };
  worker.on('message', (m: { id: number; part?: never; error?: string }) => {
    const w = waiting.get(m.id);
    if (!w) return;
    waiting.delete(m.id);
    if (m.error !== undefined) w.reject(new Error(m.error));
    else {
      answered.strips++;
      w.resolve(m.part as never);
    }
  });
  worker.on('error', (e) => fail(e instanceof Error ? e : new Error(String(e))));
  worker.on('exit', () => fail(new Error('the strip worker ended')));
  const post = <T>(kind: 'survey' | 'sums', job: SurveyJob | SumsJob, tensor: Required<StructureTensorOptions>): Promise<T> => {
    if (broken) return Promise.reject(broken);
    const id = next++;
    const crop = plane ? cropFor(plane, job.y0, job.y1, tensor) : null;
    const message = { id, kind, job, crop } as StripMessage;
    return new Promise<T>((resolve, reject) => {
      waiting.set(id, { resolve: resolve as (part: never) => void, reject });
      worker.postMessage(message, crop ? [crop.data.buffer as ArrayBuffer] : []);
    });
  };
  return {
    survey: (job) => post('survey', job, job.tensor),
    sums: (job) => post('sums', job, job.survey.tensor),
  };
}

/** Whether this thread is a strip worker (started by startStripSharing), which serveStrips must run. */
export function isStripWorker(): boolean {
  return !isMainThread && (workerData as Partial<StripWorkerData> | null)?.retardaStrips === true;
}

/** A strip worker's loop: computes each job posted to it, one at a time (they share the kernel's memory). */
export function serveStrips(): void {
  const data = workerData as StripWorkerData, port = parentPort!;
  const rows = data.tiff ? greyTiffRows(data.tiff, data.name)?.rows ?? null : null;
  let chain = Promise.resolve();
  port.on('message', (m: StripMessage) => {
    chain = chain.then(async () => {
      try {
        const plane = m.crop ? cropRows(m.crop) : rows;
        if (!plane) throw new Error('no rows to read');
        if (m.kind === 'survey') {
          const part = await surveyStrip(plane, m.job.tensor, m.job.plan, m.job.y0, m.job.y1);
          const layers = [part.grid, ...part.rows, ...part.columns].flatMap((l) => [l.strength, l.confidence, l.cos2, l.sin2]);
          port.postMessage({ id: m.id, part }, [part.sample, ...layers].map((a) => a.buffer as ArrayBuffer));
        } else {
          const part = await sumsStrip(plane, m.job);
          const arrays = part.lists.flatMap((l) => [l.w, l.wc, l.ws, l.n, l.bx, l.by]);
          port.postMessage({ id: m.id, part }, [part.tallies, ...arrays].map((a) => a.buffer as ArrayBuffer));
        }
      } catch (e) {
        port.postMessage({ id: m.id, error: e instanceof Error ? e.message : String(e) });
      }
    });
  });
}
