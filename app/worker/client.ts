/**
 * The page's side of the analysis worker: typed calls that return promises, progress callbacks,
 * and cancel (the worker is stopped and a fresh one started; pending calls reject with CancelledError).
 * Decoded images live in the worker; the client sends an image's bytes again after a restart.
 */
import type { CommandName, CommandTable, ErrorInfo, PartialCommand, PartialOf, Reply, Request } from './protocol.ts';

export class AnalysisError extends Error {
  readonly hint: string;
  readonly kind: string;
  constructor(info: ErrorInfo) {
    super(info.message);
    this.name = info.name === 'InputError' ? 'InputError' : 'AnalysisError';
    this.kind = info.name;
    this.hint = info.hint;
  }
}

export class CancelledError extends Error {
  constructor() { super('stopped'); this.name = 'CancelledError'; }
}

export type ProgressFn = (stage: string, fraction: number) => void;

interface Pending { resolve(v: unknown): void; reject(e: Error): void; progress?: ProgressFn; partial?: (v: unknown) => void }

/** Source of the bytes of an image, so the client can send it again to a fresh worker. */
export interface ImageSource { key: string; name: string; page?: number; bytes(): Promise<ArrayBuffer> }

export interface ClientOptions {
  /**
   * Helper workers that compute tiles of large texture fields beside the analysing worker (one per
   * spare core is enough). They start once the analysing worker is ready; the numbers are the same
   * with or without them. Default 0.
   */
  tileHelpers?: number;
}

/** Most analysis workers one image is shared between (each holds its own copy of the images it works on). */
export const MAX_WORKERS = 4;

/**
 * Helper workers for this device: one per spare core, at most MAX_WORKERS - 1; the page address can set the
 * total with `?workers=N` (1 to MAX_WORKERS), e.g. `?workers=1` on a tablet short of memory. Anything else
 * there is ignored.
 */
export function tileHelperCount(search: string, cores: number): number {
  const asked = new URLSearchParams(search).get('workers');
  const n = asked !== null && /^\d+$/.test(asked) ? Number(asked) : NaN;
  const workers = n >= 1 && n <= MAX_WORKERS ? n : Math.min(MAX_WORKERS, Math.max(1, Math.floor(cores) || 1));
  return workers - 1;
}

export class AnalysisClient {
  private worker: Worker | null = null;
  private readyPromise: Promise<void> | null = null;
  private nextId = 1;
  private pending = new Map<number, Pending>();
  private loaded = new Set<string>();
  private helpers: AnalysisClient[] = [];
  /** Resolves with how many helpers the running worker has once they are linked (0 if none could start). */
  helpersLinked: Promise<number> = Promise.resolve(0);
  constructor(private readonly makeWorker: () => Worker, private readonly options: ClientOptions = {}) {}

  /** Resolves when the worker's analysis engine (the tensor kernel) has started; rejects with a readable message if it cannot. */
  ready(): Promise<void> {
    this.start();
    return this.readyPromise!;
  }

  private start(): Worker {
    if (this.worker) return this.worker;
    const w = this.makeWorker();
    this.worker = w;
    this.readyPromise = new Promise<void>((resolve, reject) => {
      w.onmessage = (ev: MessageEvent<Reply>) => {
        const r = ev.data;
        if (r.type === 'ready') { resolve(); return; }
        if (r.type === 'startFailed') { reject(new AnalysisError({ ...r.error, message: `the analysis engine could not start: ${r.error.message}` })); return; }
        this.settle(r);
      };
      w.onerror = (ev: ErrorEvent) => {
        ev.preventDefault();
        const message = `the analysis engine could not start or stopped unexpectedly (${ev.message || 'no details from the browser'}); reload the page`;
        const err = new AnalysisError({ name: 'WorkerFailed', message, hint: '' });
        reject(err);
        this.failAll(err);
        this.worker?.terminate();
        this.worker = null;
        this.loaded.clear();
        for (const h of this.helpers) h.dispose();
        this.helpers = [];
      };
    });
    this.readyPromise.catch(() => undefined);
    if (this.options.tileHelpers) this.helpersLinked = this.startHelpers(w, this.readyPromise, this.options.tileHelpers);
    return w;
  }

