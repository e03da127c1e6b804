/**
 * Compare: the analysed images of one or several sessions side by side: their S profiles overlaid
 * on one plot with interval bands, and a sortable table of core, skin, ratio and diameter.
 */
import { useEffect, useMemo, useState } from 'react';
import { formatCell } from '../../src/report/index.ts';
import { NOT_DETERMINED } from '../../src/analyses/index.ts';
import type { SessionRecord, SessionStore, SessionSummary } from '../storage/index.ts';
import { download } from '../export/rows.ts';
import {
  compareCsv, compareRows, hasDiameterIn, mixedBands, pixelSizeNote, plotRange, profileSeries, rowLabel, sortRows,
  type CompareRow, type ProfileSeries, type SortColumn, type SortOrder,
} from './compareRows.ts';

interface Props {
  store: SessionStore;
  current: SessionRecord | null;
  onError(message: string): void;
  onClose(): void;
}

const f = (v: number | null) => formatCell(v);
const ci = (lo: number | null, hi: number | null) => (lo === null || hi === null ? '' : `${f(lo)} – ${f(hi)}`);

const W = 620, H = 320, M = { l: 48, r: 12, t: 14, b: 44 };

function OverlayPlot({ series, hidden }: { series: ProfileSeries[]; hidden: Set<string> }) {
  const shown = series.filter((s) => !hidden.has(s.key));
  const [yMin, yMax] = plotRange(shown);
  const x = (s: number) => M.l + ((s + 1) / 2) * (W - M.l - M.r);
  const y = (v: number) => M.t + (1 - (v - yMin) / (yMax - yMin)) * (H - M.t - M.b);
  const ticks: number[] = [];
  for (let v = yMin; v <= yMax + 1e-9; v += 0.2) ticks.push(Math.round(v * 10) / 10);
  return (
    <svg className="plot compare-plot" viewBox={`0 0 ${W} ${H}`} role="img" aria-label="S across the channel of each compared image, with 95 % interval bands" data-testid="compare-plot">
      {ticks.map((v) => (
        <g key={v}>
          <line x1={M.l} x2={W - M.r} y1={y(v)} y2={y(v)} className={v === 0 ? 'plot-zero' : 'plot-grid'} />
          <text x={M.l - 6} y={y(v) + 4} textAnchor="end" className="plot-tick">{v.toFixed(1)}</text>
        </g>
      ))}
      {[-1, -0.5, 0, 0.5, 1].map((s) => <text key={s} x={x(s)} y={H - M.b + 16} textAnchor="middle" className="plot-tick">{s}</text>)}
      <text x={(x(-1) + x(1)) / 2} y={H - 6} textAnchor="middle" className="plot-label">s across the channel (−1 first wall, +1 second wall)</text>
      <text x={14} y={(M.t + H - M.b) / 2} textAnchor="middle" transform={`rotate(-90 14 ${(M.t + H - M.b) / 2})`} className="plot-label">S_axis</text>
      {shown.map((s) => s.points.length > 0 && (
        <polygon key={`band-${s.key}`} fill={s.colour} fillOpacity={0.16} stroke="none"
          points={[...s.points.map((p) => `${x(p.s)},${y(p.ciHigh)}`), ...[...s.points].reverse().map((p) => `${x(p.s)},${y(p.ciLow)}`)].join(' ')} />
      ))}
      {shown.map((s) => (
        <g key={`line-${s.key}`}>
          <polyline fill="none" stroke={s.colour} strokeWidth={2.2} strokeDasharray={s.dash} points={s.points.map((p) => `${x(p.s)},${y(p.order)}`).join(' ')} />
          {s.points.map((p) => <circle key={p.s} cx={x(p.s)} cy={y(p.order)} r={2.6} fill={s.colour}><title>{`${s.label} — s ${p.s.toFixed(2)}: S ${p.order.toFixed(3)} (95 % ${p.ciLow.toFixed(3)}..${p.ciHigh.toFixed(3)}), n ${p.n}`}</title></circle>)}
        </g>
      ))}
    </svg>
  );
}

