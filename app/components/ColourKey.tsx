/**
 * The colour key of the orientation colours: a ring in which each direction has the colour of that
 * orientation (so opposite points match: 0 and 180 deg are one orientation), with the angle
 * convention marked: 0 deg along +x (to the right), counter-clockwise positive.
 */
import { useEffect, useRef } from 'react';
import { orientationColourTable, angleIndex } from '../../src/report/index.ts';

/** `faint` says what a faint colour means on the map it explains (default: low coherency); null when colours are never faint. */
export function ColourKey({ size = 132, faint = 'low coherency' }: { size?: number; faint?: string | null }) {
  const ref = useRef<HTMLCanvasElement>(null);
  useEffect(() => {
    const c = ref.current!;
    const dpr = window.devicePixelRatio || 1;
    c.width = size * dpr; c.height = size * dpr;
    const g = c.getContext('2d')!;
    const px = g.createImageData(c.width, c.height);
    const table = orientationColourTable();
    const cx = c.width / 2, cy = c.height / 2, rOut = c.width * 0.36, rIn = c.width * 0.2;
    for (let y = 0; y < c.height; y++) for (let x = 0; x < c.width; x++) {
      const dx = x + 0.5 - cx, dy = y + 0.5 - cy, r = Math.hypot(dx, dy);
      if (r < rIn || r > rOut) continue;
      // Screen angle CCW from +x (y grows downwards, so flip dy).
      const deg = (Math.atan2(-dy, dx) * 180) / Math.PI;
      const k = 3 * angleIndex(deg), o = 4 * (y * c.width + x);
      px.data[o] = table[k]; px.data[o + 1] = table[k + 1]; px.data[o + 2] = table[k + 2]; px.data[o + 3] = 255;
    }
    g.putImageData(px, 0, 0);
    g.setTransform(dpr, 0, 0, dpr, 0, 0);
    const s = size, m = s / 2;
    // One bar through the centre at +30 deg, coloured as the map colours that orientation.
    const k30 = 3 * angleIndex(30), a30 = (30 * Math.PI) / 180, rb = s * 0.15;
    g.strokeStyle = '#222'; g.lineWidth = 4; g.lineCap = 'round';
    g.beginPath(); g.moveTo(m - rb * Math.cos(a30), m + rb * Math.sin(a30)); g.lineTo(m + rb * Math.cos(a30), m - rb * Math.sin(a30)); g.stroke();
    g.strokeStyle = `rgb(${table[k30]},${table[k30 + 1]},${table[k30 + 2]})`; g.lineWidth = 2.5;
    g.beginPath(); g.moveTo(m - rb * Math.cos(a30), m + rb * Math.sin(a30)); g.lineTo(m + rb * Math.cos(a30), m - rb * Math.sin(a30)); g.stroke();
    g.fillStyle = getComputedStyle(c).color || '#222';
    g.font = `${Math.round(s * 0.085)}px system-ui, sans-serif`;
    g.textAlign = 'center'; g.textBaseline = 'middle';
    const label = (d: number, t: string) => {
      const a = (d * Math.PI) / 180, r = s * 0.44;
      g.fillText(t, m + r * Math.cos(a), m - r * Math.sin(a));
    };
    label(0, '0°'); label(90, '90°'); label(45, '+45°'); label(-45, '−45°'); label(180, '0°'); label(135, '−45°'); label(-135, '+45°');
    // Arrow for the positive sense (counter-clockwise) along the outside of the ring, from 8 to 32 deg.
    const ra = s * 0.395, a0 = (8 * Math.PI) / 180, a1 = (32 * Math.PI) / 180;
    g.strokeStyle = g.fillStyle as string; g.lineWidth = 1.4;
    g.beginPath(); g.arc(m, m, ra, -a0, -a1, true); g.stroke();
    const tx = m + ra * Math.cos(a1), ty = m - ra * Math.sin(a1);
    const back = a1 - 0.2, wing = 4;
    g.beginPath(); g.moveTo(tx, ty);
    g.lineTo(m + (ra + wing) * Math.cos(back), m - (ra + wing) * Math.sin(back));
    g.lineTo(m + (ra - wing) * Math.cos(back), m - (ra - wing) * Math.sin(back));
    g.closePath(); g.fill();
  }, [size]);
  return (
    <figure className="legend">
      <canvas ref={ref} style={{ width: size, height: size }} role="img"
        aria-label="Colour key: orientation angle from 0 degrees along +x, counter-clockwise positive, period 180 degrees" />
      <figcaption>Angle from +x (to the right), counter-clockwise positive (arrow); the bar in the ring is an example at 30°. Opposite sides share a colour: 0° = 180°.{faint ? ` Faint = ${faint}.` : ''}</figcaption>
    </figure>
  );
}
