/** The image shown, with its overlay (orientation colours, coherency or confidence, direction lines, retardance) and the view's tools. */
import { useMemo } from 'react';
import { Viewer, type OverlayMode } from '../components/Viewer.tsx';
import { ViewExports } from '../export/ViewExports.tsx';
import { requestFieldTiff } from '../export/fieldTiff.ts';
import { diameterMarks } from '../components/FibrePanels.tsx';
import { calibrationWords } from '../setups/calibration.ts';
import { snapWalls, type Channel } from '../../src/channel/index.ts';
import type { Workspace } from './workspace.ts';

/** The words of each overlay on its button (the optical readings' per-pixel layer is their confidence). */
const overlayWords = (m: OverlayMode, optical: boolean) =>
  m === 'none' ? 'image' : m === 'colour' ? 'orientation' : m === 'coherency' ? (optical ? 'confidence' : 'coherency') : m === 'retardance' ? 'retardance' : 'direction lines';

/** Walls drawn or dragged by hand, kept to a tenth of a pixel so their --walls text is exact and short. */
export const setWalls = (w: Workspace, id: string, channel: Channel | null) =>
  w.sessions.change({ type: 'walls', id, channel: channel && snapWalls(channel), found: false });

export function Stage({ w }: { w: Workspace }) {
  const a = w.analysis;
  const { shown, active, mode, setMode, opacity, setOpacity, drawing, setDrawing, opticalHere, showOptical, marks } = a;
  const work = active ? w.sessions.session?.work[active.id] ?? null : null;
  const orient = work?.orient ?? null;
  // The kept diameters' edges are drawn again after a reload (until a new run sets the marks).
  const keptDiameter = work?.diameter ?? null;
  const keptMarks = useMemo(() => (keptDiameter ? diameterMarks(keptDiameter) : undefined), [keptDiameter]);
  if (!active) return null;
  const modes: OverlayMode[] = ['none', 'colour', 'coherency', 'glyphs', ...(showOptical && opticalHere!.retardanceRangeNm ? ['retardance' as const] : [])];
  const fieldTiff = orient && !showOptical ? async () => {
    const src = a.sourceOf(active.id);
    if (!src) throw new Error('the image is no longer in the session');
    await a.client.ensure(src);
    // Same description as `retarda orient NAME --field-out FILE.tif`, so the bytes match.
    return requestFieldTiff(a.client, { key: active.id, options: { sigmaPx: Number(orient.options.sigmaPx) }, description: `retarda orient ${active.name}` });
  } : undefined;
  return (
    <section className="stage">
      <div className="toolbar" role="toolbar" aria-label="View">
        <span className="group">
          Show:
          {modes.map((m, i) => (
            <button key={m} className={mode === m ? 'on' : ''} aria-pressed={mode === m} onClick={() => setMode(m)} title={m === 'retardance' ? 'Retardance map (colour bar in the reading panel)' : `Shortcut: ${i + 1}`}>
              {overlayWords(m, showOptical)}
            </button>
          ))}
        </span>
        {opticalHere && (
          <span className="group" role="group" aria-label="Field shown and used for the profile">
            Field:
            <button className={!showOptical ? 'on' : ''} aria-pressed={!showOptical} onClick={a.chooseTexture}>texture</button>
            <button className={showOptical ? 'on' : ''} aria-pressed={showOptical} onClick={() => a.setFieldChoice('optical')}>{opticalHere.label}</button>
          </span>
        )}
        <label className="group">opacity <input type="range" min={0} max={1} step={0.05} value={opacity} onChange={(e) => setOpacity(Number(e.target.value))} /></label>
        <span className="group">
          <button onClick={() => w.viewer.current?.zoomBy(0.8)} aria-label="Zoom out">−</button>
          <button onClick={() => w.viewer.current?.fit()}>Fit</button>
          <button onClick={() => w.viewer.current?.zoomBy(1.25)} aria-label="Zoom in">+</button>
        </span>
        <ViewExports picture={w.report.viewPicture()} baseName={active.name.replace(/\.[^.]+$/, '')} onError={(m) => w.say('error', m)}
          onReport={() => void w.report.openReport()} fieldTiff={fieldTiff} />
      </div>
      {shown && shown.imageId === active.id ? (
        <Viewer
          handle={w.viewer} image={shown.image} imageWidth={shown.summary.width} imageHeight={shown.summary.height}
          colour={showOptical ? opticalHere!.colour : shown.colour} coherency={showOptical ? opticalHere!.confidence : shown.coherency}
          glyphs={(showOptical ? opticalHere!.glyphs : shown.glyphs) ?? []} retardance={showOptical ? opticalHere!.retardance : null} mode={mode} opacity={opacity}
          marks={marks && marks.imageId === active.id ? marks.marks : keptMarks}
          walls={work?.walls ?? null} stations={w.report.stationLines} drawing={drawing} {...w.rects.viewer}
          onWalls={(channel) => setWalls(w, active.id, channel)}
          onDrawingDone={() => setDrawing(false)}
        />
      ) : <div className="viewer placeholder">Opening {active.name}…</div>}
      {shown && shown.imageId === active.id && (
        <p className="image-facts" data-testid="image-facts">
          {shown.summary.width} × {shown.summary.height} px, {shown.summary.channels === 1 ? 'grey' : 'RGB'}, {shown.summary.bitDepth}-bit, <span data-testid="image-calibration">{calibrationWords(w.calibration)}</span>
          {shown.summary.displayNote ? `; ${shown.summary.displayNote}` : ''}
        </p>
      )}
    </section>
  );
}
