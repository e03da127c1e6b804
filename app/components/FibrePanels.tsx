/**
 * Fibre diameter and the fibre-numbers calculator (the micrometer calibration is in MicrometerPanel.tsx).
 * The numbers are the worker's `diameter` / `fibreNumbers` results: what `retarda diameter` and
 * `retarda fibre` print for the same file and settings (the command line is shown with them).
 */
import { Warnings } from './Results.tsx';
import { useEffect, useImperativeHandle, useState, type Ref } from 'react';
import { NOT_DETERMINED, type DiameterAnalysisOptions, type DiameterDocument, type FibreNumbersRequest, type FibreNumbersResult, type LinearDensityUnit, type TenacityUnit } from '../../src/analyses/index.ts';
import { DROP_REASON_TEXT, type DropReason } from '../../src/fibre/index.ts';
import { formatCell } from '../../src/report/index.ts';
import type { Mark } from './Viewer.tsx';
import type { PanelContext, PanelHandle } from './OpticalPanel.tsx';
import { Histogram } from './Histogram.tsx';
import { diameterCommandLine, diameterOptionsOf, fibreCommandLine, fibreRequestOf, type FibreNumbersForm } from '../analysis/requests.ts';
import { DEFAULT_DIAMETER_FORM, type DiameterForm, type SessionPixelSize, type StoredDiameterRun } from '../storage/records.ts';

const f = (v: number | null | undefined) => formatCell(v ?? null);

export type { SessionPixelSize } from '../storage/records.ts';

/** Edges and station widths drawn on the image: each kept station's width across the fibre axis, and the two edge lines. */
export function diameterMarks(d: DiameterDocument): Mark[] {
  const marks: Mark[] = [];
  for (const fb of d.fibres) {
    const a = (fb.axisDeg * Math.PI) / 180;
    // Across the axis (image y down, angles CCW on screen): the normal to (cos a, -sin a) is (sin a, cos a).
    const nx = Math.sin(a), ny = Math.cos(a);
    const ends = fb.stations.map((s) => ({ s, h: s.diameterPx / 2 }));
    for (const { s, h } of ends) marks.push({ x1: s.xPx - h * nx, y1: s.yPx - h * ny, x2: s.xPx + h * nx, y2: s.yPx + h * ny, colour: '#ffd23f' });
    for (let k = 1; k < ends.length; k++) {
      const p = ends[k - 1], q = ends[k];
      // Only join neighbouring stations (a dropped station leaves a gap in the drawn edge).
      if (q.s.alongPx - p.s.alongPx > 1.5 * (d.options.stepPx as number)) continue;
      for (const side of [-1, 1]) {
        marks.push({ x1: p.s.xPx + side * p.h * nx, y1: p.s.yPx + side * p.h * ny, x2: q.s.xPx + side * q.h * nx, y2: q.s.yPx + side * q.h * ny, colour: '#36d67a' });
      }
    }
    for (const s of fb.droppedStations) marks.push({ x1: s.xPx - 3, y1: s.yPx - 3, x2: s.xPx + 3, y2: s.yPx + 3, colour: '#ff5a5a' }, { x1: s.xPx - 3, y1: s.yPx + 3, x2: s.xPx + 3, y2: s.yPx - 3, colour: '#ff5a5a' });
  }
  return marks;
}

type DiameterRowData = DiameterDocument | DiameterDocument['fibres'][number];

/**
 * One row of the diameter table: the mean with its 95 % interval and, in µm, the pixel size's share of the
 * uncertainty; a fibre whose width is not determined shows that, with its upper bound, instead of a mean.
 */
