import { describe, it, expect } from 'vitest';
import { analyseOrientation, analyseProfile } from '../../src/analyses/index.ts';
import type { Image } from '../../src/image/types.ts';
import type { Channel } from '../../src/channel/index.ts';

/**
 * A channel of uniform, known order next to strong wall edges (the check in docs/methods.md §10.6, "The structure
 * tensor next to a wall"): straight stripes at `stripeDeg` from the channel axis fill the channel, and the walls are dark
 * bands, so every pixel's true orientation is the stripes' and S_axis = cos 2(stripeDeg) exactly (construction).
 */
function stripedChannel(axisDeg: number, stripeDeg: number): { img: Image; channel: Channel } {
  const W = 320, H = 240, half = 60, period = 7;
  const a = (axisDeg * Math.PI) / 180, ux = Math.cos(a), uy = -Math.sin(a), nx = -uy, ny = ux;
  const s = ((axisDeg + stripeDeg) * Math.PI) / 180;
  // Stripes run along (cos s, -sin s): intensity varies along the normal (sin s, cos s).
  const data = new Float32Array(W * H);
  const cx = (W - 1) / 2, cy = (H - 1) / 2;
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
    const t = (x - cx) * nx + (y - cy) * ny;
    const inside = Math.abs(t) < half;
    data[y * W + x] = inside ? 0.5 + 0.3 * Math.sin((2 * Math.PI * (x * Math.sin(s) + y * Math.cos(s))) / period) : Math.abs(t) < half + 20 ? 0.02 : 0.6;
  }
  const L = 400;
  const wall = (sg: number) => ({ x1: cx - L * ux + sg * half * nx, y1: cy - L * uy + sg * half * ny, x2: cx + L * ux + sg * half * nx, y2: cy + L * uy + sg * half * ny });
  return {
    img: { width: W, height: H, channels: 1, planes: [data], bitDepth: 32, encoding: 'linear', source: { name: 'striped-channel' } },
    channel: { walls: [wall(-1), wall(1)] },
  };
}

describe('channel profile next to the walls', () => {
  for (const axisDeg of [0, 35, -61]) {
    it(`reads the interior's own order in the bins touching the walls (axis ${axisDeg} deg, stripes 25 deg off it)`, async () => {
      const { img, channel } = stripedChannel(axisDeg, 25);
      const { field } = await analyseOrientation(img);
      const p = await analyseProfile(img, field, { channel, bins: 20 });
      const truth = Math.cos((2 * 25 * Math.PI) / 180); // construction: S_axis = cos 2(25 deg) = 0.643
      const errors = p.bins.map((b) => Math.abs(b.order - truth));
      // The channel goal (0.03 in every bin, the two touching the walls included).
      expect(Math.max(...errors)).toBeLessThanOrEqual(0.03);
      expect(p.options.nearWalls).toMatch(/normalised convolution/);
    });
  }
});
