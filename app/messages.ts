/** The notes the page shows under its header: short-lived information and errors that stay until dismissed. */
import { useCallback, useRef, useState } from 'react';
import { screenWords } from './screenWords.ts';

export interface Message { id: number; kind: 'error' | 'info'; text: string; action?: { label: string; run(): void } }

/** What a part of the app calls to tell the user something. */
export type Say = (kind: Message['kind'], text: string, action?: Message['action']) => void;

export function useMessages() {
  const [messages, setMessages] = useState<Message[]>([]);
  const next = useRef(0);
  const say: Say = useCallback((kind, text, action) => {
    const id = ++next.current;
    text = screenWords(text);
    // One short-lived note at a time; errors stay until dismissed (the last four are kept).
    setMessages((m) => [...m.filter((x) => x.kind === 'error').slice(-3), ...m.filter((x) => x.kind === 'info' && kind === 'error'), { id, kind, text, action }]);
    if (kind === 'info') setTimeout(() => setMessages((m) => m.filter((x) => x.id !== id)), 5000);
  }, []);
  const dismiss = useCallback((id: number) => setMessages((l) => l.filter((x) => x.id !== id)), []);
  return { messages, say, dismiss };
}
