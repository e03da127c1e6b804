/** Histogram of values (station diameters): bins of equal width, counts as bars, the mean marked. */
const W = 360, H = 170, M = { l: 36, r: 8, t: 10, b: 36 };

export function Histogram({ values, unit, label }: { values: number[]; unit: string; label: string }) {
  if (values.length === 0) return null;
  const lo = Math.min(...values), hi = Math.max(...values);
  // About sqrt(n) bins, at least 5 and at most 30.
  const nBins = Math.max(5, Math.min(30, Math.round(Math.sqrt(values.length))));
  const span = hi > lo ? hi - lo : Math.max(1e-6, Math.abs(hi) * 0.01 || 1);
  const width = span / nBins;
  const counts = new Array(nBins).fill(0);
  for (const v of values) counts[Math.min(nBins - 1, Math.floor((v - lo) / width))]++;
  const top = Math.max(...counts);
  const x = (v: number) => M.l + ((v - lo) / (nBins * width)) * (W - M.l - M.r);
  const y = (c: number) => H - M.b - (c / top) * (H - M.t - M.b);
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  const fmt = (v: number) => (Math.abs(v) >= 100 ? v.toFixed(0) : v.toFixed(v >= 10 ? 1 : 2));
  return (
    <svg className="plot" viewBox={`0 0 ${W} ${H}`} role="img" aria-label={`${label}: histogram of ${values.length} values`}>
      {counts.map((c, k) => <rect key={k} x={x(lo + k * width) + 0.5} y={y(c)} width={Math.max(1, x(lo + (k + 1) * width) - x(lo + k * width) - 1)} height={H - M.b - y(c)} className="hist-bar"><title>{`${fmt(lo + k * width)}–${fmt(lo + (k + 1) * width)} ${unit}: ${c}`}</title></rect>)}
      <line x1={x(mean)} x2={x(mean)} y1={M.t} y2={H - M.b} className="hist-mean" />
      <text x={x(mean) + 3} y={M.t + 10} className="plot-tick">mean</text>
      <line x1={M.l} x2={W - M.r} y1={H - M.b} y2={H - M.b} className="plot-zero" />
      {[lo, (lo + hi) / 2, hi].map((v) => <text key={v} x={x(v)} y={H - M.b + 14} textAnchor="middle" className="plot-tick">{fmt(v)}</text>)}
      <text x={M.l - 4} y={y(top) + 4} textAnchor="end" className="plot-tick">{top}</text>
      <text x={M.l - 4} y={H - M.b} textAnchor="end" className="plot-tick">0</text>
      <text x={(M.l + W - M.r) / 2} y={H - 6} textAnchor="middle" className="plot-label">{label} ({unit}); bars: number of stations</text>
    </svg>
  );
}
