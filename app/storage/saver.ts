/**
 * Debounced saving: changes are written a short while after the last one, never two writes at once,
 * and `flush` writes at once (called on pagehide so closing the tab keeps the last change).
 */
export interface SaverOptions {
  delayMs?: number;
  setTimer?: (fn: () => void, ms: number) => unknown;
  clearTimer?: (handle: unknown) => void;
  onError?: (e: unknown) => void;
  onSaved?: () => void;
}

export interface Saver<T> {
  schedule(value: T): void;
  /** Writes what is waiting now; resolves when every write so far has finished. */
  flush(): Promise<void>;
  /** Whether a change has not been written yet. */
  dirty(): boolean;
}

export function createSaver<T>(write: (value: T) => Promise<void>, o: SaverOptions = {}): Saver<T> {
  const delay = o.delayMs ?? 400;
  const setTimer = o.setTimer ?? ((fn, ms) => setTimeout(fn, ms));
  const clearTimer = o.clearTimer ?? ((h) => clearTimeout(h as ReturnType<typeof setTimeout>));
  let waiting: { value: T } | null = null;
  let timer: unknown = null;
  let chain: Promise<void> = Promise.resolve();

  const run = (): Promise<void> => {
    if (timer !== null) { clearTimer(timer); timer = null; }
    const next = waiting;
    if (!next) return chain;
    waiting = null;
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
      if (timer !== null) clearTimer(timer);
      timer = setTimer(() => { timer = null; void run(); }, delay);
    },
    flush: run,
    dirty: () => waiting !== null,
  };
}
