/**
 * Named set-ups: describe the optical train, pixel size and sample sign once, save them by name,
 * and apply one to the open session's images.
 */
import { useCallback, useEffect, useState } from 'react';
import type { SetupStore } from '../storage/index.ts';
import {
  crossedPolars, newSetup, roundSig, setupCommandOptions, setupPixelSizeUmPerPx, setupProblems, setupSummary,
  type AppliedSetup, type PixelSizeSource, type SetupRecord,
} from './setup.ts';

interface Props {
  store: SetupStore;
  applied: AppliedSetup | null;
  /** Whether a session is open to apply a set-up to. */
  canApply: boolean;
  onApply(s: SetupRecord | null): void;
  /** What the open session's lengths use now and where it came from (app/setups/calibration.ts), null without a session. */
  lengths?: string | null;
  onError(message: string): void;
  onClose(): void;
}

const newId = () => crypto.randomUUID();

/** A number input that keeps what is typed until it is a number. */
function NumberInput({ value, onChange, label, step = 'any', unit }: { value: number; onChange(v: number): void; label: string; step?: string; unit?: string }) {
  const [text, setText] = useState(String(value));
  useEffect(() => { if (Number(text) !== value) setText(String(value)); }, [value]); // eslint-disable-line react-hooks/exhaustive-deps
  return (
    <label className="field">
      <span>{label}</span>
      <input type="number" step={step} value={text} aria-label={label}
        onChange={(e) => { setText(e.target.value); const v = Number(e.target.value); if (e.target.value !== '' && Number.isFinite(v)) onChange(v); }} />
      {unit ? <span className="unit">{unit}</span> : <span />}
    </label>
  );
}

