/**
 * The channel's two walls as numbers the user can read and correct: each wall's end points in pixels,
 * typed over, with how well a found wall's edge points lay on its line beside it. Dragging the handles on
 * the image and typing here change the same walls.
 */
import { useState } from 'react';
import type { Channel, Segment, WallFit } from '../../src/channel/index.ts';

const text = (s: Segment) => [s.x1, s.y1, s.x2, s.y2].map((v) => v.toFixed(1)).join(', ');

function parse(t: string): Segment | null {
  const v = t.split(/[,;\s]+/).filter(Boolean).map(Number);
  return v.length === 4 && v.every(Number.isFinite) ? { x1: v[0], y1: v[1], x2: v[2], y2: v[3] } : null;
}

const fitText = (f: WallFit | undefined) =>
  f && Number.isFinite(f.residualPx) ? `found: ±${f.residualPx.toFixed(2)} px RMS, ${f.points}/${f.strips} strips` : 'drawn or typed';

export function WallsEditor({ walls, found, fit, onChange }: {
  walls: Channel; found: boolean; fit: [WallFit, WallFit] | null | undefined; onChange: (c: Channel) => void;
}) {
  // The parent gives this editor a key made of the walls, so new walls (dragged, found) start a fresh draft
  // in the same render that shows them: the inputs never show the walls before.
  const [draft, setDraft] = useState<[string, string]>([text(walls.walls[0]), text(walls.walls[1])]);
  const [bad, setBad] = useState<[boolean, boolean]>([false, false]);
  const commit = (k: 0 | 1) => {
    const s = parse(draft[k]);
    if (!s) { setBad((b) => (k === 0 ? [true, b[1]] : [b[0], true])); return; }
    if (text(s) === text(walls.walls[k])) return;
    onChange({ walls: k === 0 ? [s, walls.walls[1]] : [walls.walls[0], s] });
  };
  return (
    <table className="results compact walls-editor" data-testid="walls-editor">
      <thead><tr><th>wall</th><th>x1, y1, x2, y2 (px)</th><th title="How far the wall's edge points lay from its line, and how many strips across the channel placed one">placed</th></tr></thead>
      <tbody>
        {([0, 1] as const).map((k) => (
          <tr key={k}>
            <td>{k === 0 ? 's = −1' : 's = +1'}</td>
            <td>
              <input aria-label={`wall ${k + 1} end points`} value={draft[k]} size={26} aria-invalid={bad[k]}
                onChange={(e) => { const v = e.target.value; setDraft((d) => (k === 0 ? [v, d[1]] : [d[0], v])); }}
                onBlur={() => commit(k)} onKeyDown={(e) => { if (e.key === 'Enter') commit(k); }} />
              {bad[k] && <span className="not-determined-why"> four numbers, x1, y1, x2, y2</span>}
            </td>
            <td>{found ? fitText(fit?.[k]) : 'drawn or typed'}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
