/**
 * Order numbers the data do not determine: the reason the analysis gave (`notDetermined.order`), split into its
 * parts, and the one-click remedies that would determine them (draw the sample-free area, enter the sample
 * retardance, read a plate pair instead). Shown in one cell beside every withheld number of a table.
 */
import { NOT_DETERMINED } from '../../src/analyses/index.ts';
import { screenWords } from '../screenWords.ts';

/** What the user can do about a one-image reading's withheld numbers. */
export type Remedy = 'background' | 'retardance' | 'axis' | 'platePair';

/**
 * The parts of a joined reason. The analysis joins its gaps with "; " and each gap names what is missing first
 * (src/analyses/optics.ts oneImageGaps); a reason in other words stays one part.
 */
export function reasonParts(why: string): string[] {
  return why.split(/; (?=no sample-free area|the sample retardance|the (?:channel )?axis \()/).map((s) => s.trim()).filter(Boolean);
}

/**
 * The remedies a reason calls for: the sample-free area and the sample retardance when they are named as missing,
 * the reference axis when the whole field's axis (not a channel's, which the walls give) is off the compensator;
 * a plate pair always helps.
 */
export function remediesFor(why: string): Remedy[] {
  const parts = reasonParts(why);
  return [
    ...(parts.some((p) => p.startsWith('no sample-free area')) ? ['background' as const] : []),
    ...(parts.some((p) => p.startsWith('the sample retardance')) ? ['retardance' as const] : []),
    ...(parts.some((p) => p.startsWith('the axis (')) ? ['axis' as const] : []),
    'platePair',
  ];
}

const REMEDY_LABEL: Record<Remedy, string> = {
  background: 'Draw the sample-free area',
  retardance: 'Enter the sample retardance',
  axis: 'Enter the channel axis',
  platePair: 'Use a plate pair instead',
};

/** The value cell of a withheld number (keeps the number's test id). */
export function WithheldCell({ testId }: { testId: string }) {
  return <td data-testid={testId} className="not-determined">{NOT_DETERMINED}</td>;
}

/**
 * The first clause of a reason part, what is missing, e.g. "no sample-free area" or "the sample retardance is not
 * known": the text before the first ":", ";", ", so ", ", where " or ", and " outside parentheses.
 */
export function headline(part: string): string {
  let depth = 0;
  for (let i = 0; i < part.length; i++) {
    const c = part[i];
    if (c === '(') depth++;
    else if (c === ')') depth = Math.max(0, depth - 1);
    else if (depth === 0 && (c === ':' || c === ';' || /^, (?:so|where|and) /.test(part.slice(i, i + 8)))) return part.slice(0, i).trim();
  }
  return part.trim();
}

/**
 * What is missing, in short, in a cell spanning the rows of the withheld numbers (so it sits beside each of them,
 * in the interval column); the full reason and the remedies follow in `WithheldRemedies`.
 */
export function WithheldWhy({ why, rows, testId }: { why: string; rows: number; testId?: string }) {
  const parts = reasonParts(why);
  return (
    <td rowSpan={rows} className="not-determined-why" data-testid={testId}>
      {parts.length === 1 ? screenWords(headline(parts[0])) : <ul>{parts.map((p) => <li key={p}>{screenWords(headline(p))}</li>)}</ul>}
    </td>
  );
}

/** A table row right under the withheld numbers: the one-click remedies and the reason in full. */
export function WithheldRemedies({ why, onRemedy }: { why: string; onRemedy?: (r: Remedy) => void }) {
  const parts = reasonParts(why);
  return (
    <tr className="not-determined-remedies">
      <td colSpan={3}>
        {onRemedy && (
          <span className="remedies">
            <span>To determine them:</span>
            {remediesFor(why).map((r) => <button key={r} className="small" data-testid={`remedy-${r}`} onClick={() => onRemedy(r)}>{REMEDY_LABEL[r]}</button>)}
          </span>
        )}
        <details>
          <summary>Why, in full</summary>
          <ul>{parts.map((p) => <li key={p}>{screenWords(p)}</li>)}</ul>
        </details>
      </td>
    </tr>
  );
}
