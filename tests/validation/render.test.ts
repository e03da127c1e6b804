/**
 * The validation renderer itself (tests/validation/render/): its optics against closed forms of Jones
 * calculus, its colorimetry against published values, its random fields and truths against what they are
 * built to be, its geometry against the wall convention of the channel contract.
 */
import { describe, expect, it } from 'vitest';
import {
  ColourRenderer, Rng, WAVELENGTHS_NM, XYZ_TO_LINEAR_SRGB, channelGeometry, clipLine, cmfWyman, correlatedField, crossedWithCompensator,
  jonesTransmission, planckRelative, profileTruth, renderScene, scene, sigmaForOrder, transverseS, turnedTrain, wallFrame, wholeImageTruth,
  type OpticalTrain, type Segment,
} from './render/index.ts';

const DEG = Math.PI / 180;

describe('validation renderer: polarisation optics', () => {
  const noPlate: OpticalTrain = { polariserDeg: 0, analyserDeg: 90, compensator: null, lampK: 3200 };
  const plate = crossedWithCompensator(550, 3200);

  it('gives extinction between crossed polarisers without sample or compensator (Malus: cos^2 90 deg = 0)', () => {
    for (const l of [400, 550, 700]) expect(jonesTransmission(noPlate, 0, 0.3, l)).toBeCloseTo(0, 14);
    const rgb = new ColourRenderer(noPlate).linearRgb(0, 0);
    for (const v of rgb) expect(Math.abs(v)).toBeLessThan(1e-14);
  });

  it('transmits sin^2(2 theta) sin^2(pi Gamma / lambda) for one retarder between crossed polarisers (closed form of the Jones product)', () => {
    const rng = new Rng(7);
    for (let k = 0; k < 50; k++) {
      const l = 380 + 400 * rng.uniform(), g = 1000 * rng.uniform(), th = Math.PI * rng.uniform();
      expect(jonesTransmission(noPlate, g, th, l)).toBeCloseTo(Math.sin(2 * th) ** 2 * Math.sin((Math.PI * g) / l) ** 2, 12);
    }
  });

  it('renders a sample-free pixel with the compensator as the spectrum sin^2(pi Gamma_p / lambda) integrated against lamp and CIE functions', () => {
    // Closed form written out here: T = sin^2(pi 550 / lambda) (one retarder at 45 deg between crossed polars),
    // XYZ = sum S T cmf / sum S ybar, linear sRGB by the IEC 61966-2-1 matrix, divided by the open beam's.
    const xyz = (T: (l: number) => number) => {
      const out = [0, 0, 0];
      let ySum = 0;
      for (const l of WAVELENGTHS_NM) {
        const s = planckRelative(l, 3200), c = cmfWyman(l);
        ySum += s * c[1];
        for (let i = 0; i < 3; i++) out[i] += s * c[i] * T(l);
      }
      return XYZ_TO_LINEAR_SRGB.map((row) => (row[0] * out[0] + row[1] * out[1] + row[2] * out[2]) / ySum);
    };
    const white = xyz(() => 1);
    const expected = xyz((l) => Math.sin((Math.PI * 550) / l) ** 2).map((v, i) => v / white[i]);
    const got = new ColourRenderer(plate).linearRgb(0, 0);
    for (let i = 0; i < 3; i++) expect(got[i]).toBeCloseTo(expected[i], 12);
    // Physical fact: a sample-free full-wave compensator is darkest in the green (the "sensitive tint" is magenta).
    expect(got[1]).toBeLessThan(got[0]);
    expect(got[1]).toBeLessThan(got[2]);
  });

  it('adds retardances when the slow axes are parallel and subtracts them when crossed (compensator closed forms)', () => {
    for (const l of [450, 550, 650]) {
      expect(jonesTransmission(plate, 120, 45 * DEG, l)).toBeCloseTo(Math.sin((Math.PI * (550 + 120)) / l) ** 2, 12);
      expect(jonesTransmission(plate, 120, -45 * DEG, l)).toBeCloseTo(Math.sin((Math.PI * (550 - 120)) / l) ** 2, 12);
    }
  });

  it('matches the two-retarder closed form I = (cp ss sin2ts + sp cs sin2tp)^2 + (sp ss sin2(tp - ts))^2 (derived from the Jones product)', () => {
    const rng = new Rng(11);
    for (let k = 0; k < 50; k++) {
      const l = 380 + 400 * rng.uniform(), g = 800 * rng.uniform(), th = Math.PI * rng.uniform(), tp = 45 * DEG;
      const hs = (Math.PI * g) / l, hp = (Math.PI * 550) / l;
      const I = (Math.cos(hp) * Math.sin(hs) * Math.sin(2 * th) + Math.sin(hp) * Math.cos(hs) * Math.sin(2 * tp)) ** 2 + (Math.sin(hp) * Math.sin(hs) * Math.sin(2 * (tp - th))) ** 2;
      expect(jonesTransmission(plate, g, th, l)).toBeCloseTo(I, 12);
    }
  });

  it('gives the same colours from the quadratic form in (cos 2 theta, sin 2 theta) as from summing the Jones product per wavelength', () => {
    const r = new ColourRenderer(plate);
    for (const [g, th] of [[0, 0], [100, 0.3], [250, -1.1], [420, 2.0], [800, 0.77]]) {
      const a = r.linearRgb(g, th), b = r.linearRgbBySpectrum(g, th);
      for (let i = 0; i < 3; i++) expect(a[i]).toBeCloseTo(b[i], 12);
    }
  });

  it('renders the second image of a pair like the first with the sample turned the other way (rotating everything is no change)', () => {
    const a = new ColourRenderer(plate), b = new ColourRenderer(turnedTrain(plate, 45));
    for (const th of [0, 0.4, 1.3, -0.9]) {
      const x = b.linearRgb(250, th), y = a.linearRgb(250, th - 45 * DEG);
      for (let i = 0; i < 3; i++) expect(x[i]).toBeCloseTo(y[i], 12);
    }
  });

  it('uses CIE functions within a few hundredths of the CIE 1931 table and a lamp peaking where Wien\'s law says', () => {
    // CIE 1931 2-degree observer table (CIE 015): ybar(555) = 1.0000, xbar(600) = 1.0622, zbar(450) = 1.7721 (from memory).
    expect(cmfWyman(555)[1]).toBeCloseTo(1.0, 1);
    expect(cmfWyman(600)[0]).toBeCloseTo(1.0622, 1);
    expect(cmfWyman(450)[2]).toBeCloseTo(1.7721, 1);
    // Wien's displacement law, b = 2.897771955e-3 m K (CODATA 2018): the 3200 K peak is at 905.55 nm.
    let best = 0, at = 0;
    for (let l = 800; l <= 1000; l += 0.05) { const v = planckRelative(l, 3200); if (v > best) { best = v; at = l; } }
    expect(at).toBeCloseTo(2.897771955e-3 / 3200 * 1e9, 0);
  });
});

