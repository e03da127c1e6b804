/**
 * The analyses beyond the texture field, one at a time: readings from polarised-light colours, fibre
 * diameter, micrometer calibration and the fibre-numbers calculator. Results carry over where they
 * belong: the micrometer's pixel size to the diameters, the mean diameter and the median retardance
 * to the fibre numbers.
 */
import { useImperativeHandle, useMemo, useRef, useState, type Ref } from 'react';
import { flushSync } from 'react-dom';
import { OpticalPanel, type OpticalField, type OpticalPanelHandle, type PanelContext, type PanelHandle } from './OpticalPanel.tsx';
import type { Remedy } from './NotDetermined.tsx';
import { calibrationWords, isMeasured, umPerPxText, type Calibration } from '../setups/calibration.ts';
import { DiameterPanel, FibreNumbersPanel } from './FibrePanels.tsx';
import { MicrometerPanel } from './MicrometerPanel.tsx';
import type { Mark } from './Viewer.tsx';
import type { DiameterDocument } from '../../src/analyses/index.ts';
import type { ImageWork, SessionPixelSize, StoredDiameterRun, StoredMicrometer, StoredOptics } from '../storage/records.ts';

export type { OpticalField, PanelContext } from './OpticalPanel.tsx';

type Tab = 'optical' | 'diameter' | 'micrometer' | 'numbers';
const TABS: [Tab, string][] = [['optical', 'Polarised colours'], ['diameter', 'Fibre diameter'], ['micrometer', 'Micrometer'], ['numbers', 'Fibre numbers']];

/**
 * What the keyboard shortcuts do here: go to the next (or previous) tab, and run the shown tab's analysis; and
 * the remedies for withheld one-image numbers offered elsewhere (the profile table): they open the optical tab.
 */
export interface MoreAnalysesHandle { stepTab(by: 1 | -1): void; runShown(): void; remedy(r: Remedy): void }

interface Props {
  ctx: PanelContext;
  /** What the session keeps for the image shown (its optical reading and micrometer calibration). */
  work: ImageWork | null;
  /** The session's pixel size chosen from a micrometer image (the micrometer panel offers to stop using it). */
  pixelSize: SessionPixelSize | null;
  /** The pixel size the image shown is measured with and where it came from (app/setups/calibration.ts). */
  calibration: Calibration;
  /** Whether the viewer holds the optical reading's maps for the image shown. */
  opticalMapShown: boolean;
  onField(f: OpticalField): void;
  onMarks(imageId: string, marks: Mark[]): void;
  /** A diameter result for an image, kept with the session (Compare shows it). */
  onDiameter(imageId: string, d: DiameterDocument, run: StoredDiameterRun): void;
  onOptics(imageId: string, reading: StoredOptics): void;
  onMicrometer(imageId: string, c: StoredMicrometer): void;
  onPixelSize(p: SessionPixelSize | null): void;
  handle?: Ref<MoreAnalysesHandle>;
}

