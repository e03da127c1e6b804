/**
 * Debounced saving: changes are written a short while after the last one, never two writes at once,
 * and `flush` writes at once (called on pagehide so closing the tab keeps the last change). While changes keep
 * coming (a wall end being dragged, a number being typed) a write still starts `maxWaitMs` after the first change
 * not yet written, so a tab killed at any moment loses at most about that much work plus one write.
 */
export interface SaverOptions {
  /** Quiet time after the last change before it is written, ms (default 400). */
  delayMs?: number;
  /** Longest a change waits for its write while changes keep coming, ms (default 600). */
  maxWaitMs?: number;
  setTimer?: (fn: () => void, ms: number) => unknown;
  clearTimer?: (handle: unknown) => void;
  now?: () => number;
  onError?: (e: unknown) => void;
  onSaved?: () => void;
}

export interface Saver<T> {
  schedule(value: T): void;
  /** Writes what is waiting now; resolves when every write so far has finished (failed writes included). */
  flush(): Promise<void>;
  /** Whether a change has not been written yet. */
  dirty(): boolean;
  /** Drops the change waiting to be written (when it must not be written any more). */
  cancel(): void;
}

export function createSaver<T>(write: (value: T) => Promise<void>, o: SaverOptions = {}): Saver<T> {
  const delay = o.delayMs ?? 400;
  const maxWait = Math.max(delay, o.maxWaitMs ?? 600);
  const setTimer = o.setTimer ?? ((fn, ms) => setTimeout(fn, ms));
  const clearTimer = o.clearTimer ?? ((h) => clearTimeout(h as ReturnType<typeof setTimeout>));
  const now = o.now ?? (() => Date.now());
  let waiting: { value: T } | null = null;
  /** When the oldest change not yet handed to `write` was made. */
  let since: number | null = null;
  let timer: unknown = null;
  let chain: Promise<void> = Promise.resolve();

  const run = (): Promise<void> => {
    if (timer !== null) { clearTimer(timer); timer = null; }
    const next = waiting;
    if (!next) return chain;
    waiting = null;
    since = null;
    chain = chain.then(() => write(next.value)).then(() => o.onSaved?.(), (e) => {
      // Keep the change so the next schedule or flush tries again, unless something newer came in.
      if (!waiting) waiting = next;
      o.onError?.(e);
    });
    return chain;
  };

  return {
    schedule(value) {
      waiting = { value };
      const t = now();
      since ??= t;
      if (timer !== null) clearTimer(timer);
      timer = setTimer(() => { timer = null; void run(); }, Math.max(0, Math.min(delay, since + maxWait - t)));
    },
    flush: run,
    dirty: () => waiting !== null,
    cancel() {
      if (timer !== null) { clearTimer(timer); timer = null; }
      waiting = null;
      since = null;
    },
  };
}