const COLUMNS: { key: SortColumn; label: string }[] = [
  { key: 'image', label: 'Image' }, { key: 'coreOrder', label: 'Core S' }, { key: 'skinOrder', label: 'Skin S' },
  { key: 'ratio', label: 'Core / skin' }, { key: 'diameterUm', label: 'Diameter, µm' }, { key: 'diameterPx', label: 'Diameter, px' },
];

export function CompareView(p: Props) {
  const [summaries, setSummaries] = useState<SessionSummary[]>([]);
  const [chosen, setChosen] = useState<Set<string>>(new Set(p.current ? [p.current.id] : []));
  const [loaded, setLoaded] = useState<Map<string, SessionRecord>>(new Map());
  const [order, setOrder] = useState<SortOrder>({ column: 'session', descending: false });
  const [hidden, setHidden] = useState<Set<string>>(new Set());

  useEffect(() => {
    p.store.list().then((l) => setSummaries(l.sessions), (e: Error) => p.onError(e.message));
  }, [p.store]); // eslint-disable-line react-hooks/exhaustive-deps

  // The open session is used as it is now (it may hold changes not yet written); others are read from storage.
  useEffect(() => {
    let stop = false;
    (async () => {
      const next = new Map<string, SessionRecord>();
      for (const id of chosen) {
        if (p.current && id === p.current.id) { next.set(id, p.current); continue; }
        const s = loaded.get(id) ?? await p.store.load(id).catch((e: Error) => { p.onError(e.message); return null; });
        if (s) next.set(id, s);
      }
      if (!stop) setLoaded(next);
    })();
    return () => { stop = true; };
  }, [chosen, p.current]); // eslint-disable-line react-hooks/exhaustive-deps

  const sessions = useMemo(() => summaries.filter((s) => chosen.has(s.id)).map((s) => loaded.get(s.id)).filter((s): s is SessionRecord => !!s), [summaries, chosen, loaded]);
  const several = sessions.length > 1;
  const rows = useMemo(() => compareRows(sessions), [sessions]);
  const sorted = useMemo(() => sortRows(rows, order), [rows, order]);
  const series = useMemo(() => profileSeries(rows, several), [rows, several]);
  const colourOf = new Map(series.map((s) => [s.key, s]));
  const included = sorted.filter((r) => !hidden.has(r.key));
  // A length and a pixel count never share a column: one column per unit present.
  const columns = COLUMNS.filter((c) => (c.key === 'diameterUm' ? hasDiameterIn(rows, 'um') : c.key === 'diameterPx' ? hasDiameterIn(rows, 'px') || !hasDiameterIn(rows, 'um') : true));
  const diameterCell = (r: CompareRow, unit: 'um' | 'px') => (
    <td data-testid={`compare-diameter-${unit}`}>{r.diameterUnit === unit && r.diameter !== null
      ? <><strong>{f(r.diameter)}</strong><br /><span className="note">{ci(r.diameterCiLow, r.diameterCiHigh)}, n {f(r.diameterN)}{unit === 'um' ? <><br />{pixelSizeNote(r)}</> : <><br />no pixel size when measured</>}</span></>
      : <span className="note">{r.diameterUnit === null ? 'not measured' : r.diameterUnit === 'um' ? 'in µm' : 'in px only'}</span>}</td>
  );
  /** An order number, or "not determined" with why (the reason is in the row's title and the CSV). */
  const orderCell = (testId: string, v: number | null, lo: number | null, hi: number | null, n: number | null, why: string | null, profiled: boolean) => (
    <td data-testid={testId} title={why ?? undefined}>{!profiled ? <span className="note">no profile</span> : why
      ? <><span className="not-determined">{NOT_DETERMINED}</span><br /><span className="note">{why.length > 90 ? `${why.slice(0, 90)}…` : why}</span></>
      : <><strong>{f(v)}</strong><br /><span className="note">{ci(lo, hi)}{n !== null ? `, n ${n}` : ''}</span></>}</td>
  );

  const sortBy = (column: SortColumn) => setOrder((o) => ({ column, descending: o.column === column ? !o.descending : column !== 'image' && column !== 'session' }));
  const ariaSort = (c: SortColumn) => (order.column === c ? (order.descending ? 'descending' : 'ascending') : 'none');

  return (
    <main className="compare" aria-label="Compare">
      <header className="compare-head">
        <h2>Compare images and conditions</h2>
        <button onClick={() => download(`retarda-compare-${new Date().toISOString().slice(0, 10)}.csv`, compareCsv(included), 'text/csv')} disabled={included.length === 0}>Save the table as CSV</button>
        <button className="quiet" onClick={p.onClose}>Back to the images</button>
      </header>
      <div className="compare-body">
        <aside className="compare-sessions">
          <h3>Sessions</h3>
          {summaries.length === 0 && <p className="note">No saved sessions yet.</p>}
          <ul>
            {summaries.map((s) => (
              <li key={s.id}>
                <label><input type="checkbox" checked={chosen.has(s.id)} onChange={(e) => setChosen((c) => { const n = new Set(c); if (e.target.checked) n.add(s.id); else n.delete(s.id); return n; })} /> {s.name}{p.current?.id === s.id ? ' (open)' : ''}</label>
                <span className="note"> {s.analysed} analysed</span>
              </li>
            ))}
          </ul>
          <p className="note">Images appear here once they have a channel profile or fibre diameters.</p>
        </aside>
        <section className="compare-main">
          {rows.length === 0 ? (
            <p className="note" data-testid="compare-empty">None of the chosen sessions has an image with a profile across the channel or measured diameters yet. Run “Profile across the channel” on the images you want to compare.</p>
          ) : <>
            {series.length > 0 && <OverlayPlot series={series} hidden={hidden} />}
            {mixedBands(rows) && <p className="note warn">These profiles use different core / skin bands; compare their core and skin numbers with care (the bands are in the CSV).</p>}
            <table className="results compare-table" data-testid="compare-table">
              <thead>
                <tr>
                  <th>Show</th>
                  {several && <th aria-sort={ariaSort('session')}><button className="sort" onClick={() => sortBy('session')}>Session{order.column === 'session' ? (order.descending ? ' ▼' : ' ▲') : ''}</button></th>}
                  {columns.map((c) => <th key={c.key} aria-sort={ariaSort(c.key)}><button className="sort" onClick={() => sortBy(c.key)}>{c.label}{order.column === c.key ? (order.descending ? ' ▼' : ' ▲') : ''}</button></th>)}
                </tr>
              </thead>
              <tbody>
                {sorted.map((r: CompareRow) => {
                  const s = colourOf.get(r.key);
                  return (
                    <tr key={r.key} className={hidden.has(r.key) ? 'hidden-row' : ''}>
                      <td><input type="checkbox" aria-label={`Show ${rowLabel(r, several)}`} checked={!hidden.has(r.key)} onChange={() => setHidden((h) => { const n = new Set(h); if (n.has(r.key)) n.delete(r.key); else n.add(r.key); return n; })} /></td>
                      {several && <td>{r.session}</td>}
                      <td><span className="swatch" style={{ background: s?.colour ?? 'transparent' }} aria-hidden="true" />{r.image}{r.field && r.field !== 'texture' ? <span className="note"> ({r.field})</span> : null}</td>
                      {orderCell('compare-core', r.coreOrder, r.coreCiLow, r.coreCiHigh, r.coreN, r.orderNotDetermined, r.profile !== null)}
                      {orderCell('compare-skin', r.skinOrder, r.skinCiLow, r.skinCiHigh, r.skinN, r.orderNotDetermined, r.profile !== null)}
                      {orderCell('compare-ratio', r.ratio, r.ratioCiLow, r.ratioCiHigh, null, r.orderNotDetermined ?? r.ratioNotDetermined, r.profile !== null)}
                      {columns.some((c) => c.key === 'diameterUm') && diameterCell(r, 'um')}
                      {columns.some((c) => c.key === 'diameterPx') && diameterCell(r, 'px')}
                    </tr>
                  );
                })}
              </tbody>
            </table>
            <p className="note">S is S_axis against the channel axis; intervals are 95 % and allow for the correlation of neighbouring pixels. Click a column heading to sort; untick a row to leave it out of the plot and the CSV.</p>
          </>}
        </section>
      </div>
    </main>
  );
}
