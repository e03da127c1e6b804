/** Colour bar of the retardance map: the scale the worker used, with ticks in nm. */
import { useEffect, useRef } from 'react';
import { retardanceColourTable } from '../../src/report/index.ts';

export function RetardanceBar({ rangeNm, width = 190 }: { rangeNm: [number, number]; width?: number }) {
  const ref = useRef<HTMLCanvasElement>(null);
  useEffect(() => {
    const c = ref.current!;
    c.width = 256; c.height = 1;
    const g = c.getContext('2d')!;
    const px = g.createImageData(256, 1);
    const t = retardanceColourTable();
    for (let k = 0; k < 256; k++) { px.data[4 * k] = t[3 * k]; px.data[4 * k + 1] = t[3 * k + 1]; px.data[4 * k + 2] = t[3 * k + 2]; px.data[4 * k + 3] = 255; }
    g.putImageData(px, 0, 0);
  }, []);
  const [lo, hi] = rangeNm;
  // Ticks at a round step (50, 100, 200, 250, 500 nm ...) giving at most 5 intervals.
  const step = [10, 20, 25, 50, 100, 200, 250, 500, 1000, 2000].find((t) => (hi - lo) / t <= 5) ?? (hi - lo) / 4;
  const ticks: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + 1e-9; v += step) ticks.push(v);
  return (
    <figure className="colour-bar" aria-label={`Retardance colour scale from ${lo} to ${hi} nm`}>
      <canvas ref={ref} style={{ width, height: 14, imageRendering: 'pixelated' }} />
      <div className="colour-bar-ticks" style={{ width }}>{ticks.map((v) => <span key={v} style={{ left: `${(100 * (v - lo)) / (hi - lo)}%` }}>{Math.round(v)}</span>)}</div>
      <figcaption>retardance, nm (darkest = {lo} nm; {hi} nm and above = palest)</figcaption>
    </figure>
  );
}
