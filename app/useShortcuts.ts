/**
 * The keyboard shortcuts (the help panel lists them): a key does what its button does. Keys typed into a field, and
 * keys with Ctrl, Cmd or Alt, are left alone; while an analysis runs only Esc counts.
 */
import { useEffect, useRef } from 'react';

export interface Shortcuts {
  /** Esc: stop the running analysis and close what is open. */
  escape(): void;
  /** Whether an analysis is running, and whether the image screen (with an image) is shown. */
  busy: boolean;
  imagesShown: boolean;
  hasImage: boolean;
  /** Key (lower case, or the character) to what it does. */
  actions: Record<string, (shift: boolean) => void>;
}

/** Keys that work without an image: add images (I), sessions (S), help (?). */
const WITHOUT_IMAGE = 'is?';

export function useShortcuts(s: Shortcuts) {
  const current = useRef(s);
  current.current = s;
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      const t = e.target as HTMLElement;
      if (t.closest('input, textarea, select, [contenteditable]') || e.ctrlKey || e.metaKey || e.altKey) return;
      const c = current.current;
      const k = e.key;
      if (k === 'Escape') { c.escape(); return; }
      if (c.busy || !c.imagesShown) return;
      const a = c.actions[k.toLowerCase()] ?? c.actions[k];
      if (a && (c.hasImage || WITHOUT_IMAGE.includes(k))) { e.preventDefault(); a(e.shiftKey); }
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, []);
}