describe('validation renderer: director field and truth', () => {
  it('makes a unit-variance field whose correlation at lag L is exp(-1/2) (Gaussian correlation of length L)', () => {
    const w = 400, h = 400, L = 8;
    const g = correlatedField(new Rng(3), w, h, L);
    let s = 0, s2 = 0, c = 0, nc = 0;
    for (let i = 0; i < g.length; i++) { s += g[i]; s2 += g[i] * g[i]; }
    for (let y = 0; y < h; y++) for (let x = 0; x + L < w; x++) { c += g[y * w + x] * g[y * w + x + L]; nc++; }
    const mean = s / g.length, v = s2 / g.length - mean * mean;
    // 400 x 400 px hold about (400 / (sqrt(2 pi) 8))^2 = 400 independent patches: sampling SD of the variance about 0.07.
    expect(v).toBeGreaterThan(0.8);
    expect(v).toBeLessThan(1.2);
    expect(c / nc / v).toBeCloseTo(Math.exp(-0.5), 1);
  });

  it('draws delta with E[cos 2 delta] = S (normal characteristic function exp(-2 sigma^2))', () => {
    for (const S of [0.3, 0.6, 0.9]) {
      expect(Math.exp(-2 * sigmaForOrder(S) ** 2)).toBeCloseTo(S, 12);
      const r = renderScene(scene({ seed: 5, width: 300, height: 300, channel: null, order: { core: S, skin: S }, corrLengthPx: 4, texture: { streakHalfLengthPx: 2 } }));
      expect(wholeImageTruth(r.truth, 0).axisOrder.realised).toBeCloseTo(S, 1);
    }
  });

  it('gives truth S = 1 in every bin, core and skin when delta = 0 in a straight channel', () => {
    const r = renderScene(scene({ seed: 9, width: 200, height: 150, channel: { axisDeg: 23, widthPx: 80 }, order: { core: 1, skin: 1 }, texture: { streakHalfLengthPx: 4 } }));
    const t = profileTruth(r.truth, 200, { bins: 10, stations: 2 });
    for (const b of [...t.bins, t.core, t.skin, ...t.stations.flatMap((s) => s.bins)]) {
      expect(b.n).toBeGreaterThan(0);
      expect(b.realised).toBeCloseTo(1, 6);
      expect(b.ensemble).toBeCloseTo(1, 6);
    }
  });

  it('is the same for the same seed and differs for another', () => {
    const a = renderScene(scene({ seed: 4, width: 120, height: 90, channel: { widthPx: 50 }, texture: { streakHalfLengthPx: 4 } }));
    const b = renderScene(scene({ seed: 4, width: 120, height: 90, channel: { widthPx: 50 }, texture: { streakHalfLengthPx: 4 } }));
    const c = renderScene(scene({ seed: 5, width: 120, height: 90, channel: { widthPx: 50 }, texture: { streakHalfLengthPx: 4 } }));
    expect(b.image.planes[0]).toEqual(a.image.planes[0]);
    expect(c.image.planes[0]).not.toEqual(a.image.planes[0]);
  });
});

