/** The order parameter across the channel: S_axis per bin of s with its 95 % interval as a band. */
import type { ProfileResult } from '../../src/analyses/index.ts';

const W = 400, H = 250, M = { l: 44, r: 10, t: 12, b: 42 };

export function ProfilePlot({ r }: { r: ProfileResult }) {
  const bins = r.bins.filter((b) => b.n > 0 && Number.isFinite(b.order));
  const lows = bins.map((b) => b.ciLow).filter(Number.isFinite), highs = bins.map((b) => b.ciHigh).filter(Number.isFinite);
  const yMin = Math.min(0, Math.floor(Math.min(...lows, 0) * 5) / 5), yMax = Math.max(1, Math.ceil(Math.max(...highs, 0) * 5) / 5);
  const x = (s: number) => M.l + ((s + 1) / 2) * (W - M.l - M.r);
  const y = (v: number) => M.t + (1 - (v - yMin) / (yMax - yMin)) * (H - M.t - M.b);
  const coreMax = Number(r.options.coreMax), skinMin = Number(r.options.skinMin);
  const band = bins.length
    ? [...bins.map((b) => `${x(b.s)},${y(Number.isFinite(b.ciHigh) ? b.ciHigh : b.order)}`), ...[...bins].reverse().map((b) => `${x(b.s)},${y(Number.isFinite(b.ciLow) ? b.ciLow : b.order)}`)].join(' ')
    : '';
  const line = bins.map((b) => `${x(b.s)},${y(b.order)}`).join(' ');
  const yTicks: number[] = [];
  for (let v = yMin; v <= yMax + 1e-9; v += (yMax - yMin) / 5) yTicks.push(Math.round(v * 100) / 100);
  return (
    <svg className="plot" viewBox={`0 0 ${W} ${H}`} role="img" aria-label="Order parameter S across the channel with 95 % interval band">
      <rect x={x(-1)} y={M.t} width={x(-skinMin) - x(-1)} height={H - M.t - M.b} className="plot-skin" />
      <rect x={x(skinMin)} y={M.t} width={x(1) - x(skinMin)} height={H - M.t - M.b} className="plot-skin" />
      <rect x={x(-coreMax)} y={M.t} width={x(coreMax) - x(-coreMax)} height={H - M.t - M.b} className="plot-core" />
      {yTicks.map((v) => (
        <g key={v}>
          <line x1={M.l} x2={W - M.r} y1={y(v)} y2={y(v)} className={v === 0 ? 'plot-zero' : 'plot-grid'} />
          <text x={M.l - 6} y={y(v) + 4} textAnchor="end" className="plot-tick">{v.toFixed(1)}</text>
        </g>
      ))}
      {[-1, -0.5, 0, 0.5, 1].map((s) => (
        <text key={s} x={x(s)} y={H - M.b + 16} textAnchor="middle" className="plot-tick">{s}</text>
      ))}
      <text x={(x(-1) + x(1)) / 2} y={H - 6} textAnchor="middle" className="plot-label">position s (−1 first wall, +1 second wall)</text>
      <text x={14} y={(M.t + H - M.b) / 2} textAnchor="middle" transform={`rotate(-90 14 ${(M.t + H - M.b) / 2})`} className="plot-label">S_axis</text>
      <text x={x(0)} y={M.t + 14} textAnchor="middle" className="plot-band-label">core</text>
      <text x={(x(-1) + x(-skinMin)) / 2} y={M.t + 14} textAnchor="middle" className="plot-band-label">skin</text>
      <text x={(x(1) + x(skinMin)) / 2} y={M.t + 14} textAnchor="middle" className="plot-band-label">skin</text>
      {r.notDetermined?.order && (
        <text x={(x(-1) + x(1)) / 2} y={(M.t + H - M.b) / 2} textAnchor="middle" className="plot-not-determined">S not determined (see below)</text>
      )}
      {band && <polygon points={band} className="plot-ci" />}
      {line && <polyline points={line} className="plot-line" />}
      {bins.map((b) => <circle key={b.s} cx={x(b.s)} cy={y(b.order)} r={3} className="plot-dot"><title>{`s ${b.s.toFixed(2)}: S ${b.order.toFixed(3)} (95 % ${b.ciLow.toFixed(3)}..${b.ciHigh.toFixed(3)}), n ${b.n}`}</title></circle>)}
    </svg>
  );
}
