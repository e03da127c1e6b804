/**
 * Against a variable: the session's images spun under different conditions, each with the variable's value (draw
 * ratio, dope concentration, bath temperature, ...) and its reading (whole-image S, core S, skin S, core/skin or the
 * fibre diameter, as kept with the image), plotted with 95 % intervals and a weighted straight line whose slope and
 * intercept carry 95 % intervals, or "not determined" with why (`retarda trend`, docs/methods.md §19). The form is
 * kept with the session; the numbers are remade from it at once (no worker: the readings are already there).
 */
import { useEffect, useMemo, useState } from 'react';
import { NOT_DETERMINED, TREND_READINGS, TREND_READING_WORDS, TREND_SOURCE, readingOf, type TrendResult } from '../../src/analyses/index.ts';
import { formatCell } from '../../src/report/index.ts';
import { download } from '../export/rows.ts';
import { Undetermined, Warnings } from '../components/Results.tsx';
import type { Workspace } from '../screens/workspace.ts';
import { TrendPlot } from './TrendPlot.tsx';
import { documentOf, emptyTrendForm, readingTitle, trendCsv, trendLine, trendOf, type TrendForm, type TrendLine } from './trendForm.ts';

const f = (v: number | null | undefined) => formatCell(v ?? null);
const READING_HINT: Record<string, string> = {
  whole: 'from "Analyse orientation" on each image', core: 'from "Profile across the channel"', skin: 'from "Profile across the channel"',
  'core-skin': 'from "Profile across the channel"', diameter: 'from More analyses, "Fibre diameter"',
};

/** The answer in one sentence: the direction with the slope and its interval, or why there is no line. */
function Verdict({ r }: { r: TrendResult }) {
  const fit = r.fit, nd = r.notDetermined ?? {};
  const per = `per ${r.variable.unit || `unit of ${r.variable.name}`}`;
  const what = TREND_READING_WORDS[r.reading];
  const text = nd.slope ? `No line: ${nd.slope}.`
    : fit.direction === 'no clear trend'
      ? `No clear trend: ${what} neither rises nor falls with ${r.variable.name} beyond its 95 % interval (slope ${f(fit.slope)} ${per}, 95 %: ${f(fit.slopeCiLow)} to ${f(fit.slopeCiHigh)}).`
      : `${what[0].toUpperCase()}${what.slice(1)} ${fit.direction} with ${r.variable.name}: ${f(fit.slope)} ${r.readingUnit === 'um' ? 'µm ' : r.readingUnit === 'px' ? 'px ' : ''}${per} (95 %: ${f(fit.slopeCiLow)} to ${f(fit.slopeCiHigh)}).`;
  return <p className={`trend-verdict${nd.slope ? ' open' : ''}`} data-testid="trend-verdict">{text}</p>;
}

/** Slope and intercept with their intervals, or "not determined" with why beside them; the fit's chi-square. */
function FitTable({ r }: { r: TrendResult }) {
  const fit = r.fit, nd = r.notDetermined ?? {};
  const unit = r.readingUnit === 'um' ? 'µm' : r.readingUnit === 'px' ? 'px' : '';
  return (
    <table className="results" data-testid="trend-results">
      <tbody>
        <tr><th scope="row">Slope</th>
          <Undetermined why={nd.slope} testId="trend-slope">{f(fit.slope)}</Undetermined>
          {!nd.slope && <td data-testid="trend-slope-ci">95 %: {f(fit.slopeCiLow)} – {f(fit.slopeCiHigh)} {unit ? `${unit} ` : ''}per {r.variable.unit || 'unit'}</td>}</tr>
        <tr><th scope="row">Intercept</th>
          <Undetermined why={nd.intercept && (nd.intercept === nd.slope ? 'as for the slope' : nd.intercept)} testId="trend-intercept">{f(fit.intercept)}</Undetermined>
          {!nd.intercept && <td>95 %: {f(fit.interceptCiLow)} – {f(fit.interceptCiHigh)}{unit ? ` ${unit}` : ''}; the line at {r.variable.name} = 0</td>}</tr>
        <tr><th scope="row">Points in the line</th><td data-testid="trend-n">{fit.n}</td><td>at {fit.distinctX} different value{fit.distinctX === 1 ? '' : 's'} of {r.variable.name}</td></tr>
        {!nd.slope && <tr><th scope="row">Scatter</th><td data-testid="trend-chi2">χ² {f(fit.chiSquare)}, {fit.dof} dof</td><td>{fit.birgeRatio > 1 ? `more than the points' intervals allow: the line's intervals are ${f(fit.birgeRatio)} times wider` : 'within the points\' intervals'}</td></tr>}
      </tbody>
    </table>
  );
}

