/**
 * The current view as a PNG picture: the image with the shown overlay (orientation colours or
 * coherency), the channel walls, the profile's station lines and numbers as the viewer draws them, a scale bar (um when calibrated, px otherwise) and, with
 * orientation colours, the colour key. Composed on a canvas at the picture's own resolution and
 * encoded with canvas.toBlob.
 */
import type { Segment } from '../../src/channel/index.ts';
import { angleIndex, orientationColourTable } from '../../src/report/index.ts';
import { chooseScaleBar } from '../../src/report/index.ts';
import type { Layer } from '../components/Viewer.tsx';
import { STATION_COLOUR, type StationDrawing } from '../components/stationMarks.ts';

export interface ViewPictureInput {
  image: Layer;
  /** The overlay shown, or null for the image alone. */
  overlay: Layer | null;
  overlayKind: 'orientation' | 'coherency' | null;
  opacity: number;
  imageWidth: number;
  imageHeight: number;
  pixelSizeUmPerPx: number | null;
  walls: Segment[] | null;
  /** The stations of the channel profile as the viewer draws them (image px), or null when there is one station or none. */
  stations?: StationDrawing | null;
  /** Printed under the picture: image name, analysis, settings. */
  caption: string;
}

/** Draws the colour key of the orientation colours: a ring coloured by axial angle (0 deg = 180 deg), ticks and labels. */
export function drawColourKey(g: CanvasRenderingContext2D, cx: number, cy: number, radius: number): void {
  const table = orientationColourTable();
  const rIn = radius * 0.55, steps = 360;
  for (let i = 0; i < steps; i++) {
    const a0 = (i / steps) * 2 * Math.PI, a1 = ((i + 1.5) / steps) * 2 * Math.PI;
    const deg = (i / steps) * 360;
    const k = 3 * angleIndex(deg);
    g.fillStyle = `rgb(${table[k]},${table[k + 1]},${table[k + 2]})`;
    // Screen angles run clockwise with y down: draw at -angle so the ring reads counter-clockwise.
    g.beginPath(); g.arc(cx, cy, radius, -a0, -a1, true); g.arc(cx, cy, rIn, -a1, -a0, false); g.closePath(); g.fill();
  }
  g.fillStyle = '#fff';
  g.font = `600 ${Math.max(10, Math.round(radius * 0.28))}px system-ui, sans-serif`;
  g.textAlign = 'center'; g.textBaseline = 'middle';
  const label = (d: number, t: string) => {
    const a = (d * Math.PI) / 180, r = radius * 1.32;
    g.strokeStyle = '#000'; g.lineWidth = 3; g.strokeText(t, cx + r * Math.cos(a), cy - r * Math.sin(a));
    g.fillText(t, cx + r * Math.cos(a), cy - r * Math.sin(a));
  };
  label(0, '0°'); label(90, '90°'); label(45, '45°'); label(-45, '−45°');
}

/** Draws the scale bar with its label in the bottom-left corner of a picture drawn at `k` canvas px per image px. */
function drawScaleBar(g: CanvasRenderingContext2D, widthCanvas: number, heightCanvas: number, k: number, imageWidth: number, pixelSizeUmPerPx: number | null): void {
  const bar = chooseScaleBar(imageWidth, pixelSizeUmPerPx);
  const len = bar.lengthPx * k, m = Math.max(12, widthCanvas * 0.025), h = Math.max(5, heightCanvas * 0.008);
  const x = m, y = heightCanvas - m - h;
  const font = Math.max(12, Math.round(widthCanvas * 0.022));
  g.fillStyle = 'rgba(0,0,0,0.55)';
  g.fillRect(x - 6, y - font - 10, Math.max(len, font * 4) + 12, font + h + 16);
  g.fillStyle = '#fff';
  g.fillRect(x, y, len, h);
  g.font = `600 ${font}px system-ui, sans-serif`;
  g.textAlign = 'left'; g.textBaseline = 'bottom';
  g.fillText(bar.unit === 'px' ? `${bar.label} (not calibrated)` : bar.label, x, y - 4);
}

/**
 * Draws the station boundaries (dashed, dark-edged) and the station numbers as the viewer does, at `k` canvas px
 * per image px; line widths and the dash grow with the picture width so they read the same at any size.
 */