function DiameterRow({ row, label, axis, testId, um, total }: { row: DiameterRowData; label: string; axis: string; testId: string; um: boolean; total?: boolean }) {
  const [mean, sd, lo, hi, bound, uPixel] = um
    ? [row.meanUm, row.sdUm, row.ciLowUm, row.ciHighUm, row.upperBoundUm, row.uUmPixelSize]
    : [row.meanPx, row.sdPx, row.ciLowPx, row.ciHighPx, row.upperBoundPx, null];
  const withheld = !row.determined;
  return (
    <tr className={total ? 'total' : undefined}>
      <td>{label}</td><td>{axis}</td><td>{f(row.n)}</td><td>{f(row.dropped)}</td>
      {withheld
        ? <td data-testid={testId} className="not-determined">{NOT_DETERMINED}</td>
        : <td data-testid={testId}>{f(mean)}</td>}
      <td>{withheld ? '–' : f(sd)}</td>
      <td data-testid={`${testId}-interval`}>{withheld
        ? <span className="not-determined">at most {f(bound)}</span>
        : lo === null || hi === null ? '–' : `${f(lo)} – ${f(hi)}`}</td>
      {um && <td>{withheld || uPixel === null ? '–' : `± ${f(uPixel)}`}</td>}
      <td>{withheld ? '–' : f(row.cv)}</td>
    </tr>
  );
}

interface DiameterProps {
  ctx: PanelContext;
  pixelSize: SessionPixelSize | null;
  /**
   * Relative standard uncertainty (k = 1) of the session's pixel size, when its calibration gives one (a
   * micrometer's `uncertainty`); used when the form's own field is empty. Without it, an `uncertainty` carried
   * by the `pixelSize` record is used.
   */
  pixelSizeUncertainty?: number | null;
  /** The diameters kept with the session for the image shown, and the form and command line that made them (shown after a reload too). */
  stored: { doc: DiameterDocument; run: StoredDiameterRun | null } | null;
  onMarks(imageId: string, marks: Mark[]): void;
  /** A new result for an image, to keep with the session. */
  onResult(imageId: string, d: DiameterDocument, run: StoredDiameterRun): void;
  handle?: Ref<PanelHandle>;
}

/** The relative uncertainty a session pixel-size record carries (a micrometer's `uncertainty`), if any. */
function recordUncertainty(p: SessionPixelSize | null): number | null {
  const u = (p as { uncertainty?: unknown } | null)?.uncertainty;
  return typeof u === 'number' && u >= 0 ? u : null;
}

