import { describe, it, expect } from 'vitest';
import { channelProfile } from '../../src/channel/index.ts';
import { FOLD_EDGE_MAX_SHARE, foldEdgeShare, foldMod90 } from '../../src/orientation/index.ts';
import type { OrientationField } from '../../src/orientation/types.ts';
import { correlatedNormalField } from '../support/synthetic.ts';

/**
 * A field known only modulo 90 deg (crossed polarisers without a compensator image; docs/methods.md §6.3): theta =
 * delta with delta Gaussian of standard deviation sigma about the channel axis (0 deg), the fit giving it only in
 * [0, 90). Folding it within 45 deg of the axis reads S = <|cos 2 delta|>-like values, too high when directors lie
 * beyond 45 deg. For a Gaussian delta, E cos 2 delta = exp(-2 sigma^2) (characteristic function of the normal
 * distribution), the material's S.
 */
function mod90Field(sigmaDeg: number, seed: number): OrientationField {
  const W = 200, H = 120, n = W * H;
  const d = correlatedNormalField(seed, W, H, 3);
  const angleRad = Float32Array.from(d, (v) => {
    const t = ((sigmaDeg * Math.PI) / 180) * v;
    return ((t % (Math.PI / 2)) + Math.PI / 2) % (Math.PI / 2); // the fit's value in [0, 90) deg
  });
  return {
    width: W, height: H, angleRad, confidence: new Float32Array(n).fill(1), mask: new Uint8Array(n).fill(1),
    method: 'angle-series', ambiguity: 'mod-90', options: {}, warnings: [],
  };
}
const channel = { walls: [{ x1: 0, y1: 10, x2: 199, y2: 10 }, { x1: 0, y1: 110, x2: 199, y2: 110 }] as [{ x1: number; y1: number; x2: number; y2: number }, { x1: number; y1: number; x2: number; y2: number }] };

describe('a mod-90 field near the fold\'s boundary', () => {
  it('withholds S (with why) where directors spread to 45 deg from the axis, where the fold would read it high', () => {
    // sigma 30 deg: exp(-2 (30 deg)^2) = 0.578; P(|delta| > 45 deg) = 13 %, whose fold reads S near 0.73.
    const f = mod90Field(30, 1);
    expect(foldEdgeShare(foldMod90(f, 0))).toBeGreaterThan(FOLD_EDGE_MAX_SHARE);
    const p = channelProfile(f, channel, { bins: 10, axisDeg: 0 });
    expect(p.bins.every((b) => Number.isNaN(b.order))).toBe(true);
    expect(Number.isNaN(p.core.order) && Number.isNaN(p.skin.order)).toBe(true);
    expect(p.notDetermined?.mod90).toMatch(/compensator/);
  });

  it('gives S where directors stay well inside 45 deg of the axis, and then it is the material\'s', () => {
    // sigma 8 deg: P(|delta| > 35 deg) = 1e-5, none near the boundary; S = exp(-2 (8 deg)^2) = 0.962.
    const f = mod90Field(8, 2);
    const p = channelProfile(f, channel, { bins: 10, axisDeg: 0 });
    expect(p.notDetermined?.mod90).toBeUndefined();
    const truth = Math.exp(-2 * ((8 * Math.PI) / 180) ** 2);
    for (const b of p.bins) expect(Math.abs(b.order - truth)).toBeLessThan(0.03);
  });
});