function drawStations(g: CanvasRenderingContext2D, st: StationDrawing, k: number, widthCanvas: number): void {
  const w = Math.max(2.5, widthCanvas / 400), dash = 4 * w;
  const at = (x: number, y: number) => ({ x: (x + 0.5) * k, y: (y + 0.5) * k });
  g.lineCap = 'butt';
  g.setLineDash([dash, dash / 2]);
  for (const b of st.boundaries) {
    const a = at(b.x1, b.y1), c = at(b.x2, b.y2);
    g.strokeStyle = 'rgba(0,0,0,0.75)'; g.lineWidth = 1.8 * w; g.beginPath(); g.moveTo(a.x, a.y); g.lineTo(c.x, c.y); g.stroke();
    g.strokeStyle = STATION_COLOUR; g.lineWidth = w; g.beginPath(); g.moveTo(a.x, a.y); g.lineTo(c.x, c.y); g.stroke();
  }
  g.setLineDash([]);
  const font = Math.max(13, Math.round(widthCanvas * 0.016));
  g.font = `600 ${font}px system-ui, sans-serif`;
  g.textAlign = 'left'; g.textBaseline = 'middle';
  for (const l of st.labels) {
    const q = at(l.x, l.y), text = `station ${l.text}`, tw = g.measureText(text).width;
    g.fillStyle = 'rgba(0,0,0,0.8)'; g.fillRect(q.x - tw / 2 - 5, q.y - font * 0.75, tw + 10, font * 1.5);
    g.fillStyle = STATION_COLOUR; g.fillText(text, q.x - tw / 2, q.y);
  }
}

/** Composes the picture and encodes it as PNG. */
export async function viewPicturePng(v: ViewPictureInput): Promise<Blob> {
  // The picture's own resolution (large images are already reduced for display by the worker);
  // small pictures are enlarged by a whole factor (pixels kept sharp) so the labels stay readable.
  const up = Math.max(1, Math.round(960 / v.image.width));
  const pw = v.image.width * up, ph = v.image.height * up, k = pw / v.imageWidth;
  const captionH = Math.max(28, Math.round(pw * 0.03));
  const c = document.createElement('canvas');
  c.width = pw; c.height = ph + captionH;
  const g = c.getContext('2d')!;
  g.fillStyle = '#fff'; g.fillRect(0, 0, c.width, c.height);
  g.imageSmoothingEnabled = false;
  g.drawImage(v.image.levels[0], 0, 0, pw, ph);
  if (v.overlay) {
    g.globalAlpha = v.opacity;
    g.drawImage(v.overlay.levels[0], 0, 0, pw, ph);
    g.globalAlpha = 1;
  }
  g.imageSmoothingEnabled = true;
  for (const [i, s] of (v.walls ?? []).entries()) {
    g.strokeStyle = '#000'; g.lineWidth = Math.max(3, pw / 300);
    g.beginPath(); g.moveTo((s.x1 + 0.5) * k, (s.y1 + 0.5) * k); g.lineTo((s.x2 + 0.5) * k, (s.y2 + 0.5) * k); g.stroke();
    g.strokeStyle = i === 0 ? '#f2f2f2' : '#ffd23f'; g.lineWidth = Math.max(1.5, pw / 600);
    g.stroke();
  }
  if (v.stations) drawStations(g, v.stations, k, pw);
  drawScaleBar(g, pw, ph, k, v.imageWidth, v.pixelSizeUmPerPx);
  if (v.overlayKind === 'orientation') {
    // The wheel with its labels (at 1.32 r plus the text) inside a dark box of side 4.4 r in the top-right corner.
    const r = Math.max(20, Math.min(pw, ph) * 0.06), side = 4.4 * r, x0 = pw - side - 0.2 * r, y0 = 0.2 * r;
    g.fillStyle = 'rgba(0,0,0,0.6)';
    g.fillRect(x0, y0, side, side);
    drawColourKey(g, x0 + side / 2, y0 + side / 2, r);
  }
  g.fillStyle = '#1f2328';
  g.font = `${Math.round(captionH * 0.5)}px system-ui, sans-serif`;
  g.textAlign = 'left'; g.textBaseline = 'middle';
  const legendNote = v.overlayKind === 'orientation' ? '; colours: orientation CCW from +x (0° = 180°), faint = low coherency' : v.overlayKind === 'coherency' ? '; grey: coherency 0 (black) to 1 (white)' : '';
  g.fillText(`${v.caption}${legendNote}`, 8, ph + captionH / 2, pw - 16);
  const blob = await new Promise<Blob | null>((res) => c.toBlob(res, 'image/png'));
  if (!blob) throw new Error('the browser could not encode the picture (it may be too large); zoom to a smaller image');
  return blob;
}

/** Starts a download of a Blob as a file. */
export function downloadBlob(name: string, blob: Blob): void {
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url; a.download = name;
  document.body.appendChild(a); a.click(); a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}
