/**
 * Which tab works on which session, with the Web Locks API (W3C Web Locks API: `navigator.locks`, shared by
 * every tab and worker of the origin, and let go by the browser when a tab closes or crashes). The tab that
 * opens a session first holds its lock for as long as the session is open there; another tab that opens it
 * finds the lock taken and writes nothing (it is told, and offered a copy). Without Web Locks every claim
 * succeeds and the revision check of the store's `save` still keeps one tab from overwriting another.
 */

/** The part of the Web Locks API used here (navigator.locks). */
export interface LockManagerLike {
  request(name: string, options: { ifAvailable?: boolean; mode?: 'exclusive' | 'shared' }, callback: (lock: unknown) => unknown): Promise<unknown>;
  query?(): Promise<{ held?: { name?: string }[] }>;
}

/** The lock's name for a session. */
export const sessionLockName = (id: string): string => `retarda-session:${id}`;

export interface SessionLocks {
  /** Takes the session for this tab if no other tab holds it; true when this tab holds it (now or already). */
  claim(id: string): Promise<boolean>;
  /** Lets go of the session (nothing when this tab does not hold it). */
  release(id: string): void;
  /** Whether another tab holds the session now. */
  heldElsewhere(id: string): Promise<boolean>;
}

export function sessionLocks(locks: LockManagerLike | undefined | null): SessionLocks {
  /** The sessions this tab holds, each with the function that lets its lock go. */
  const mine = new Map<string, () => void>();
  /** Claims under way: a second claim of the same session while the first waits for the lock shares its answer
   * (React's development mode runs the opening effect twice, and the second claim found the first one's lock). */
  const pending = new Map<string, Promise<boolean>>();
  const take = (id: string) => new Promise<boolean>((resolve, reject) => {
    if (!locks) { resolve(true); return; }
    locks.request(sessionLockName(id), { ifAvailable: true, mode: 'exclusive' }, (lock) => {
      if (!lock) { resolve(false); return undefined; }
      // Held until release: the lock lasts as long as the promise returned here is pending.
      return new Promise<void>((free) => { mine.set(id, free); resolve(true); });
    }).catch(reject);
  });
  return {
    claim(id) {
      if (mine.has(id)) return Promise.resolve(true);
      const under = pending.get(id);
      if (under) return under;
      const p = take(id).finally(() => pending.delete(id));
      pending.set(id, p);
      return p;
    },
    release(id) {
      const free = mine.get(id);
      mine.delete(id);
      free?.();
    },
    async heldElsewhere(id) {
      if (mine.has(id) || !locks?.query) return false;
      const state = await locks.query();
      return (state.held ?? []).some((l) => l.name === sessionLockName(id));
    },
  };
}