describe('validation renderer: channel geometry', () => {
  it('puts the first wall above a horizontal channel and left of a vertical one, the given width apart', () => {
    // A steep channel (-61 deg) counts as vertical: its first wall is the left one (smaller x at the centre row).
    const steep = channelGeometry(400, 300, -61, 100, 0, 0);
    const xAtCentreRow = (k: 0 | 1) => { const l = steep.walls[k]; return l.px + ((149.5 - l.py) / l.dy) * l.dx; };
    expect(xAtCentreRow(0)).toBeLessThan(xAtCentreRow(1));
    const shallow = channelGeometry(400, 300, -35, 100, 0, 0);
    const yAtCentreColumn = (k: 0 | 1) => { const l = shallow.walls[k]; return l.py + ((199.5 - l.px) / l.dx) * l.dy; };
    expect(yAtCentreColumn(0)).toBeLessThan(yAtCentreColumn(1));
    const h = channelGeometry(400, 300, 0, 100, 0, 0);
    expect(h.walls[0].py).toBeCloseTo(149.5 - 50, 9);
    expect(h.walls[1].py).toBeCloseTo(149.5 + 50, 9);
    const v = channelGeometry(400, 300, 90, 100, 0, 0);
    expect(v.walls[0].px).toBeCloseTo(199.5 - 50, 9);
    expect(v.walls[1].px).toBeCloseTo(199.5 + 50, 9);
  });

  it('clips walls to the frame and measures s = -1 on the first wall, +1 on the second, by the local width in a taper', () => {
    const g = channelGeometry(640, 480, 35, 150, 3, 20);
    const walls = [clipLine(g.walls[0], 640, 480)!, clipLine(g.walls[1], 640, 480)!] as [Segment, Segment];
    for (const s of walls) {
      for (const [x, y] of [[s.x1, s.y1], [s.x2, s.y2]]) {
        const onEdge = Math.min(Math.abs(x), Math.abs(x - 639), Math.abs(y), Math.abs(y - 479));
        expect(onEdge).toBeLessThan(1e-9);
      }
    }
    const f = wallFrame(walls);
    expect(f.axisDeg).toBeCloseTo(35, 9);
    const angle = (s: Segment) => Math.atan2(-(s.y2 - s.y1), s.x2 - s.x1) / DEG;
    expect(Math.abs(angle(walls[0]) - angle(walls[1]))).toBeCloseTo(3, 9);
    const at = (s: Segment, t: number) => transverseS(f, s.x1 + t * (s.x2 - s.x1), s.y1 + t * (s.y2 - s.y1)).s;
    expect(at(walls[0], 0.3)).toBeCloseTo(-1, 9);
    expect(at(walls[1], 0.6)).toBeCloseTo(1, 9);
    expect(transverseS(f, g.cx, g.cy).s).toBeCloseTo(0, 9);
    expect(transverseS(f, g.cx, g.cy).widthPx).toBeCloseTo(150, 9);
  });

  it('draws the inner wall where the truth puts it: the half-way crossing of a blurred step lies on the wall line', () => {
    // Flat interior 0.5, band 0.1, no noise, PSF sigma 1 px: across the wall the profile is an erf step whose
    // half-way level (0.3) is crossed at the edge (symmetry of the Gaussian).
    for (const axisDeg of [0, 23]) {
      const r = renderScene(scene({
        seed: 2, width: 240, height: 180, channel: { axisDeg, widthPx: 90 }, texture: { contrast: 0, streakHalfLengthPx: 2 },
        walls: [{ kind: 'band', thicknessPx: 20, level: 0.1 }, { kind: 'band', thicknessPx: 20, level: 0.1 }],
        imaging: { psfSigmaPx: 1, noiseSigma: 0, bitDepth: 16 },
      }));
      const g = channelGeometry(240, 180, axisDeg, 90, 0, 0);
      const p = r.image.planes[0];
      const sample = (x: number, y: number) => {
        const x0 = Math.floor(x), y0 = Math.floor(y), fx = x - x0, fy = y - y0, i = y0 * 240 + x0;
        return (1 - fy) * ((1 - fx) * p[i] + fx * p[i + 1]) + fy * ((1 - fx) * p[i + 240] + fx * p[i + 241]);
      };
      for (const k of [0, 1] as const) {
        const l = g.walls[k], [ox, oy] = g.outward[k];
        // Walk along the outward normal from 4 px inside to 4 px outside; find the 0.3 crossing.
        const bx = l.px - 30 * l.dx, by = l.py - 30 * l.dy;
        let prev = sample(bx - 4 * ox, by - 4 * oy), crossing = NaN;
        for (let t = -4 + 0.01; t <= 4; t += 0.01) {
          const v = sample(bx + t * ox, by + t * oy);
          if (prev >= 0.3 && v < 0.3) { crossing = t - 0.01 * (0.3 - v) / (prev - v); break; }
          prev = v;
        }
        // The box-filtered edge and bilinear sampling of the blurred step leave a few hundredths of a pixel.
        expect(Math.abs(crossing)).toBeLessThan(0.05);
      }
    }
  });

  it('puts the sample-free rectangle outside the walls and their bands', () => {
    const r = renderScene(scene({ seed: 3, width: 320, height: 240, source: 'colour', channel: { axisDeg: 23, widthPx: 100 }, background: { kind: 'sample-free' } }));
    const rect = r.truth.backgroundRect!;
    const g = channelGeometry(320, 240, 23, 100, 0, 0);
    for (const [x, y] of [[rect.x, rect.y], [rect.x + rect.width - 1, rect.y], [rect.x, rect.y + rect.height - 1], [rect.x + rect.width - 1, rect.y + rect.height - 1]]) {
      const d = Math.max(
        (x - g.walls[0].px) * g.outward[0][0] + (y - g.walls[0].py) * g.outward[0][1],
        (x - g.walls[1].px) * g.outward[1][0] + (y - g.walls[1].py) * g.outward[1][1],
      );
      expect(d).toBeGreaterThan(20); // the default band is 20 px thick
    }
  });
});
