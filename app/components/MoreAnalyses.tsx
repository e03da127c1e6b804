/**
 * The analyses beyond the texture field, one at a time: readings from polarised-light colours, fibre
 * diameter, micrometer calibration and the fibre-numbers calculator. Results carry over where they
 * belong: the micrometer's pixel size to the diameters, the mean diameter and the median retardance
 * to the fibre numbers.
 */
import { useState } from 'react';
import { OpticalPanel, type OpticalField, type PanelContext } from './OpticalPanel.tsx';
import { DiameterPanel, FibreNumbersPanel, MicrometerPanel, type SessionPixelSize } from './FibrePanels.tsx';
import type { Mark } from './Viewer.tsx';
import type { DiameterDocument } from '../../src/analyses/index.ts';

export type { OpticalField, PanelContext } from './OpticalPanel.tsx';

type Tab = 'optical' | 'diameter' | 'micrometer' | 'numbers';
const TABS: [Tab, string][] = [['optical', 'Polarised colours'], ['diameter', 'Fibre diameter'], ['micrometer', 'Micrometer'], ['numbers', 'Fibre numbers']];

interface Props {
  ctx: PanelContext;
  onField(f: OpticalField): void;
  onMarks(imageId: string, marks: Mark[]): void;
  /** A diameter result for an image, kept with the session (Compare shows it). */
  onDiameter(imageId: string, d: DiameterDocument): void;
}

export function MoreAnalyses({ ctx, onField, onMarks, onDiameter }: Props) {
  const [tab, setTab] = useState<Tab>('optical');
  const [pixelSize, setPixelSize] = useState<SessionPixelSize | null>(null);
  const [diameterUm, setDiameterUm] = useState<number | null>(null);
  const [retardanceNm, setRetardanceNm] = useState<number | null>(null);
  return (
    <section aria-label="More analyses">
      <h2>More analyses</h2>
      <div className="tabs" role="tablist">
        {TABS.map(([t, label]) => (
          <button key={t} role="tab" aria-selected={tab === t} className={tab === t ? 'on' : ''} onClick={() => setTab(t)}>{label}</button>
        ))}
      </div>
      {/* Panels stay mounted so their settings and results survive switching tabs. */}
      <div hidden={tab !== 'optical'}><OpticalPanel ctx={ctx} onField={onField} onResult={(r) => setRetardanceNm(r.retardanceNmMedian)} /></div>
      <div hidden={tab !== 'diameter'}><DiameterPanel ctx={ctx} pixelSize={pixelSize} onMarks={onMarks} onResult={(id, d) => { setDiameterUm(d.meanUm); onDiameter(id, d); }} /></div>
      <div hidden={tab !== 'micrometer'}><MicrometerPanel ctx={ctx} pixelSize={pixelSize} onUse={setPixelSize} /></div>
      <div hidden={tab !== 'numbers'}><FibreNumbersPanel ctx={ctx} measuredDiameterUm={diameterUm} measuredRetardanceNm={retardanceNm} /></div>
    </section>
  );
}
