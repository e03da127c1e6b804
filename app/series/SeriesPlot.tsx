/** Order over time: each frame's S_axis with its 95 % interval as an error bar, and the fitted relaxation curve. */
import type { SeriesResult } from '../../src/analyses/index.ts';
import { relaxationAt } from './seriesForm.ts';

const W = 560, H = 300, M = { l: 48, r: 14, t: 26, b: 44 };

/** About five round tick values from lo to hi (steps of 1, 2 or 5 times a power of ten). */
export function niceTicks(lo: number, hi: number, count = 5): number[] {
  const span = hi - lo;
  if (!(span > 0)) return [lo];
  const raw = span / count, p = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * p).find((s) => s >= raw) ?? 10 * p;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) out.push(Number((Math.round(v / step) * step).toPrecision(12)));
  return out;
}

export function SeriesPlot({ r }: { r: SeriesResult }) {
  const pts = r.points.filter((p) => Number.isFinite(p.order));
  const ts = pts.map((p) => p.tSeconds);
  const t0 = Math.min(0, ...ts), tLast = Math.max(...ts), t1 = tLast > t0 ? tLast : t0 + 1;
  const tMax = t1 + 0.04 * (t1 - t0);
  const lows = pts.map((p) => (Number.isFinite(p.ciLow) ? p.ciLow : p.order)), highs = pts.map((p) => (Number.isFinite(p.ciHigh) ? p.ciHigh : p.order));
  const yMin = Math.min(0, Math.floor(Math.min(...lows, 0) * 5) / 5), yMax = Math.max(0.2, Math.ceil(Math.max(...highs, 0) * 5) / 5);
  const x = (t: number) => M.l + ((t - t0) / (tMax - t0)) * (W - M.l - M.r);
  const y = (v: number) => M.t + (1 - (v - yMin) / (yMax - yMin)) * (H - M.t - M.b);
  const f = r.fit;
  const open = !!r.notDetermined?.tauSeconds;
  const curve = f ? Array.from({ length: 121 }, (_, k) => t0 + (k / 120) * (tMax - t0)).map((t) => `${x(t).toFixed(1)},${y(relaxationAt(f.curve, t)).toFixed(1)}`).join(' ') : '';
  const fitLabel = f ? `${open ? 'best fit, tau not determined' : 'fit'}: ${f.model === 'stretched' ? 'stretched exponential' : 'exponential'}` : 'no fit';
  return (
    <svg className="plot series-plot" viewBox={`0 0 ${W} ${H}`} role="img" data-testid="series-plot"
      aria-label="S_axis of each frame against time, with 95 % intervals as error bars and the fitted relaxation curve">
      {niceTicks(yMin, yMax, Math.round((yMax - yMin) / 0.2)).map((v) => (
        <g key={`y${v}`}>
          <line x1={M.l} x2={W - M.r} y1={y(v)} y2={y(v)} className={v === 0 ? 'plot-zero' : 'plot-grid'} />
          <text x={M.l - 6} y={y(v) + 4} textAnchor="end" className="plot-tick">{v.toFixed(1)}</text>
        </g>
      ))}
      {niceTicks(t0, tMax).map((t) => <text key={`x${t}`} x={x(t)} y={H - M.b + 16} textAnchor="middle" className="plot-tick">{t}</text>)}
      <text x={(M.l + W - M.r) / 2} y={H - 6} textAnchor="middle" className="plot-label">time t, s</text>
      <text x={14} y={(M.t + H - M.b) / 2} textAnchor="middle" transform={`rotate(-90 14 ${(M.t + H - M.b) / 2})`} className="plot-label">S_axis</text>
      {curve && <polyline points={curve} className={`plot-line${open ? ' series-open' : ''}`} data-testid="series-curve" />}
      {pts.map((p, i) => {
        const ok = Number.isFinite(p.ciLow) && Number.isFinite(p.ciHigh);
        return (
          <g key={i} className="series-point">
            {ok && <>
              <line x1={x(p.tSeconds)} x2={x(p.tSeconds)} y1={y(p.ciLow)} y2={y(p.ciHigh)} className="series-bar" />
              <line x1={x(p.tSeconds) - 4} x2={x(p.tSeconds) + 4} y1={y(p.ciLow)} y2={y(p.ciLow)} className="series-bar" />
              <line x1={x(p.tSeconds) - 4} x2={x(p.tSeconds) + 4} y1={y(p.ciHigh)} y2={y(p.ciHigh)} className="series-bar" />
            </>}
            <circle cx={x(p.tSeconds)} cy={y(p.order)} r={3.4} className={ok ? 'series-dot' : 'series-dot hollow'}>
              <title>{`${p.source}, t ${p.tSeconds} s: S_axis ${p.order.toFixed(3)}${ok ? ` (95 % ${p.ciLow.toFixed(3)}..${p.ciHigh.toFixed(3)})` : ' (no interval: left out of the fit)'}, n ${p.n}`}</title>
            </circle>
          </g>
        );
      })}
      <g className="series-legend" transform={`translate(${W - M.r - 270} ${M.t - 12})`}>
        <circle cx={4} cy={0} r={3.4} className="series-dot" /><line x1={4} x2={4} y1={-6} y2={6} className="series-bar" />
        <text x={12} y={4} className="plot-tick">frame, 95 % interval</text>
        <line x1={142} x2={164} y1={0} y2={0} className={`plot-line${open ? ' series-open' : ''}`} />
        <text x={169} y={4} className="plot-tick">{fitLabel.length > 30 ? 'best fit (tau open)' : fitLabel}</text>
      </g>
    </svg>
  );
}
