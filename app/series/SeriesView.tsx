/**
 * Over time: the session's images as the frames of a series (relaxation after the flow stops, washing, drying),
 * each frame's S_axis with its 95 % interval against one axis, and the relaxation fit with tau and beta and their
 * 95 % intervals (`retarda series`, docs/methods.md §17). The analysis runs in the worker.
 */
import { useEffect, useState } from 'react';
import { NOT_DETERMINED, SERIES_MODELS, type SeriesResult } from '../../src/analyses/index.ts';
import { formatCell } from '../../src/report/index.ts';
import { CancelledError } from '../worker/client.ts';
import { download } from '../export/rows.ts';
import { Undetermined, Warnings } from '../components/Results.tsx';
import { DEFAULT_SETTINGS } from '../storage/index.ts';
import type { Workspace } from '../screens/workspace.ts';
import { SeriesPlot } from './SeriesPlot.tsx';
import {
  EMPTY_SERIES_FORM, framesOf, seriesCommandLine, seriesPointsCsv, seriesRequestOf, type SeriesForm, type SeriesModelChoice, type SeriesRequest,
} from './seriesForm.ts';

const f = (v: number | null | undefined) => formatCell(v ?? null);
/** An end of tau's interval; an end the data do not reach is 0 (below) or Infinity (above) and reads "open". */
const seconds = (v: number) => (Number.isFinite(v) && v > 0 ? `${f(v)} s` : 'open');
const MODEL_WORDS: Record<SeriesModelChoice, string> = { auto: 'auto (the better by AIC)', exponential: 'exponential', stretched: 'stretched exponential' };

/** The fit's numbers, each with its interval or, beside it, "not determined", why and what would determine it. */
function FitTable({ r }: { r: SeriesResult }) {
  const nd = r.notDetermined ?? {};
  const fit = r.fit;
  if (!fit) {
    return (
      <table className="results" data-testid="series-results"><tbody>
        <tr><th scope="row">Relaxation fit</th><Undetermined why={nd.fit ?? 'the points do not support a fit'} testId="series-fit">-</Undetermined></tr>
      </tbody></table>
    );
  }
  const stretched = fit.model === 'stretched';
  // What the data do not determine, and why, comes from the analysis (the ends of the curve and the mean time
  // follow tau and beta there).
  const infinityWhy = nd.orderInfinity, zeroWhy = nd.orderZero, meanWhy = nd.meanTauSeconds;
  const chosen = r.options.model === 'auto' ? ', chosen by AIC' : '';
  return (
    <table className="results" data-testid="series-results">
      <tbody>
        <tr><th scope="row">Relaxation time tau</th>
          <Undetermined why={nd.tauSeconds && `${nd.tauSeconds} (95 %: ${seconds(fit.tauCi[0])} – ${seconds(fit.tauCi[1])})`} testId="series-tau">{f(fit.tauSeconds)} s</Undetermined>
          {!nd.tauSeconds && <td data-testid="series-tau-ci">95 %: {seconds(fit.tauCi[0])} – {seconds(fit.tauCi[1])}</td>}</tr>
        <tr><th scope="row">Stretch beta</th>
          {stretched
            ? <><Undetermined why={nd.beta} testId="series-beta">{f(fit.beta)}</Undetermined>{!nd.beta && fit.betaCi && <td>95 %: {f(fit.betaCi[0])} – {f(fit.betaCi[1])}</td>}</>
            : <><td data-testid="series-beta">1 (exponential)</td><td>model{chosen}</td></>}</tr>
        <tr><th scope="row">S_0 (fitted, t = 0)</th>
          <Undetermined why={zeroWhy} testId="series-order-zero">{f(fit.orderZero)}</Undetermined>{!zeroWhy && <td>S_axis when the flow stopped</td>}</tr>
        <tr><th scope="row">S_inf (fitted, long after)</th>
          <Undetermined why={infinityWhy} testId="series-order-infinity">{f(fit.orderInfinity)}</Undetermined>{!infinityWhy && <td>S_axis it relaxes to</td>}</tr>
        <tr><th scope="row">Mean relaxation time</th>
          <Undetermined why={meanWhy} testId="series-mean-tau">{f(fit.meanTauSeconds)} s</Undetermined>
          {!meanWhy && <td>{stretched ? '(tau / beta) Γ(1 / beta)' : 'equals tau for the exponential'}</td>}</tr>
        <tr><th scope="row">Model</th><td colSpan={2}>{stretched ? 'stretched exponential' : 'exponential'}{stretched ? chosen : ''}; χ² {f(fit.chiSquare)} on {fit.dof} degree{fit.dof === 1 ? '' : 's'} of freedom</td></tr>
      </tbody>
    </table>
  );
}

