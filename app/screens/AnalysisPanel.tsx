/**
 * The analyses of the image shown: the texture orientation, the other analyses (MoreAnalyses) and the profile
 * across the channel, each with its numbers, its `retarda` command line and its files.
 */
import { useEffect, useRef } from 'react';
import { WallsEditor } from '../components/WallsEditor.tsx';
import { ColourKey } from '../components/ColourKey.tsx';
import { ProfilePlot } from '../components/ProfilePlot.tsx';
import { OrientTable, ProfileTable } from '../components/Results.tsx';
import { ResultCaution } from '../components/Cautions.tsx';
import { MoreAnalyses } from '../components/MoreAnalyses.tsx';
import { orientIsStale, profileIsStale } from '../state/session.ts';
import { SETTING_LIMITS, type AnalysisSettings } from '../storage/index.ts';
import { download, orientCsv, profileBinsCsv, profileCsv } from '../export/rows.ts';
import { opticalCommandLine, orientCommandLine, orientOptionsOf, profileRequestOf, textureProfileCommandLine } from '../analysis/requests.ts';
import { AXIS_DEG_LIMIT, withinLimit } from '../../src/common/index.ts';
import { wallsText } from '../../src/channel/index.ts';
import type { ProfileResult } from '../../src/analyses/index.ts';
import { setWalls } from './Stage.tsx';
import type { Workspace } from './workspace.ts';

/** The command line of a profile: the texture's from the settings, an optical reading's from the reading that made it. */
function profileCommand(w: Workspace, profile: ProfileResult, name: string): string {
  const s = w.sessions.session!.settings;
  const id = w.analysis.active!.id;
  const work = w.sessions.session!.work[id];
  if (profile.fieldMethod === 'texture') return textureProfileCommandLine(name, orientOptionsOf(s), profileRequestOf(s, work.walls!, !!work.wallsFound, true));
  const made = w.analysis.profileReading[id];
  return made ? opticalCommandLine(made.reading, made.request) : `retarda ${profile.fieldMethod === 'plate' ? 'profile --source plate' : profile.fieldMethod} … with the reading's options`;
}

