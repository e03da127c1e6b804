/** The images of the session: choose the one shown, remove one, add more. */
import { LampCaution } from '../components/Cautions.tsx';
import type { Workspace } from './workspace.ts';

export function ImageList({ w }: { w: Workspace }) {
  const { session, keeping, change, store } = w.sessions;
  if (!session) return null;
  const remove = (id: string) => {
    const writes = keeping.writes(session.id);
    change({ type: 'removeImage', id });
    // The session is written without the image first, then its bytes go (never a session listing missing bytes).
    if (writes) void keeping.flush().then((done) => { if (done) void store.removeImage(id); });
    w.analysis.client.call('forget', { key: id }).catch(() => undefined);
  };
  return (
    <aside className="images" aria-label="Images in this session">
      <h2>Images</h2>
      <ul>
        {session.images.map((m) => (
          <li key={m.id} className={m.id === session.activeImageId ? 'current' : ''}>
            <button onClick={() => change({ type: 'select', id: m.id })} title={m.name}><NameParts name={m.name} /></button>
            <WorkMarks orient={!!session.work[m.id]?.orient} profile={!!session.work[m.id]?.profile} />
            <button className="quiet small" aria-label={`Remove ${m.name} from the session`} onClick={() => remove(m.id)}>×</button>
          </li>
        ))}
      </ul>
      <button onClick={w.intake.chooseFiles}>Add images…</button>
      <LampCaution />
    </aside>
  );
}

/** Longest end of a name always shown: where a set's names differ (kestrel-angle-00.0deg.png, ...-22.5deg.png). */
const NAME_TAIL = 12;

/**
 * The end of a name kept in view: from its last word (after the last -, _ or space) when that is short enough,
 * else its last NAME_TAIL characters.
 */
function nameTail(name: string): string {
  const cut = Math.max(name.lastIndexOf('-'), name.lastIndexOf('_'), name.lastIndexOf(' ')) + 1;
  return cut > 0 && name.length - cut <= NAME_TAIL ? name.slice(cut) : name.slice(-NAME_TAIL);
}

/** A file name cut in the middle when the list is narrow: its start may give way to an ellipsis, its end never does. */
function NameParts({ name }: { name: string }) {
  const tail = nameTail(name);
  if (name.length <= tail.length + 4) return <>{name}</>;
  return (
    <span className="name-parts">
      <span className="name-head">{name.slice(0, -tail.length)}</span>
      <span className="name-tail">{tail}</span>
    </span>
  );
}

/** What the image's kept work holds, as short marks with their meaning on hover and for screen readers. */
function WorkMarks({ orient, profile }: { orient: boolean; profile: boolean }) {
  const said = [orient && 'orientation analysed', profile && 'channel profiled'].filter(Boolean).join(', ');
  return <span className="marks" title={said || undefined} aria-label={said || undefined}>{orient ? 'O' : ''}{profile ? 'P' : ''}</span>;
}