/** What the screen holds for a session: the form and the last run, kept with the session (StoredSeries). */
export interface SeriesKept { form: SeriesForm; run: { request: SeriesRequest; result: SeriesResult } | null }

/**
 * `kept`: the screen's form and last run per session id, held by the page so leaving the screen keeps them at once;
 * they are also kept with the session (written after the usual pause), so they come back after a reload.
 */
export function SeriesView({ w, kept, onClose }: { w: Workspace; kept: Map<string, SeriesKept>; onClose(): void }) {
  const { session, change } = w.sessions;
  const here = session ? kept.get(session.id) ?? session.series ?? undefined : undefined;
  const { client, sourceOf, progress, setBusy } = w.analysis;
  const images = session?.images ?? [];
  const settings = session?.settings ?? DEFAULT_SETTINGS;
  const [form, setForm] = useState<SeriesForm>(here?.form ?? EMPTY_SERIES_FORM);
  const [problem, setProblem] = useState<string | null>(null);
  const [run, setRun] = useState<SeriesKept['run']>(here?.run ?? null);
  useEffect(() => {
    if (!session) return;
    kept.set(session.id, { form, run });
    const untouched = !session.series && !run && JSON.stringify(form) === JSON.stringify(EMPTY_SERIES_FORM);
    if (!untouched && JSON.stringify(session.series ?? null) !== JSON.stringify({ form, run })) change({ type: 'screenState', series: { form, run } });
  }, [session?.id, form, run]); // eslint-disable-line react-hooks/exhaustive-deps
  const set = (p: Partial<SeriesForm>) => setForm((s) => ({ ...s, ...p }));
  const frames = framesOf(form, images);
  const ticked = new Set(frames.map((i) => i.id));
  const toggle = (id: string, on: boolean) => set({ chosen: images.filter((i) => (i.id === id ? on : ticked.has(i.id))).map((i) => i.id) });
  const frameTime = (k: number) => {
    const dt = Number(form.intervalS), t0 = form.startS.trim() === '' ? 0 : Number(form.startS);
    return form.intervalS.trim() !== '' && Number.isFinite(dt) && Number.isFinite(t0) ? `${formatCell(t0 + k * dt)} s` : '';
  };

  const start = async () => {
    setProblem(null);
    let request: SeriesRequest;
    try { request = seriesRequestOf(form, images, settings); } catch (e) { setProblem((e as Error).message); return; }
    try {
      for (const key of request.keys) {
        const src = sourceOf(key);
        if (!src) throw new Error('an image of this series is no longer in the session; tick the frames again');
        await client.ensure(src, progress('Opening the frames'));
      }
      const result = await client.call('series', { keys: request.keys, tSeconds: request.tSeconds, options: request.options }, progress('Order over time'));
      setRun({ request, result });
      requestAnimationFrame(() => document.querySelector('[data-testid="series-answer"]')?.scrollIntoView({ block: 'nearest' }));
    } catch (e) {
      if (e instanceof CancelledError) { w.say('info', 'Order over time stopped.'); return; }
      const hint = (e as { hint?: string }).hint;
      setProblem(`${(e as Error).message}${hint ? `. ${hint}` : ''}`);
    } finally { setBusy(null); }
  };

  const r = run?.result;
  const stem = `retarda-series-${new Date().toISOString().slice(0, 10)}`;
  return (
    <main className="series" aria-label="Over time">
      <header className="compare-head">
        <h2>Over time: order of each frame and its relaxation</h2>
        <button onClick={() => download(`${stem}.json`, JSON.stringify(r, null, 2), 'application/json')} disabled={!r} data-testid="series-json">Save the result as JSON</button>
        <button onClick={() => r && download(`${stem}-points.csv`, seriesPointsCsv(r), 'text/csv')} disabled={!r} data-testid="series-csv">Save the points as CSV</button>
        <button className="quiet" onClick={onClose}>Back to the images</button>
      </header>
      <div className="series-body">
        <aside className="series-form" aria-label="Frames and times">
          <h3>Frames, in time order</h3>
          {images.length === 0 && <p className="note">No images in this session yet: add the frames (Add images…), in time order.</p>}
          <ol className="series-frames">
            {images.map((im) => {
              const k = frames.findIndex((x) => x.id === im.id);
              return (
                <li key={im.id}>
                  <label><input type="checkbox" checked={ticked.has(im.id)} onChange={(e) => toggle(im.id, e.target.checked)} /> {im.name}</label>
                  {k >= 0 && (form.timing === 'each'
                    ? <input className="series-time" aria-label={`Time of ${im.name}, s`} inputMode="decimal" value={form.timesS[im.id] ?? ''} placeholder="s"
                      onChange={(e) => set({ timesS: { ...form.timesS, [im.id]: e.target.value } })} />
                    : <span className="note">{frameTime(k)}</span>)}
                </li>
              );
            })}
          </ol>
          <fieldset className="series-timing">
            <legend>Times</legend>
            <label><input type="radio" name="series-timing" checked={form.timing === 'interval'} onChange={() => set({ timing: 'interval' })} /> evenly spaced</label>
            <label><input type="radio" name="series-timing" checked={form.timing === 'each'} onChange={() => set({ timing: 'each' })} /> each frame's time</label>
            {form.timing === 'interval' && <>
              <label className="series-field">Time between frames, s <input data-testid="series-interval" inputMode="decimal" value={form.intervalS} onChange={(e) => set({ intervalS: e.target.value })} /></label>
              <label className="series-field">First frame at, s <input data-testid="series-start" inputMode="decimal" value={form.startS} placeholder="0" onChange={(e) => set({ startS: e.target.value })} /></label>
            </>}
            <p className="note">Seconds from any zero, normally the moment the flow stopped.</p>
          </fieldset>
          <label className="series-field">Flow axis, ° <input data-testid="series-axis" inputMode="decimal" value={form.axisDeg} placeholder="first frame's director" onChange={(e) => set({ axisDeg: e.target.value })} /></label>
          <label className="series-field">Model <select data-testid="series-model" value={form.model} onChange={(e) => set({ model: e.target.value as SeriesModelChoice })}>
            {SERIES_MODELS.map((m) => <option key={m} value={m}>{MODEL_WORDS[m]}</option>)}
          </select></label>
          <button className="primary" onClick={() => void start()} disabled={!!w.analysis.busy} data-testid="series-run">Fit order over time</button>
          {problem && <p className="message error" role="alert" data-testid="series-problem">{problem}</p>}
          <p className="note">Texture field as in the image screen's settings: σ {f(settings.sigmaPx)} px, pixel weights {settings.weighting}.</p>
        </aside>
        <section className="series-main" data-testid="series-answer">
          {!r ? (
            <p className="note" data-testid="series-empty">Tick the frames in time order, give their times and press “Fit order over time”. Each frame's S_axis (order along the flow axis) is plotted with its 95 % interval, and the relaxation time tau is fitted with its 95 % interval.</p>
          ) : <>
            <div className="series-answer">
              <SeriesPlot r={r} />
              <div>
                <FitTable r={r} />
                <p className="note" data-testid="series-axis-used">S_axis against {f(r.axisDeg)}° ({r.axisFrom === 'given' ? 'the flow axis given' : "the first frame's director"}), {r.points.length} frames; intervals are 95 %.</p>
              </div>
            </div>
            <Warnings list={r.warnings} />
            <p className="cli" title="Run this to get the same numbers from the command line"><code data-testid="series-cli">{seriesCommandLine(run!.request)}</code></p>
            <details>
              <summary>S_axis of each frame ({r.points.length})</summary>
              <table className="results compact">
                <thead><tr><th>frame</th><th>t, s</th><th>S_axis</th><th>95 % low</th><th>95 % high</th><th>n</th></tr></thead>
                <tbody>{r.points.map((p, i) => <tr key={i}><td>{p.source}</td><td>{f(p.tSeconds)}</td><td>{Number.isFinite(p.order) ? f(p.order) : NOT_DETERMINED}</td><td>{f(p.ciLow)}</td><td>{f(p.ciHigh)}</td><td>{f(p.n)}</td></tr>)}</tbody>
              </table>
            </details>
          </>}
        </section>
      </div>
    </main>
  );
}