export function AnalysisPanel({ w }: { w: Workspace }) {
  const { session, change } = w.sessions;
  const a = w.analysis;
  const { active, busy, engine, shown, drawing, setDrawing, opticalHere, showOptical } = a;
  const profileNow = (active && session?.work[active.id]?.profile) ?? null;
  const profileView = useRef<HTMLDivElement>(null);
  const seen = useRef<{ id: string | null; profile: unknown }>({ id: null, profile: null });
  useEffect(() => {
    // A new profile of the image already shown (not another image's, brought up by switching) is scrolled into
    // view: it appears below the button, often under the panel's fold.
    const id = active?.id ?? null;
    if (profileNow && id === seen.current.id && profileNow !== seen.current.profile) {
      requestAnimationFrame(() => profileView.current?.scrollIntoView?.({ block: 'start', behavior: 'smooth' }));
    }
    seen.current = { id, profile: profileNow };
  }, [active?.id, profileNow]);
  if (!session || !active) return null;
  const settings = session.settings;
  const work = session.work[active.id] ?? null;
  const orient = work?.orient ?? null, profile = work?.profile ?? null, walls = work?.walls ?? null;
  const base = active.name.replace(/\.[^.]+$/, '');
  const disabled = !!busy || engine === 'failed';
  const setSetting = (c: Partial<AnalysisSettings>) => change({ type: 'settings', change: c });
  /** A number setting with the range the analysis checks (SETTING_LIMITS); a value outside it is not taken. */
  const numberField = (label: string, key: keyof typeof SETTING_LIMITS, step: number) => {
    const l = SETTING_LIMITS[key];
    return (
      <label className="field">
        <span>{label}</span>
        <input type="number" min={l.min} max={l.max} step={step} value={settings[key]}
          onChange={(e) => { const v = Number(e.target.value); if (e.target.value !== '' && withinLimit(l, v)) setSetting({ [key]: v }); }} />
        {'unit' in l && l.unit && <span className="unit">{l.unit}</span>}
      </label>
    );
  };
  return (
    <aside className="panel" aria-label="Analysis">
      <section data-testid="orient-section" data-worker-ms={JSON.stringify(a.workerTimes)} data-helper-tiles={a.helperTiles}>
        <h2>Orientation</h2>
        {numberField('Texture scale σ', 'sigmaPx', 0.5)}
        <label className="field">
          <span>Pixel weights</span>
          <select value={settings.weighting} onChange={(e) => setSetting({ weighting: e.target.value as AnalysisSettings['weighting'] })}>
            <option value="coherency">coherency</option><option value="none">equal</option><option value="strength">texture strength</option><option value="strength-coherency">texture strength × coherency</option>
          </select>
        </label>
        <label className="field">
          <span>Reference axis</span>
          <input type="number" step={1} min={AXIS_DEG_LIMIT.min} max={AXIS_DEG_LIMIT.max} placeholder="none" value={settings.axisDeg ?? ''}
            onChange={(e) => setSetting({ axisDeg: e.target.value === '' ? null : Number(e.target.value) })} />
          <span className="unit">deg</span>
        </label>
        <button className="primary" disabled={disabled} onClick={() => void a.runOrient()} title="Shortcut: O">Analyse orientation</button>
        {a.mode !== 'none' && orient && <ColourKey />}
        {orient && <OrientTable r={orient} stale={orientIsStale(orient, settings)} />}
        {orient && <p className="cli" title="Run this to get the same numbers from the command line"><code>{orientCommandLine(active.name, orientOptionsOf(settings))}</code></p>}
        {orient && (
          <p className="exports">
            Save: <button onClick={() => download(`${base}-orient.json`, JSON.stringify(orient, null, 2), 'application/json')}>JSON</button>
            <button onClick={() => download(`${base}-orient.csv`, orientCsv(orient), 'text/csv')}>CSV</button>
          </p>
        )}
      </section>

      <MoreAnalyses
        handle={w.more}
        ctx={{ client: a.client, images: session.images, activeId: active.id, plates: w.intake.plates, sourceOf: a.sourceOf, runJob: a.runJob, disabled, drawRect: w.rects.drawRect, showBoxes: w.rects.showBoxes }}
        work={work} pixelSize={session.pixelSize ?? null} opticalMapShown={opticalHere !== null}
        onField={a.chooseOptical}
        onMarks={(imageId, m) => a.setMarks({ imageId, marks: m })}
        onDiameter={(id, d, run) => change({ type: 'diameter', id, result: d, run })}
        onOptics={(id, reading) => change({ type: 'optics', id, reading })}
        onMicrometer={(id, calibration) => change({ type: 'micrometer', id, calibration })}
        onPixelSize={(pixelSize) => w.recalibrate({ type: 'pixelSize', pixelSize }, '')} calibration={w.calibration}
      />

      <section>
        <h2>Across the channel</h2>
        <p className="note" data-testid="profile-field">Field: {showOptical ? `${opticalHere!.label} (the reading above)` : 'texture (structure tensor)'}{opticalHere ? '; switch with “Field” above the image.' : ''}</p>
        <p className="buttons">
          <button className={drawing ? 'on' : ''} aria-pressed={drawing} disabled={!shown} onClick={() => setDrawing((d) => !d)} title="Shortcut: W">{drawing ? 'Cancel drawing' : 'Draw walls'}</button>
          <button disabled={!!busy || !shown} onClick={() => void a.runFindWalls()} title="Shortcut: F">Find walls</button>
          {walls && <button className="quiet" onClick={() => change({ type: 'walls', id: active.id, channel: null, found: false })}>Clear walls</button>}
        </p>
        {walls && <WallsEditor key={wallsText(walls.walls)} walls={walls} found={!!work?.wallsFound} fit={work?.wallFit} onChange={(channel) => setWalls(w, active.id, channel)} />}
        {numberField('Bins across', 'bins', 1)}
        {numberField('Stations along', 'stations', 1)}
        {numberField('Core: position |s| below', 'coreMax', 0.05)}
        {numberField('Skin: position |s| above', 'skinMin', 0.05)}
        <button className="primary" disabled={!!busy || !walls} onClick={() => void a.runProfile()} title="Shortcut: P">Profile across the channel</button>
        <div ref={profileView} />
        {profile && <ProfilePlot r={profile} />}
        {profile && <ProfileTable r={profile} stale={profileIsStale(profile, settings)} onRemedy={profile.fieldMethod === 'plate' ? (r) => w.more.current?.remedy(r) : undefined} />}
        {profile && walls && <p className="cli"><code data-testid="profile-cli">{profileCommand(w, profile, active.name)}</code></p>}
        {profile && (
          <p className="exports">
            Save: <button onClick={() => download(`${base}-profile.json`, JSON.stringify(profile, null, 2), 'application/json')}>JSON</button>
            <button onClick={() => download(`${base}-profile.csv`, profileCsv(profile), 'text/csv')}>CSV (summary)</button>
            <button onClick={() => download(`${base}-profile-bins.csv`, profileBinsCsv(profile), 'text/csv')}>CSV (bins)</button>
          </p>
        )}
      </section>
      <ResultCaution />
    </aside>
  );
}
