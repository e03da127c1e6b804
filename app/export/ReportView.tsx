/**
 * The printable report: a plain page with the session's numbers, intervals, n, settings, command
 * lines and calibration state, laid out for paper by the print rules in styles.css. "Print" opens
 * the browser's print dialogue (which also saves as PDF).
 */
import { Warnings } from '../components/Results.tsx';
import { useEffect, useState } from 'react';
import { formatCell } from '../../src/report/index.ts';
import { NOT_DETERMINED } from '../../src/analyses/index.ts';
import type { ReportContent } from './reportContent.ts';

interface Props {
  content: ReportContent;
  /** A displayable picture of an image (object URL), or null when the browser cannot show its format. */
  picture(imageId: string): Promise<string | null>;
  /** The current view (with its overlay, scale bar and legend) of one image, when there is one. */
  view: { imageId: string; url: string } | null;
  onClose(): void;
}

const f = (v: number | null) => formatCell(v);

export function ReportView({ content, picture, view, onClose }: Props) {
  const [urls, setUrls] = useState<Record<string, string | null>>({});
  useEffect(() => {
    let stop = false;
    const made: string[] = [];
    void (async () => {
      const out: Record<string, string | null> = {};
      for (const img of content.images) {
        if (view?.imageId === img.id) continue;
        const u = await picture(img.id).catch(() => null);
        if (u) made.push(u);
        out[img.id] = u;
      }
      if (!stop) setUrls(out);
    })();
    return () => { stop = true; made.forEach((u) => URL.revokeObjectURL(u)); };
  }, [content, picture, view]);

  return (
    <div className="report-backdrop">
      <article className="report" aria-label="Printable report" data-testid="report">
        <p className="report-actions no-print">
          <button className="primary" onClick={() => window.print()}>Print…</button>
          <button className="quiet" onClick={onClose}>Close the report</button>
        </p>
        <h1>{content.title}</h1>
        <p className="note">Made {new Date(content.madeAt).toLocaleString()} with Retarda, on this device.</p>
        <p className="report-note" data-testid="report-note"><strong>Note.</strong> {content.note}</p>
        <section>
          <h2>Set-up</h2>
          {content.setup ? <>
            <p><strong>{content.setup.name}</strong>: {content.setup.summary}</p>
            <p className="cli"><code>{content.setup.commandOptions.join(' ')}</code></p>
          </> : <p>No set-up applied: the optical train is the command line's default.</p>}
          <p data-testid="report-lengths">Lengths: {content.lengths ?? 'pixel sizes from the image files where they give one, else px.'}</p>
        </section>
        {content.images.map((img) => (
          <section key={img.id} className="report-image">
            <h2>{img.name}</h2>
            <p className="note">{img.facts}; pixel size: <span data-testid="report-calibration">{img.calibration}</span></p>
            {view?.imageId === img.id ? <img src={view.url} alt={`Current view of ${img.name}`} className="report-picture" />
              : urls[img.id] ? <img src={urls[img.id]!} alt={img.name} className="report-picture" /> : urls[img.id] === null ? <p className="note">(no preview: the browser cannot show this file format)</p> : null}
            {img.sections.map((s) => (
              <div key={s.title} className="report-section">
                <h3>{s.title}</h3>
                <table className="results">
                  <thead><tr><th>quantity</th><th>value</th><th>95 % interval</th><th>n</th></tr></thead>
                  <tbody>
                    {s.numbers.map((n) => (
                      n.notDetermined
                        ? <tr key={n.label}><th scope="row">{n.label}</th><td className="not-determined">{NOT_DETERMINED}</td><td colSpan={2} className="not-determined-why">{n.notDetermined}</td></tr>
                        : <tr key={n.label}><th scope="row">{n.label}</th><td>{f(n.value)}{n.unit ? ` ${n.unit}` : ''}</td><td>{n.ci ? `${f(n.ci[0])} – ${f(n.ci[1])}` : '–'}</td><td>{n.n !== null ? f(n.n) : '–'}</td></tr>
                    ))}
                  </tbody>
                </table>
                <p className="note">Settings: {s.settings.join('; ')}.</p>
                {s.commandLine && <p className="cli"><code>{s.commandLine}</code></p>}
                <Warnings list={s.warnings} />
              </div>
            ))}
          </section>
        ))}
        {content.images.length === 0 && <p>No image of this session has been analysed yet.</p>}
        {content.notAnalysed.length > 0 && <p className="note">Not analysed, so not in this report: {content.notAnalysed.join(', ')}.</p>}
      </article>
    </div>
  );
}