export function DiameterPanel({ ctx, pixelSize, pixelSizeUncertainty: givenU, stored, onMarks, onResult, handle }: DiameterProps) {
  const pixelSizeUncertainty = givenU ?? recordUncertainty(pixelSize);
  const [s, setS] = useState<DiameterForm>(DEFAULT_DIAMETER_FORM);
  // The pixel size's relative uncertainty, typed in % (k = 1); the document keeps the value it was measured with.
  const [uncertaintyPct, setUncertaintyPct] = useState('');
  const [formError, setFormError] = useState<string | null>(null);
  const active = ctx.images.find((i) => i.id === ctx.activeId);
  const storedRun = stored?.run ?? null;
  const storedDoc = stored?.doc ?? null;
  // A kept result brings back the form that made it (after a reload, or on going back to its image).
  useEffect(() => { if (storedRun) setS(storedRun.form); }, [storedRun]);
  useEffect(() => {
    if (storedDoc && storedRun?.form.umPerPx.trim()) {
      setUncertaintyPct(storedDoc.pixelSizeUncertainty === null ? '' : String(Number((100 * storedDoc.pixelSizeUncertainty).toPrecision(6))));
    }
  }, [storedDoc, storedRun]);

  async function run() {
    setFormError(null);
    if (!active) return;
    let options: DiameterAnalysisOptions;
    try { options = diameterOptionsOf(s, uncertaintyPct, { umPerPx: pixelSize?.umPerPx, uncertainty: pixelSizeUncertainty }); } catch (e) { setFormError((e as Error).message); return; }
    const id = active.id;
    const doc = await ctx.runJob('Fibre diameter', async (p) => {
      const src = ctx.sourceOf(id);
      if (!src) throw new Error('the image is no longer in the session');
      await ctx.client.ensure(src, p);
      return ctx.client.call('diameter', { key: id, options }, p);
    });
    if (!doc) return;
    onMarks(id, diameterMarks(doc));
    onResult(id, doc, { form: s, commandLine: diameterCommandLine(active.name, options) });
  }

  // Without deps: the handle always runs this render's form, as the button does.
  useImperativeHandle(handle, () => ({ run: () => { if (!ctx.disabled && active) void run(); } }));
  const d = stored?.doc ?? null;
  const um = d ? d.pixelSizeUmPerPx !== null : false;
  const unit = um ? 'µm' : 'px';
  const dropped = d ? d.fibres.flatMap((fb) => fb.droppedStations.map((s) => ({ ...s, fibre: fb.index }))) : [];
  const byReason = new Map<DropReason, number>();
  for (const s of dropped) byReason.set(s.reason, (byReason.get(s.reason) ?? 0) + 1);
  return (
    <div>
      <label className="field">
        <span>Pixel size</span>
        <input value={s.umPerPx} placeholder={pixelSize ? 'the session\'s (below)' : 'from the file, else px only'} onChange={(e) => setS({ ...s, umPerPx: e.target.value })} data-testid="diameter-um-per-px" />
        <span className="unit">µm/px</span>
      </label>
      {pixelSize && s.umPerPx.trim() === '' && <p className="note">Using {pixelSize.umPerPx.toPrecision(5)} µm/px from the {pixelSize.from}; type a value to use another.</p>}
      <label className="field">
        <span>Pixel size uncertainty</span>
        <input value={uncertaintyPct} data-testid="diameter-um-per-px-uncertainty"
          placeholder={pixelSizeUncertainty != null && s.umPerPx.trim() === '' ? `the calibration's (${(100 * pixelSizeUncertainty).toPrecision(2)})` : 'optional: e.g. 0.2'}
          onChange={(e) => setUncertaintyPct(e.target.value)} />
        <span className="unit" title="relative standard uncertainty, k = 1 (what the micrometer calibration gives)">% (k = 1)</span>
      </label>
      <label className="field"><span>Station step</span><input value={s.stepPx} data-testid="diameter-step-px" onChange={(e) => setS({ ...s, stepPx: e.target.value })} /><span className="unit">px</span></label>
      <label className="field"><span>Averaged along</span><input value={s.averagePx} onChange={(e) => setS({ ...s, averagePx: e.target.value })} /><span className="unit">px</span></label>
      <label className="field"><span>Fibre is</span>
        <select value={s.polarity} onChange={(e) => setS({ ...s, polarity: e.target.value as DiameterForm['polarity'] })}>
          <option value="auto">found from the image</option><option value="dark">darker than the background</option><option value="bright">brighter than the background</option>
        </select><span /></label>
      <label className="field"><span>Shading removed</span>
        <select value={s.backgroundDegree} onChange={(e) => setS({ ...s, backgroundDegree: e.target.value })}>
          {[0, 1, 2, 3, 4].map((k) => <option key={k} value={String(k)}>{k === 0 ? 'a flat level' : `surface of degree ${k}`}</option>)}
        </select><span /></label>
      {formError && <p className="note warn" role="alert">{formError}</p>}
      <button className="primary" disabled={ctx.disabled || !active} onClick={() => void run()} title="Shortcut: R">Measure fibre diameters</button>
      {d && (
        <div>
          <p className="note">On the image: yellow = the width measured at each station, green = the edges joined between stations, red × = stations dropped.</p>
          <div className="scroll-x"><table className="results compact" data-testid="diameter-table">
            <thead><tr><th>fibre</th><th>axis °</th><th>n</th><th>dropped</th><th>mean {unit}</th><th>SD {unit}</th><th>95 % interval</th>{um && <th title="standard uncertainty (k = 1) from the pixel size alone">of it: pixel size</th>}<th>CV</th></tr></thead>
            <tbody>
              {d.fibres.map((fb) => <DiameterRow key={fb.index} row={fb} label={String(fb.index)} axis={f(fb.axisDeg)} testId={`diameter-mean-${fb.index}`} um={um} />)}
              {d.fibres.length > 1 && <DiameterRow row={d} label="all" axis="–" testId="diameter-mean-all" um={um} total />}
            </tbody>
          </table></div>
          <p className="note">{d.interval}. Pixel size: {d.pixelSizeUmPerPx === null ? 'none (lengths in px)' : `${f(d.pixelSizeUmPerPx)} µm/px (${d.pixelSizeFrom === 'file' ? 'from the file' : 'as set'})${d.pixelSizeUncertainty === null ? ', its uncertainty not given (not in the intervals)' : `, ± ${(100 * d.pixelSizeUncertainty).toPrecision(2)} % (k = 1, in the µm intervals)`}`}.</p>
          {d.fibres.some((fb) => !fb.determined) && (
            <p className="note not-determined-why" data-testid="diameter-not-determined">
              A fibre marked “{NOT_DETERMINED}” is narrower than about two blur widths: its width and its contrast trade off,
              so only an upper bound is given (at most the width shown). A higher magnification (more pixels across the fibre)
              or a sharper focus would determine it.
            </p>
          )}
          {/* Next to the table: a warning often explains a wide interval in it. */}
          <Warnings list={d.warnings} />
          <Histogram values={d.stations.map((st) => (um ? st.diameterUm! : st.diameterPx))} unit={unit} label="diameter at each station" />
          {dropped.length > 0 && (
            <details data-testid="diameter-dropped">
              <summary>{dropped.length} station(s) dropped, and why</summary>
              <ul className="reasons">{[...byReason].map(([reason, n]) => <li key={reason}><strong>{n}</strong> × {DROP_REASON_TEXT[reason]}</li>)}</ul>
              <table className="results compact">
                <thead><tr><th>fibre</th><th>along px</th><th>x px</th><th>y px</th><th>reason</th></tr></thead>
                <tbody>{dropped.map((s, k) => <tr key={k}><td>{s.fibre}</td><td>{f(s.alongPx)}</td><td>{f(s.xPx)}</td><td>{f(s.yPx)}</td><td>{s.reason}</td></tr>)}</tbody>
              </table>
            </details>
          )}
          {storedRun && <p className="cli"><code data-testid="diameter-cli">{storedRun.commandLine}</code></p>}
        </div>
      )}
    </div>
  );
}