export function SetupsPanel(p: Props) {
  const [setups, setSetups] = useState<SetupRecord[]>([]);
  const [draft, setDraft] = useState<SetupRecord>(() => newSetup(newId(), ''));
  const [savedIds, setSavedIds] = useState<Set<string>>(new Set());
  const [confirmDelete, setConfirmDelete] = useState(false);
  const [dirty, setDirty] = useState(false);

  const reload = useCallback(async () => {
    try {
      const l = await p.store.list();
      setSetups(l.setups);
      setSavedIds(new Set(l.setups.map((s) => s.id)));
      for (const a of l.setAside) p.onError(`A stored set-up could not be read (${a.reason}); it was kept aside unchanged.`);
      return l.setups;
    } catch (e) { p.onError((e as Error).message); return []; }
  }, [p]);

  useEffect(() => {
    void reload().then((list) => {
      const cur = p.applied && list.find((s) => s.id === p.applied!.setupId);
      if (cur) setDraft(structuredClone(cur));
    });
  }, []); // eslint-disable-line react-hooks/exhaustive-deps

  const edit = (change: (d: SetupRecord) => void) => {
    setDraft((d) => { const c = structuredClone(d); change(c); return c; });
    setDirty(true);
    setConfirmDelete(false);
  };
  const problems = setupProblems(draft);
  const isSaved = savedIds.has(draft.id);

  const save = async (): Promise<SetupRecord | null> => {
    if (problems.length) return null;
    try {
      const rec = await p.store.save(draft);
      setDraft(rec);
      setDirty(false);
      await reload();
      return rec;
    } catch (e) { p.onError((e as Error).message); return null; }
  };
  const saveAndApply = async () => { const rec = dirty || !isSaved ? await save() : draft; if (rec) p.onApply(rec); };

  const t = draft.train;
  const px = draft.pixelSize;
  let umPerPx: number | null = null;
  try { umPerPx = setupPixelSizeUmPerPx(px); } catch { umPerPx = null; }
  const setPx = (source: PixelSizeSource['source']) => edit((d) => {
    const keep = (() => { try { return setupPixelSizeUmPerPx(d.pixelSize); } catch { return null; } })() ?? 1;
    d.pixelSize = source === 'none' ? { source } : source === 'optics' ? { source, cameraPixelUm: 3.45, objectiveMagnification: 10, intermediateMagnification: 1, binning: 1 }
      : source === 'typed' ? { source, pixelSizeUmPerPx: roundSig(keep, 6) } : { source, pixelSizeUmPerPx: roundSig(keep, 6), from: '' };
  });

  return (
    <section className="setups" aria-label="Set-ups">
      <header className="sessions-head">
        <h2>Set-ups</h2>
        <button onClick={() => { setDraft(newSetup(newId(), '')); setDirty(false); }}>New set-up</button>
        <button className="quiet" onClick={p.onClose} aria-label="Close the set-ups">Close</button>
      </header>
      <p className="note">A set-up describes the microscope once: polarisers, compensator, lamp, pixel size and the sample's sign. Applied to a session, it is used for all its images (its pixel size replaces the one in the files and one chosen earlier from a micrometer image; a micrometer pixel size chosen later replaces the set-up's).</p>
      {p.lengths && <p className="note" data-testid="setups-session-lengths">This session's lengths now: <strong>{p.lengths}</strong>.</p>}
      <div className="setups-body">
        <div className="setups-list">
          <h3>Saved</h3>
          {setups.length === 0 ? <p className="note">None yet: fill in the form and save it.</p> : (
            <ul>
              {setups.map((s) => (
                <li key={s.id} className={s.id === draft.id ? 'current' : ''}>
                  <button onClick={() => { setDraft(structuredClone(s)); setDirty(false); setConfirmDelete(false); }} title={setupSummary(s)}>
                    {s.name}{p.applied?.setupId === s.id ? ' (applied)' : ''}
                  </button>
                </li>
              ))}
            </ul>
          )}
          {p.applied && (
            <div className="applied-box">
              <p className="note" data-testid="applied-setup">Applied to this session: <strong>{p.applied.name}</strong> ({setupSummary(p.applied)})</p>
              <button className="quiet" onClick={() => p.onApply(null)}>Remove from this session</button>
            </div>
          )}
        </div>

        <form className="setup-form" onSubmit={(e) => { e.preventDefault(); void save(); }}>
          <label className="field"><span>Name</span><input value={draft.name} aria-label="Set-up name" placeholder="e.g. Bench 2, 10× with red plate" onChange={(e) => edit((d) => { d.name = e.target.value; })} /><span /></label>
          <fieldset>
            <legend>Optical train</legend>
            <NumberInput label="Polariser angle" unit="deg" value={t.polariserDeg} onChange={(v) => edit((d) => { d.train.polariserDeg = v; })} />
            <NumberInput label="Analyser angle" unit="deg" value={t.analyserDeg} onChange={(v) => edit((d) => { d.train.analyserDeg = v; })} />
            <label className="field">
              <span>Compensator</span>
              <select aria-label="Compensator" value={t.compensator?.kind ?? 'none'} onChange={(e) => edit((d) => {
                const k = e.target.value;
                d.train.compensator = k === 'none' ? null : { kind: k as 'full-wave' | 'quarter-wave', retardanceNm: k === 'full-wave' ? 550 : 136.5, axisDeg: d.train.compensator?.axisDeg ?? 45 };
              })}>
                <option value="none">none</option><option value="full-wave">full-wave plate</option><option value="quarter-wave">quarter-wave plate</option>
              </select><span />
            </label>
            {t.compensator && <>
              <NumberInput label="Compensator retardance" unit="nm" value={t.compensator.retardanceNm} onChange={(v) => edit((d) => { d.train.compensator!.retardanceNm = v; })} />
              <NumberInput label="Its slow axis" unit="deg" value={t.compensator.axisDeg} onChange={(v) => edit((d) => { d.train.compensator!.axisDeg = v; })} />
            </>}
            <label className="field">
              <span>Lamp</span>
              <input list="lamp-kinds" aria-label="Lamp" value={t.illuminant} onChange={(e) => edit((d) => { d.train.illuminant = e.target.value; })} />
              <span className="unit">K, D65 or A</span>
              <datalist id="lamp-kinds"><option value="3200K">halogen, 3200 K</option><option value="D65">daylight D65</option><option value="A">tungsten, CIE A</option><option value="5600K">5600 K blackbody (daylight-balanced; a white LED's spectrum differs)</option></datalist>
            </label>
            <p className="note">Angles counter-clockwise from the image's +x axis (to the right) as shown on screen.</p>
          </fieldset>

          <fieldset>
            <legend>Pixel size</legend>
            <div className="choices" role="radiogroup" aria-label="Pixel size from">
              {([['none', 'not set (lengths in px)'], ['optics', 'from the optics'], ['typed', 'typed in'], ['measured', 'measured on a micrometer']] as const).map(([k, label]) => (
                <label key={k}><input type="radio" name="px-source" checked={px.source === k} onChange={() => setPx(k)} /> {label}</label>
              ))}
            </div>
            {px.source === 'optics' && <>
              <NumberInput label="Camera pixel" unit="µm" value={px.cameraPixelUm} onChange={(v) => edit((d) => { if (d.pixelSize.source === 'optics') d.pixelSize.cameraPixelUm = v; })} />
              <NumberInput label="Objective" unit="×" value={px.objectiveMagnification} onChange={(v) => edit((d) => { if (d.pixelSize.source === 'optics') d.pixelSize.objectiveMagnification = v; })} />
              <NumberInput label="Camera adapter lens" unit="×" value={px.intermediateMagnification} onChange={(v) => edit((d) => { if (d.pixelSize.source === 'optics') d.pixelSize.intermediateMagnification = v; })} />
              <NumberInput label="Binning" unit="1 = none" step="1" value={px.binning} onChange={(v) => edit((d) => { if (d.pixelSize.source === 'optics') d.pixelSize.binning = v; })} />
            </>}
            {(px.source === 'typed' || px.source === 'measured') && (
              <NumberInput label="Pixel size" unit="µm/px" value={px.pixelSizeUmPerPx} onChange={(v) => edit((d) => { if (d.pixelSize.source === 'typed' || d.pixelSize.source === 'measured') d.pixelSize.pixelSizeUmPerPx = v; })} />
            )}
            {px.source === 'measured' && (
              <label className="field"><span>Measured on</span><input aria-label="Measured on" value={px.from} placeholder="micrometer image, date" onChange={(e) => edit((d) => { if (d.pixelSize.source === 'measured') d.pixelSize.from = e.target.value; })} /><span /></label>
            )}
            <p className="note" data-testid="setup-pixel-size">
              {umPerPx !== null ? <>Pixel size: <strong>{roundSig(umPerPx, 4)} µm/px</strong>{px.source === 'optics' ? ' = camera pixel × binning / (objective × adapter)' : ''}. Calibrate again for every objective, adapter and binning.</> : px.source === 'none' ? 'Lengths stay in pixels until a pixel size is set.' : 'Check the values above.'}
            </p>
          </fieldset>

          <fieldset>
            <legend>Sample</legend>
            <div className="choices" role="radiogroup" aria-label="Sample birefringence sign">
              <label><input type="radio" name="sign" checked={draft.sampleSign === 'positive'} onChange={() => edit((d) => { d.sampleSign = 'positive'; })} /> positive: slow axis along the fibres (most rods, nanotubes, drawn polymers)</label>
              <label><input type="radio" name="sign" checked={draft.sampleSign === 'negative'} onChange={() => edit((d) => { d.sampleSign = 'negative'; })} /> negative: fast axis along the fibres</label>
            </div>
          </fieldset>
          <label className="field"><span>Notes</span><input aria-label="Notes" value={draft.notes} onChange={(e) => edit((d) => { d.notes = e.target.value; })} /><span /></label>

          {problems.length > 0 && <ul className="warnings" data-testid="setup-problems">{problems.map((m) => <li key={m}>{m}</li>)}</ul>}
          <p className="note">The same set-up on the command line (colour readers; lengths):</p>
          <p className="cli" data-testid="setup-cli"><code>{setupCommandOptions(draft).train.join(' ')}</code>{setupCommandOptions(draft).lengths.length > 0 && <><br /><code>{setupCommandOptions(draft).lengths.join(' ')}</code></>}</p>
          {!crossedPolars(t) && <p className="note warn">The analyser is not crossed with the polariser. The colour readers of the command line assume crossed polarisers.</p>}
          <p className="buttons">
            <button type="submit" className="primary" disabled={problems.length > 0 || (!dirty && isSaved)}>{isSaved ? 'Save changes' : 'Save set-up'}</button>
            <button type="button" disabled={problems.length > 0 || !p.canApply} onClick={() => void saveAndApply()} title={p.canApply ? '' : 'Open or start a session first'}>
              {dirty || !isSaved ? 'Save and apply to this session' : 'Apply to this session'}
            </button>
            {isSaved && (confirmDelete
              ? <><button type="button" className="danger" onClick={async () => { await p.store.remove(draft.id); setDraft(newSetup(newId(), '')); setConfirmDelete(false); void reload(); }}>Delete for good</button><button type="button" className="quiet" onClick={() => setConfirmDelete(false)}>Keep</button></>
              : <button type="button" className="quiet" onClick={() => setConfirmDelete(true)}>Delete…</button>)}
          </p>
          {isSaved && !dirty && <p className="note">Saved. Sessions keep a copy of the set-up they were given, so later changes here do not alter them until it is applied again.</p>}
        </form>
      </div>
    </section>
  );
}
