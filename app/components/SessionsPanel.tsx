/** Every session kept on this device: open, rename, duplicate, delete; back up and restore everything. */
import { useRef, useState } from 'react';
import type { SessionSummary } from '../storage/index.ts';
import { keepingWords, type StorageState } from '../storage/persistence.ts';

interface Props {
  sessions: SessionSummary[];
  currentId: string | null;
  asideCount: number;
  /** Whether the browser keeps the sessions until they are deleted, and the space used; null until known. */
  storage: StorageState | null;
  onOpen(id: string): void;
  onNew(): void;
  onRename(id: string, name: string): void;
  onDuplicate(id: string): void;
  onDelete(id: string): void;
  onBackup(): void;
  onRestore(file: File): void;
  onClose(): void;
}

export function SessionsPanel(p: Props) {
  const [editing, setEditing] = useState<string | null>(null);
  const [draft, setDraft] = useState('');
  const [confirm, setConfirm] = useState<string | null>(null);
  const file = useRef<HTMLInputElement>(null);
  const keeping = p.storage ? keepingWords(p.storage) : null;
  return (
    <section className="sessions" aria-label="Saved sessions">
      <header className="sessions-head">
        <h2>Saved sessions</h2>
        <button onClick={p.onNew}>New session</button>
        <button onClick={p.onBackup} title="One file with every session and image">Save a backup</button>
        <button onClick={() => file.current?.click()}>Restore from a backup…</button>
        <input ref={file} type="file" accept=".json,application/json" hidden data-testid="restore-input"
          onChange={(e) => { const f = e.target.files?.[0]; if (f) p.onRestore(f); e.target.value = ''; }} />
        <button className="quiet" onClick={p.onClose} aria-label="Close the session list">Close</button>
      </header>
      <p className="note">Sessions are saved on this device as you work. A backup file is the way to move them to another device or keep them safe.</p>
      {keeping && (
        <p className={`note${keeping.kept ? '' : ' warn'}`} data-testid="storage-kept" data-kept={String(keeping.kept)}>
          {keeping.text}{keeping.space && <> {keeping.space}</>}
        </p>
      )}
      {p.asideCount > 0 && <p className="note warn">{p.asideCount} stored record(s) could not be read and were kept aside unchanged; they are included in backups.</p>}
      {p.sessions.length === 0 ? <p>No sessions yet. Bring in an image to start one.</p> : (
        <ul className="session-list">
          {p.sessions.map((s) => (
            <li key={s.id} className={s.id === p.currentId ? 'current' : ''}>
              {editing === s.id ? (
                <form onSubmit={(e) => { e.preventDefault(); p.onRename(s.id, draft); setEditing(null); }}>
                  <input autoFocus value={draft} onChange={(e) => setDraft(e.target.value)} aria-label="New name" />
                  <button type="submit">Keep name</button>
                  <button type="button" className="quiet" onClick={() => setEditing(null)}>Cancel</button>
                </form>
              ) : (
                <>
                  <button className="session-open" onClick={() => p.onOpen(s.id)}>
                    <span className="session-name">{s.name}</span>
                    <span className="session-meta">{s.imageCount} image(s), {s.analysed} analysed · changed {new Date(s.updatedAt).toLocaleString()}</span>
                  </button>
                  <span className="session-actions">
                    <button className="quiet" onClick={() => { setEditing(s.id); setDraft(s.name); }}>Rename</button>
                    <button className="quiet" onClick={() => p.onDuplicate(s.id)}>Duplicate</button>
                    {confirm === s.id
                      ? <><button className="danger" onClick={() => { p.onDelete(s.id); setConfirm(null); }}>Delete for good</button><button className="quiet" onClick={() => setConfirm(null)}>Keep</button></>
                      : <button className="quiet" onClick={() => setConfirm(s.id)}>Delete…</button>}
                  </span>
                </>
              )}
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}