interface NumbersProps {
  ctx: PanelContext;
  measuredDiameterUm: number | null;
  /**
   * The diameter result the measured mean comes from: with it, one click carries the mean together with its
   * standard uncertainty and degrees of freedom (and so its interval) into the form.
   */
  measuredDiameter?: DiameterDocument | null;
  measuredRetardanceNm: number | null;
  handle?: Ref<PanelHandle>;
}

/** The form's text fields: values and their standard uncertainties (k = 1, in the value's unit). */
const EMPTY_NUMBERS_FORM: FibreNumbersForm = {
  diameterUm: '', density: '', linearDensity: '', linearDensityUnit: 'tex' as LinearDensityUnit, tenacity: '', tenacityUnit: 'N/tex' as TenacityUnit,
  strengthGPa: '', retardanceNm: '', thicknessUm: '', intrinsic: '',
  uDiameterUm: '', diameterDof: '', uDensity: '', uLinearDensity: '', uTenacity: '', uStrengthGPa: '', uRetardanceNm: '', uThicknessUm: '', uIntrinsic: '',
};

const short = (v: number) => String(Number(v.toPrecision(6)));

export function FibreNumbersPanel({ ctx, measuredDiameterUm, measuredDiameter, measuredRetardanceNm, handle }: NumbersProps) {
  const [s, setS] = useState(EMPTY_NUMBERS_FORM);
  const [shown, setShown] = useState<{ r: FibreNumbersResult; cli: string } | null>(null);
  const [formError, setFormError] = useState<string | null>(null);
  const set = (c: Partial<typeof s>) => setS((o) => ({ ...o, ...c }));

  async function run() {
    setFormError(null);
    let request: FibreNumbersRequest;
    try { request = fibreRequestOf(s); } catch (e) { setFormError((e as Error).message); return; }
    const r = await ctx.runJob('Fibre numbers', (p) => ctx.client.call('fibreNumbers', { request }, p));
    if (r) setShown({ r, cli: fibreCommandLine(request) });
  }

  useImperativeHandle(handle, () => ({ run: () => { if (!ctx.disabled) void run(); } }));
  const input = (label: string, key: keyof typeof s, unit: string, placeholder = '', testId?: string) => (
    <label className="field"><span>{label}</span><input value={s[key] as string} placeholder={placeholder} data-testid={testId} onChange={(e) => set({ [key]: e.target.value })} /><span className="unit">{unit}</span></label>
  );
  const r = shown?.r;
  // Keyed by the `retarda fibre --json` key each row shows.
  const rows: [keyof FibreNumbersResult, string, number | null, string][] = r ? [
    ['areaUm2', 'Cross-section', r.areaUm2, 'µm², round fibre'], ['solidTex', 'Solid linear density', r.solidTex, 'tex'], ['solidDtex', '', r.solidDtex, 'dtex'],
    ['solidDenier', '', r.solidDenier, 'denier'], ['linearDensityTex', 'Measured linear density', r.linearDensityTex, 'tex'],
    ['packingFraction', 'Packing fraction', r.packingFraction, 'measured / solid'], ['tenacityNPerTex', 'Tenacity', r.tenacityNPerTex, 'N/tex'],
    ['tenacityCnPerDtex', '', r.tenacityCnPerDtex, 'cN/dtex'], ['tenacityGfPerDen', '', r.tenacityGfPerDen, 'gf/den'], ['strengthGPa', 'Tensile strength', r.strengthGPa, 'GPa at this density'],
    ['birefringence', 'Birefringence', r.birefringence, `retardance / ${f(r.thicknessUm)} µm`], ['orientationFactor', 'Orientation factor', r.orientationFactor, 'birefringence / intrinsic'],
  ] : [];
  const anyInterval = r ? Object.keys(r.intervals).length > 0 : false;
  const md = measuredDiameter ?? null;
  const mdDetermined = md !== null && md.determined && md.meanUm !== null;
  return (
    <div className="numbers-form">
      {input('Diameter', 'diameterUm', 'µm', '', 'fibre-diameter')}
      {md !== null && md.pixelSizeUmPerPx !== null && (mdDetermined
        ? <button className="quiet small" data-testid="fibre-use-measured" onClick={() => set({
          diameterUm: short(md.meanUm!), uDiameterUm: md.uUm === null ? '' : short(md.uUm), diameterDof: md.dofUm === null ? '' : short(md.dofUm),
        })}>use the measured mean with its interval ({f(md.meanUm)} µm, 95 % {f(md.ciLowUm)} – {f(md.ciHighUm)})</button>
        : <p className="note not-determined-why">The measured width is {NOT_DETERMINED} (at most {f(md.upperBoundUm)} µm): too narrow for the blur, so there is no diameter to carry over.</p>)}
      {s.uDiameterUm.trim() !== '' && <p className="note" data-testid="fibre-diameter-u-note">± {s.uDiameterUm} µm (standard uncertainty, k = 1{s.diameterDof.trim() ? `, ${s.diameterDof} degrees of freedom` : ''}); change it under “Uncertainties of the inputs”.</p>}
      {md === null && measuredDiameterUm !== null && <button className="quiet small" onClick={() => set({ diameterUm: short(measuredDiameterUm) })}>use the measured mean ({f(measuredDiameterUm)} µm)</button>}
      {input('Density of the solid', 'density', 'g/cm³', 'e.g. 1.8', 'fibre-density')}
      <label className="field"><span>Linear density</span><input value={s.linearDensity} placeholder="measured, optional" data-testid="fibre-linear-density" onChange={(e) => set({ linearDensity: e.target.value })} />
        <select aria-label="Linear density unit" value={s.linearDensityUnit} onChange={(e) => set({ linearDensityUnit: e.target.value as LinearDensityUnit })}><option value="tex">tex</option><option value="dtex">dtex</option><option value="den">denier</option></select></label>
      <label className="field"><span>Tenacity</span><input value={s.tenacity} placeholder="optional" onChange={(e) => set({ tenacity: e.target.value })} />
        <select aria-label="Tenacity unit" value={s.tenacityUnit} onChange={(e) => set({ tenacityUnit: e.target.value as TenacityUnit })}><option value="N/tex">N/tex</option><option value="cN/dtex">cN/dtex</option><option value="gf/den">gf/den</option></select></label>
      {input('or tensile strength', 'strengthGPa', 'GPa', 'instead of the tenacity')}
      {input('Retardance', 'retardanceNm', 'nm', 'for the birefringence', 'fibre-retardance')}
      {measuredRetardanceNm !== null && <button className="quiet small" onClick={() => set({ retardanceNm: short(measuredRetardanceNm) })}>use the optical reading ({f(measuredRetardanceNm)} nm)</button>}
      {input('Optical path', 'thicknessUm', 'µm', 'default: the diameter')}
      {input('Intrinsic birefringence', 'intrinsic', '', 'perfectly aligned material')}
      <details className="uncertainties" data-testid="fibre-uncertainties">
        <summary>Uncertainties of the inputs (standard, k = 1): give them to have 95 % intervals</summary>
        {input('± diameter', 'uDiameterUm', 'µm', 'from the measured mean', 'fibre-diameter-u')}
        {input('its degrees of freedom', 'diameterDof', '', 'infinite when empty')}
        {input('± density', 'uDensity', 'g/cm³', '', 'fibre-density-u')}
        {input('± linear density', 'uLinearDensity', s.linearDensityUnit === 'den' ? 'denier' : s.linearDensityUnit)}
        {input('± tenacity', 'uTenacity', s.tenacityUnit)}
        {input('± tensile strength', 'uStrengthGPa', 'GPa')}
        {input('± retardance', 'uRetardanceNm', 'nm')}
        {input('± optical path', 'uThicknessUm', 'µm')}
        {input('± intrinsic birefringence', 'uIntrinsic', '')}
      </details>
      {formError && <p className="note warn" role="alert">{formError}</p>}
      <button className="primary" disabled={ctx.disabled} onClick={() => void run()} title="Shortcut: R">Work out the fibre numbers</button>
      {r && (
        <div>
          <table className="results" data-testid="fibre-results">
            {anyInterval && <thead><tr><th /><th>value</th><th>unit</th><th>95 % interval</th></tr></thead>}
            <tbody>{rows.filter(([, , v]) => v !== null).map(([key, label, v, unit]) => {
              const iv = r.intervals[key as keyof FibreNumbersResult['intervals']];
              return (
                <tr key={key}><th scope="row">{label}</th><td data-testid={`fibre-${key}`}>{f(v)}</td><td>{unit}</td>
                  {anyInterval && <td data-testid={`fibre-${key}-interval`}>{iv ? `${f(iv.ciLow)} – ${f(iv.ciHigh)}` : '–'}</td>}</tr>
              );
            })}</tbody>
          </table>
          {anyInterval && <p className="note">95 % intervals by the law of propagation from the uncertainties given (GUM); a number without one has no uncertain input given.</p>}
          <Warnings list={r.warnings} />
          <p className="cli"><code data-testid="fibre-cli">{shown!.cli}</code></p>
        </div>
      )}
    </div>
  );
}
