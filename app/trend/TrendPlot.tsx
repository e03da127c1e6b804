/** A reading against the variable: each image's reading with its 95 % interval as an error bar, the fitted line and its 95 % band. */
import type { TrendResult } from '../../src/analyses/index.ts';
import { lineAt } from '../../src/trend/index.ts';
import { niceTicks } from '../series/SeriesPlot.tsx';
import { readingTitle, variableTitle } from './trendForm.ts';

const W = 560, H = 300, M = { l: 56, r: 14, t: 26, b: 44 };

/**
 * Standard error of the line at x: u^2(a + b x) = u^2(a) - 2 xbar x u^2(b) + x^2 u^2(b) written about the weighted
 * mean, u^2(at xbar) + (x - xbar)^2 u^2(b), where u^2(at xbar) = u^2(a) - xbar^2 u^2(b) (the estimates are
 * uncorrelated about xbar; Bevington & Robinson §6.4).
 */
export function lineSeAt(f: TrendResult['fit'], x: number): number {
  const atMean = Math.max(0, f.interceptSe ** 2 - f.xMean ** 2 * f.slopeSe ** 2);
  return Math.sqrt(atMean + (x - f.xMean) ** 2 * f.slopeSe ** 2);
}

const tickText = (v: number) => (Math.abs(v) >= 1e4 || (v !== 0 && Math.abs(v) < 1e-3) ? v.toExponential(1) : String(v));

export function TrendPlot({ r }: { r: TrendResult }) {
  const pts = r.points.filter((p) => Number.isFinite(p.reading));
  const xs = r.points.map((p) => p.value);
  let x0 = Math.min(...xs), x1 = Math.max(...xs);
  if (!(x1 > x0)) { x0 -= 1; x1 += 1; }
  const pad = 0.06 * (x1 - x0);
  x0 -= pad; x1 += pad;
  const f = r.fit;
  const drawn = Number.isFinite(f.slope);
  const band = drawn ? Array.from({ length: 41 }, (_, k) => x0 + (k / 40) * (x1 - x0)).map((x) => ({ x, y: lineAt(f, x), h: f.coverageFactor * lineSeAt(f, x) })) : [];
  const lows = [...pts.map((p) => (Number.isFinite(p.ciLow) ? p.ciLow : p.reading)), ...band.map((b) => b.y - b.h)];
  const highs = [...pts.map((p) => (Number.isFinite(p.ciHigh) ? p.ciHigh : p.reading)), ...band.map((b) => b.y + b.h)];
  const order = r.readingUnit === '';
  let yMin = lows.length ? Math.min(...lows) : 0, yMax = highs.length ? Math.max(...highs) : 1;
  if (order) { yMin = Math.max(-1, Math.min(0, Math.floor(yMin * 5) / 5)); yMax = Math.min(r.reading === 'core-skin' ? Math.max(1, yMax) : 1, Math.max(0.2, Math.ceil(yMax * 5) / 5)); }
  if (!(yMax > yMin)) { yMin -= 1; yMax += 1; }
  const yPad = order ? 0 : 0.06 * (yMax - yMin);
  yMin -= yPad; yMax += yPad;
  const x = (v: number) => M.l + ((v - x0) / (x1 - x0)) * (W - M.l - M.r);
  const y = (v: number) => M.t + (1 - (v - yMin) / (yMax - yMin)) * (H - M.t - M.b);
  const clampY = (v: number) => Math.min(H - M.b, Math.max(M.t, y(v)));
  return (
    <svg className="plot series-plot" viewBox={`0 0 ${W} ${H}`} role="img" data-testid="trend-plot"
      aria-label={`${readingTitle(r)} of each image against ${variableTitle(r)}, with 95 % intervals as error bars${drawn ? ' and the fitted straight line with its 95 % band' : ''}`}>
      <defs><clipPath id="trend-clip"><rect x={M.l} y={M.t} width={W - M.l - M.r} height={H - M.t - M.b} /></clipPath></defs>
      {niceTicks(yMin, yMax).map((v) => (
        <g key={`y${v}`}>
          <line x1={M.l} x2={W - M.r} y1={y(v)} y2={y(v)} className={v === 0 ? 'plot-zero' : 'plot-grid'} />
          <text x={M.l - 6} y={y(v) + 4} textAnchor="end" className="plot-tick">{tickText(v)}</text>
        </g>
      ))}
      {niceTicks(x0, x1).map((v) => <text key={`x${v}`} x={x(v)} y={H - M.b + 16} textAnchor="middle" className="plot-tick">{tickText(v)}</text>)}
      <text x={(M.l + W - M.r) / 2} y={H - 6} textAnchor="middle" className="plot-label">{variableTitle(r)}</text>
      <text x={14} y={(M.t + H - M.b) / 2} textAnchor="middle" transform={`rotate(-90 14 ${(M.t + H - M.b) / 2})`} className="plot-label">{readingTitle(r)}</text>
      {drawn && <g clipPath="url(#trend-clip)">
        <polygon className="plot-ci" data-testid="trend-band"
          points={[...band.map((b) => `${x(b.x).toFixed(1)},${y(b.y + b.h).toFixed(1)}`), ...[...band].reverse().map((b) => `${x(b.x).toFixed(1)},${y(b.y - b.h).toFixed(1)}`)].join(' ')} />
        <line x1={x(x0)} x2={x(x1)} y1={y(lineAt(f, x0))} y2={y(lineAt(f, x1))} className="plot-line" data-testid="trend-line" />
      </g>}
      {r.points.map((p, i) => {
        if (!Number.isFinite(p.reading)) return null;
        const ok = p.used && Number.isFinite(p.ciLow) && Number.isFinite(p.ciHigh);
        return (
          <g key={i} className="series-point">
            {ok && <>
              <line x1={x(p.value)} x2={x(p.value)} y1={clampY(p.ciLow)} y2={clampY(p.ciHigh)} className="series-bar" />
              <line x1={x(p.value) - 4} x2={x(p.value) + 4} y1={clampY(p.ciLow)} y2={clampY(p.ciLow)} className="series-bar" />
              <line x1={x(p.value) - 4} x2={x(p.value) + 4} y1={clampY(p.ciHigh)} y2={clampY(p.ciHigh)} className="series-bar" />
            </>}
            <circle cx={x(p.value)} cy={clampY(p.reading)} r={3.6} className={ok ? 'series-dot' : 'series-dot hollow'}>
              <title>{`${p.source}, ${r.variable.name} ${p.value}: ${p.reading.toPrecision(3)}${ok ? ` (95 % ${p.ciLow.toPrecision(3)}..${p.ciHigh.toPrecision(3)})` : ` (left out of the line: ${p.why})`}`}</title>
            </circle>
          </g>
        );
      })}
      <g className="series-legend" transform={`translate(${W - M.r - 300} ${M.t - 12})`}>
        <circle cx={4} cy={0} r={3.4} className="series-dot" /><line x1={4} x2={4} y1={-6} y2={6} className="series-bar" />
        <text x={12} y={4} className="plot-tick">image, 95 % interval</text>
        {drawn && <>
          <rect x={146} y={-5} width={22} height={10} className="plot-ci" /><line x1={146} x2={168} y1={0} y2={0} className="plot-line" />
          <text x={173} y={4} className="plot-tick">line, 95 % band</text>
        </>}
      </g>
    </svg>
  );
}
