/**
 * Micrometer calibration: the worker's `micrometer` result, what `retarda calibrate IMAGE --division-um D`
 * prints for the same file and settings (the command line is shown with it). The pixel size stands with
 * its standard uncertainty, its interval, the method and any warning beside it.
 */
import { Warnings } from './Results.tsx';
import { screenWords } from '../screenWords.ts';
import { useImperativeHandle, useState, type Ref } from 'react';
import type { MicrometerAnalysisOptions, MicrometerDocument } from '../../src/analyses/index.ts';
import { roundWithUncertainty } from '../../src/calibrate/index.ts';
import { formatCell } from '../../src/report/index.ts';
import type { PanelContext, PanelHandle } from './OpticalPanel.tsx';
import { micrometerCommandLine, micrometerOptionsOf, type MicrometerForm } from '../analysis/requests.ts';
import type { SessionPixelSize, StoredMicrometer } from '../storage/records.ts';

const f = (v: number | null | undefined) => formatCell(v ?? null);

interface MicrometerProps {
  ctx: PanelContext;
  /** The session's chosen pixel size (kept with the session). */
  pixelSize: SessionPixelSize | null;
  /** The calibration kept with the session for the image shown. */
  stored: StoredMicrometer | null;
  onUse(p: SessionPixelSize | null): void;
  /** A new calibration of an image, to keep with the session. */
  onCalibration(imageId: string, c: StoredMicrometer): void;
  handle?: Ref<PanelHandle>;
}

/** The interval and budget lines of a calibration; a calibration stored by an older version has none. */
function IntervalRows({ c }: { c: MicrometerDocument }) {
  if (!Array.isArray(c.intervalUmPerPx) || typeof c.coverageFactor !== 'number') {
    return <tr><th scope="row">Interval</th><td colSpan={2}>not stored with this older calibration: measure again to see it</td></tr>;
  }
  const v = roundWithUncertainty(c.umPerPx, c.uncertaintyUmPerPx);
  const [lo, hi] = c.intervalUmPerPx.map((x) => x.toFixed(v.digits));
  const b = c.uncertaintyBudget;
  return (
    <>
      <tr>
        <th scope="row">Interval</th>
        <td data-testid="um-per-px-interval">{lo} – {hi}</td>
        <td>µm/px, k = {c.coverageFactor.toFixed(2)} ({(100 * c.coverageProbability).toFixed(2)} %, {Number.isFinite(c.effectiveDof) ? c.effectiveDof.toFixed(0) : '∞'} degrees of freedom)</td>
      </tr>
      <tr>
        <th scope="row">Uncertainty from</th>
        <td colSpan={2} data-testid="micrometer-budget">
          tick fit {(100 * b.fitRelative).toPrecision(2)} %, tick direction {(100 * b.directionRelative).toPrecision(2)} %, graticule{' '}
          {c.divisionToleranceUm > 0 ? `${(100 * b.graticuleRelative).toPrecision(2)} % (±${c.divisionToleranceUm} µm per division)` : 'not included: give the tolerance from the micrometer\'s certificate'}
        </td>
      </tr>
    </>
  );
}