  /** Starts the helpers after the analysing worker `w` (so they do not slow its start) and links each to it. */
  private async startHelpers(w: Worker, ready: Promise<void>, count: number): Promise<number> {
    try { await ready; } catch { return 0; }
    const helpers = Array.from({ length: count }, () => new AnalysisClient(this.makeWorker));
    this.helpers = helpers;
    // Stopped (cancel) while the helpers were starting: they belong to a worker that is gone.
    const gone = () => this.worker !== w;
    let linked = 0;
    for (const h of helpers) {
      try {
        await h.ready();
        if (gone()) { h.dispose(); continue; }
        const channel = new MessageChannel();
        await h.call('serveTiles', { port: channel.port2 }, undefined, [channel.port2]);
        if (gone()) { h.dispose(); continue; }
        await this.call('linkHelper', { port: channel.port1 }, undefined, [channel.port1]);
        linked++;
      } catch (e) {
        // The analysis runs without this helper, only slower.
        h.dispose();
        console.warn(`a helper worker could not start: ${e instanceof Error ? e.message : String(e)}`);
      }
    }
    return linked;
  }

  private settle(r: Reply): void {
    const p = this.pending.get(r.id);
    if (!p) return;
    if (r.type === 'progress') { p.progress?.(r.stage, r.fraction); return; }
    if (r.type === 'partial') { p.partial?.(r.value); return; }
    this.pending.delete(r.id);
    if (r.type === 'done') p.resolve(r.value);
    else if (r.type === 'error') p.reject(new AnalysisError(r.error));
  }

  private failAll(e: Error): void {
    for (const p of this.pending.values()) p.reject(e);
    this.pending.clear();
  }

  /** Sends one command; `transfer` hands buffers over without copying. */
  call<K extends CommandName>(command: K, args: CommandTable[K]['args'], progress?: ProgressFn, transfer: Transferable[] = []): Promise<CommandTable[K]['reply']> {
    const w = this.start();
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve: resolve as (v: unknown) => void, reject, progress });
      const req: Request<K> = { id, command, args };
      w.postMessage(req, transfer);
    });
  }

  /**
   * Sends a command whose answer comes in parts: `onPartial` gets the early part (e.g. the numbers) as
   * soon as the worker has it; the promise resolves with the whole answer.
   */
  callInParts<K extends PartialCommand>(command: K, args: CommandTable[K]['args'], onPartial: (v: PartialOf<K>) => void, progress?: ProgressFn): Promise<CommandTable[K]['reply']> {
    const w = this.start();
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve: resolve as (v: unknown) => void, reject, progress, partial: onPartial as (v: unknown) => void });
      const req: Request<K> = { id, command, args };
      w.postMessage(req);
    });
  }

  /** Decodes an image in the worker (bytes transferred) and keeps it there under its key. */
  async decode(src: ImageSource, progress?: ProgressFn): Promise<CommandTable['decode']['reply']> {
    progress?.('reading the file', 0);
    const bytes = await src.bytes();
    const summary = await this.call('decode', { key: src.key, name: src.name, bytes, page: src.page }, progress, [bytes]);
    this.loaded.add(src.key);
    return summary;
  }

  /** Makes sure the worker holds the image (after a restart it has to be sent again). */
  async ensure(src: ImageSource, progress?: ProgressFn): Promise<void> {
    if (!this.loaded.has(src.key)) await this.decode(src, progress);
  }

  /** Whether the running worker holds this image. */
  holds(key: string): boolean {
    return this.loaded.has(key);
  }

  /** Stops whatever is running: the worker is ended and a new one starts on the next call. */
  cancel(): void {
    if (!this.worker) return;
    // Helpers may be in the middle of a tile of the stopped analysis: they go too, and start again with the next worker.
    for (const h of this.helpers) h.dispose();
    this.helpers = [];
    this.worker.terminate();
    this.worker = null;
    this.loaded.clear();
    this.failAll(new CancelledError());
  }

  dispose(): void {
    this.cancel();
  }
}