export function MoreAnalyses({ ctx, work, pixelSize, calibration, opticalMapShown, onField, onMarks, onDiameter, onOptics, onMicrometer, onPixelSize, handle }: Props) {
  const [tab, setTab] = useState<Tab>('optical');
  const optical = useRef<OpticalPanelHandle>(null);
  const panels: Record<Tab, { current: PanelHandle | null }> = { optical, diameter: useRef<PanelHandle>(null), micrometer: useRef<PanelHandle>(null), numbers: useRef<PanelHandle>(null) };
  const tabButtons = useRef(new Map<Tab, HTMLButtonElement>());
  useImperativeHandle(handle, () => ({
    stepTab: (by) => {
      const next = TABS[(TABS.findIndex(([t]) => t === tab) + by + TABS.length) % TABS.length][0];
      setTab(next);
      // Focus moves to the tab, so the panel scrolls into view and Tab / Enter carry on from there.
      tabButtons.current.get(next)?.focus();
    },
    runShown: () => panels[tab].current?.run(),
    remedy: (r) => {
      // The optical tab is shown first, so the field the remedy focuses is on screen.
      flushSync(() => setTab('optical'));
      optical.current?.remedy(r);
    },
  }));
  const [diameterUm, setDiameterUm] = useState<number | null>(null);
  const [retardanceNm, setRetardanceNm] = useState<number | null>(null);
  const optics = work?.optics ?? null;
  const diameterDoc = work?.diameter ?? null, diameterRun = work?.diameterRun ?? null;
  const diameterStored = useMemo(() => (diameterDoc ? { doc: diameterDoc, run: diameterRun } : null), [diameterDoc, diameterRun]);
  // The diameter panel measures with the session's calibration; the file's own pixel size it reads itself (and says so).
  // The session's own record is passed on when it is the one in use, so whatever else it carries goes with it.
  const chosen = pixelSize && pixelSize.umPerPx === calibration.umPerPx ? pixelSize : null;
  const lengthsPixelSize: SessionPixelSize | null = calibration.umPerPx === null || calibration.origin === 'file' ? null
    : { ...chosen, umPerPx: calibration.umPerPx, from: calibration.from };
  // Diameters kept from before the calibration changed are not silently shown as if measured with the new one.
  const keptPx = diameterDoc?.pixelSizeUmPerPx ?? null;
  const diameterOutdated = diameterDoc !== null && (keptPx ?? null) !== calibration.umPerPx && !(diameterRun?.form.umPerPx.trim());
  return (
    <section aria-label="More analyses">
      <h2>More analyses</h2>
      <div className="tabs" role="tablist">
        {TABS.map(([t, label]) => (
          <button key={t} role="tab" ref={(b) => { if (b) tabButtons.current.set(t, b); else tabButtons.current.delete(t); }} title="Shortcut: M (next), Shift+M (previous)" aria-selected={tab === t} className={tab === t ? 'on' : ''} onClick={() => setTab(t)}>{label}</button>
        ))}
      </div>
      {/* Panels stay mounted so their settings survive switching tabs; results are kept with the session. */}
      <div hidden={tab !== 'optical'}>
        <OpticalPanel handle={optical} visible={tab === 'optical'} ctx={ctx} stored={optics} mapShown={opticalMapShown} onField={onField}
          onReading={(id, r) => { setRetardanceNm(r.result.retardanceNmMedian); onOptics(id, r); }} />
      </div>
      <div hidden={tab !== 'diameter'}>
        {/* With a pixel size given to it the panel names it itself; the file's own (or none) is said here. */}
        {!lengthsPixelSize && <p className="note calibration-line" data-testid="diameter-calibration">Lengths: {calibrationWords(calibration)}.</p>}
        {diameterOutdated && (
          <p className="note warn" data-testid="diameter-outdated">The diameters below were measured {keptPx === null ? 'in px, without a pixel size' : `with ${umPerPxText(keptPx, isMeasured(diameterRun?.pixelSizeFrom ?? ''))} µm/px`}; the
            session now uses {calibration.umPerPx === null ? 'none' : `${umPerPxText(calibration.umPerPx, calibration.origin === 'micrometer')} µm/px`}. Measure again to have them in the session's calibration.</p>
        )}
        <DiameterPanel handle={panels.diameter} ctx={ctx} pixelSize={lengthsPixelSize} stored={diameterStored} onMarks={onMarks}
          onResult={(id, d, run) => {
            setDiameterUm(d.meanUm);
            // Where the pixel size came from, kept with the result for the report and Compare.
            const from = d.pixelSizeUmPerPx === null ? undefined : run.form.umPerPx.trim() ? 'value typed in the diameter form' : d.pixelSizeFrom === 'file' ? "file's resolution tags" : calibration.from;
            onDiameter(id, d, { ...run, ...(from ? { pixelSizeFrom: from } : {}) });
          }} />
      </div>
      <div hidden={tab !== 'micrometer'}><MicrometerPanel handle={panels.micrometer} ctx={ctx} pixelSize={pixelSize} stored={work?.micrometer ?? null} onUse={onPixelSize} onCalibration={onMicrometer} /></div>
      <div hidden={tab !== 'numbers'}>
        <FibreNumbersPanel handle={panels.numbers} ctx={ctx} measuredDiameterUm={diameterUm ?? work?.diameter?.meanUm ?? null} measuredDiameter={work?.diameter ?? null} measuredRetardanceNm={retardanceNm ?? optics?.result.retardanceNmMedian ?? null} />
      </div>
    </section>
  );
}