export function MicrometerPanel({ ctx, pixelSize, stored, onUse, onCalibration, handle }: MicrometerProps) {
  const [s, setS] = useState<MicrometerForm>({ divisionUm: '10', toleranceUm: '', polarity: 'auto', na: '' });
  const [formError, setFormError] = useState<string | null>(null);
  const active = ctx.images.find((i) => i.id === ctx.activeId);

  async function run() {
    setFormError(null);
    if (!active) return;
    let options: MicrometerAnalysisOptions;
    try { options = micrometerOptionsOf(s); } catch (e) { setFormError((e as Error).message); return; }
    const id = active.id;
    const doc = await ctx.runJob('Micrometer calibration', async (p) => {
      const src = ctx.sourceOf(id);
      if (!src) throw new Error('the image is no longer in the session');
      await ctx.client.ensure(src, p);
      return ctx.client.call('micrometer', { key: id, options }, p);
    });
    if (doc) onCalibration(id, { doc, commandLine: micrometerCommandLine(active.name, options) });
  }

  useImperativeHandle(handle, () => ({ run: () => { if (!ctx.disabled && active) void run(); } }));
  const c = stored?.doc ?? null;
  const loud = c ? c.warnings.filter((w) => w.startsWith('CHECK THE RULER')) : [];
  const other = c ? c.warnings.filter((w) => !w.startsWith('CHECK THE RULER')) : [];
  return (
    <div>
      <label className="field"><span>One division</span><input value={s.divisionUm} onChange={(e) => setS({ ...s, divisionUm: e.target.value })} data-testid="division-um" /><span className="unit">µm</span></label>
      <label className="field" title="As the micrometer's certificate states it; counted as a rectangular distribution, u = T / √3. A tolerance over the whole scale: divide it by the number of divisions.">
        <span>Division tolerance ±</span>
        <input value={s.toleranceUm} placeholder="from the certificate (blank: not included)" onChange={(e) => setS({ ...s, toleranceUm: e.target.value })} data-testid="division-tolerance-um" />
        <span className="unit">µm</span>
      </label>
      <label className="field"><span>Ruler lines</span>
        <select value={s.polarity} onChange={(e) => setS({ ...s, polarity: e.target.value })}>
          <option value="auto">found from the image</option><option value="dark">dark on bright</option><option value="bright">bright on dark</option>
        </select><span /></label>
      <label className="field"><span>Objective NA</span><input value={s.na} placeholder="optional: sampling check" onChange={(e) => setS({ ...s, na: e.target.value })} /><span /></label>
      {formError && <p className="note warn" role="alert">{formError}</p>}
      <button className="primary" disabled={ctx.disabled || !active} onClick={() => void run()} title="Shortcut: R">Measure the pixel size</button>
      {c && (
        <div>
          <table className="results" data-testid="micrometer-results">
            <tbody>
              <tr><th scope="row">Pixel size</th><td data-testid="um-per-px">{f(c.umPerPx)}</td><td>µm/px, ± <span data-testid="um-per-px-u">{f(c.uncertaintyUmPerPx)}</span> (standard uncertainty, k = 1; {(100 * c.uncertainty).toPrecision(2)} %)</td></tr>
              {loud.length > 0 && (
                <tr><td colSpan={3}><ul className="warnings" role="alert" data-testid="micrometer-loud-warning">{loud.map((w) => <li key={w}><strong>{screenWords(w)}</strong></li>)}</ul></td></tr>
              )}
              <IntervalRows c={c} />
              {c.methodDescription && <tr><th scope="row">Method</th><td colSpan={2} data-testid="micrometer-method">{c.methodDescription}</td></tr>}
              <tr><th scope="row">Ruler period</th><td data-testid="period-px">{f(c.periodPx)}</td><td>px ± {f(c.periodStdErrPx)}, over {f(c.divisions)} divisions</td></tr>
              <tr><th scope="row">Ticks fitted</th><td>{f(c.lines)}</td><td>{f(c.rejectedLines)} rejected{typeof c.missingLines === 'number' ? `, ${c.missingLines} not found in the span` : ''}; residual {f(c.rmsResidualPx)} px rms{typeof c.residualFraction === 'number' ? ` (${(100 * c.residualFraction).toFixed(2)} % of a division)` : ''}</td></tr>
              <tr><th scope="row">Tick direction</th><td>{f(c.linesDeg)}</td><td>deg CCW from +x; {c.polarity} lines</td></tr>
            </tbody>
          </table>
          <Warnings list={other} testId="micrometer-warnings" />
          <p className="cli"><code data-testid="micrometer-cli">{stored!.commandLine}</code></p>
          <button onClick={() => onUse({ umPerPx: c.umPerPx, from: `micrometer ${active?.name ?? c.source}`, uncertainty: c.uncertainty })} data-testid="use-pixel-size">Use this pixel size for the session's images</button>
        </div>
      )}
      {pixelSize && (
        <p className="note" data-testid="session-pixel-size">Lengths in this session use {pixelSize.umPerPx.toPrecision(5)} µm/px ({pixelSize.from}). <button className="quiet small" onClick={() => onUse(null)}>Stop using it</button></p>
      )}
      <p className="note">Calibrate once per objective, camera adapter and binning; measure over 20 divisions or more.</p>
    </div>
  );
}