export function TrendView({ w, onClose }: { w: Workspace; onClose(): void }) {
  const { session, change } = w.sessions;
  const [form, setForm] = useState<TrendForm>(() => session?.trend ?? (session ? emptyTrendForm(session) : { reading: 'core', variable: '', unit: '', values: {} }));
  // The form is kept with the session (written after the usual pause while typing).
  useEffect(() => {
    if (session && JSON.stringify(session.trend ?? null) !== JSON.stringify(form)) change({ type: 'screenState', trend: form });
  }, [form]); // eslint-disable-line react-hooks/exhaustive-deps
  const set = (p: Partial<TrendForm>) => setForm((s) => ({ ...s, ...p }));

  const outcome = useMemo((): { r: TrendResult | null; line: TrendLine | null; problem: string | null } => {
    if (!session) return { r: null, line: null, problem: 'No session is open.' };
    try {
      return { r: trendOf(session, form), line: trendLine(session, form, `retarda-trend-${new Date().toISOString().slice(0, 10)}`), problem: null };
    } catch (e) { return { r: null, line: null, problem: (e as Error).message }; }
  }, [session, form]);
  const images = session?.images ?? [];
  const { r, line } = outcome;
  const stem = `retarda-trend-${new Date().toISOString().slice(0, 10)}`;

  return (
    <main className="series trend" aria-label="Against a variable">
      <header className="compare-head">
        <h2>Against a variable: one reading of each image against a process condition</h2>
        <button onClick={() => r && download(`${stem}.json`, JSON.stringify(r, null, 2), 'application/json')} disabled={!r} data-testid="trend-json">Save as JSON</button>
        <button onClick={() => r && download(`${stem}.csv`, trendCsv(r), 'text/csv')} disabled={!r} data-testid="trend-csv">Save as CSV</button>
        <button className="quiet" onClick={onClose}>Back to the images</button>
      </header>
      <div className="series-body">
        <aside className="series-form" aria-label="Variable and values">
          <label className="series-field">Variable <input data-testid="trend-variable" value={form.variable} placeholder="e.g. draw ratio" maxLength={80} onChange={(e) => set({ variable: e.target.value })} /></label>
          <label className="series-field">Unit <input data-testid="trend-unit" value={form.unit} placeholder="e.g. °C, %, none" maxLength={80} onChange={(e) => set({ unit: e.target.value })} /></label>
          <label className="series-field">Reading <select data-testid="trend-reading" value={form.reading} onChange={(e) => set({ reading: e.target.value as TrendForm['reading'] })}>
            {TREND_READINGS.map((k) => <option key={k} value={k}>{TREND_READING_WORDS[k]}</option>)}
          </select></label>
          <p className="note">{TREND_READING_WORDS[form.reading]}: {READING_HINT[form.reading]}.</p>
          <h3>Value of each image</h3>
          {images.length === 0 && <p className="note">No images in this session yet.</p>}
          <ul className="trend-images">
            {images.map((im) => {
              const doc = documentOf(form.reading, session?.work[im.id]);
              const v = doc ? readingOf(form.reading, doc) : null;
              return (
                <li key={im.id}>
                  <input className="series-time" aria-label={`${form.variable.trim() || 'Value'} of ${im.name}`} inputMode="decimal" value={form.values[im.id] ?? ''}
                    placeholder={form.unit || 'value'} onChange={(e) => set({ values: { ...form.values, [im.id]: e.target.value } })} />
                  <span className="trend-image-name">{im.name}</span>
                  <span className="note"> {v && !v.why ? f(v.reading) : !doc ? `no ${TREND_SOURCE[form.reading] === 'orient' ? 'orientation' : TREND_SOURCE[form.reading] === 'profile' ? 'profile' : 'diameters'} yet` : NOT_DETERMINED}</span>
                </li>
              );
            })}
          </ul>
          <p className="note">Leave an image's value blank to leave it out. The line needs readings at three or more different values.</p>
        </aside>
        <section className="series-main" data-testid="trend-answer">
          {!r ? (
            <p className="note" data-testid="trend-empty">{outcome.problem ?? ''} Each image's {TREND_READING_WORDS[form.reading]} is then plotted against the variable with its 95 % interval, and a straight line is fitted with 95 % intervals on its slope and intercept.</p>
          ) : <>
            <Verdict r={r} />
            <div className="series-answer">
              <TrendPlot r={r} />
              <div><FitTable r={r} /></div>
            </div>
            <Warnings list={r.warnings} />
            {line && <>
              <p className="cli" title="Run this to get the same numbers from the command line"><code data-testid="trend-cli">{line.line}</code></p>
              {line.table && <p className="note">The walls of some profiles were drawn by hand, so the line reads them from a table: <button className="quiet" data-testid="trend-table" onClick={() => download(line.table!.name, line.table!.text, 'text/csv')}>Save {line.table.name}</button> beside the images.</p>}
              {line.differs && <p className="note warn" data-testid="trend-differs">{line.differs}.</p>}
            </>}
            <details>
              <summary>{readingTitle(r)} of each image ({r.points.length})</summary>
              <table className="results compact" data-testid="trend-points">
                <thead><tr><th>image</th><th>{r.variable.name}</th><th>reading</th><th>95 % low</th><th>95 % high</th><th>in the line</th></tr></thead>
                <tbody>{r.points.map((p, i) => <tr key={i}><td>{p.source}</td><td>{f(p.value)}</td><td>{Number.isFinite(p.reading) ? f(p.reading) : NOT_DETERMINED}</td><td>{f(p.ciLow)}</td><td>{f(p.ciHigh)}</td><td>{p.used ? 'yes' : `no: ${p.why}`}</td></tr>)}</tbody>
              </table>
            </details>
          </>}
        </section>
      </div>
    </main>
  );
}
