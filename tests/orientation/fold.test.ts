import { describe, it, expect } from 'vitest';
import { foldMod90, mod90Axis } from '../../src/orientation/index.ts';
import { orderParameters } from '../../src/order/index.ts';
import { fieldOf } from '../support/fields.ts';

describe('foldMod90', () => {
  // Angles uniform on +-30 deg about 20 deg, every other one reported 90 deg away (as crossed polars
  // alone would): folding about 20 deg restores S_axis. Closed form: theta uniform on [theta0 - D, theta0 + D] gives
  // S_axis = <cos 2(theta - theta0)> = sin 2D / 2D, here D = 30 deg: sin 60 / (pi / 3) = 0.82699.
  const N = 20000;
  const truth = (k: number) => 20 - 30 + (60 * (k + 0.5)) / N;
  const f = { ...fieldOf(200, 100, (x, y) => truth(y * 200 + x) + ((y * 200 + x) % 2 ? 90 : 0)), ambiguity: 'mod-90' as const };

  it('restores the distribution within 45 deg of the axis', () => {
    expect(orderParameters({ ...f, ambiguity: 'none' }, { axisDeg: 20 }).axisOrder!.order).toBeLessThan(0.01);
    const folded = foldMod90(f, 20);
    expect(Math.abs(orderParameters(folded, { axisDeg: 20 }).axisOrder!.order - 0.82699)).toBeLessThan(1e-4);
    expect(folded.warnings.join(' ')).toMatch(/modulo 90/);
  });

  it('is applied by orderParameters itself for mod-90 fields, and finds the concentration axis', () => {
    expect(Math.abs(orderParameters(f, { axisDeg: 20 }).axisOrder!.order - 0.82699)).toBeLessThan(1e-4);
    expect(Math.abs(mod90Axis(f) - 20)).toBeLessThan(1e-3);
  });

  it('carries cos 2 theta and sin 2 theta over, changed in sign where the angle moved by 90 deg', () => {
    // Closed form: the folded field's cos2 and sin2 are the cosine and sine of twice its own angles (float32, hence 1e-6);
    // given the input's cos 2 theta and sin 2 theta, half the pixels (those reported 90 deg away) change sign.
    const withDoubled = { ...f, cos2: f.angleRad.map((a) => Math.cos(2 * a)), sin2: f.angleRad.map((a) => Math.sin(2 * a)) };
    const folded = foldMod90(withDoubled, 20);
    let worst = 0, turned = 0;
    for (let i = 0; i < f.angleRad.length; i++) {
      worst = Math.max(worst, Math.abs(folded.cos2![i] - Math.cos(2 * folded.angleRad[i])), Math.abs(folded.sin2![i] - Math.sin(2 * folded.angleRad[i])));
      if (Math.sign(folded.cos2![i]) !== Math.sign(withDoubled.cos2[i])) turned++;
    }
    expect(worst).toBeLessThan(1e-6);
    expect(Math.abs(turned - N / 2)).toBeLessThan(N / 20);
    // The input's arrays are left as they were; in place, the field's own arrays are changed.
    expect(withDoubled.cos2[1]).toBe(Math.fround(Math.cos(2 * f.angleRad[1])));
    const own = { ...withDoubled, angleRad: Float32Array.from(f.angleRad), cos2: Float32Array.from(withDoubled.cos2), sin2: Float32Array.from(withDoubled.sin2) };
    const inPlace = foldMod90(own, 20, true);
    expect(inPlace.angleRad).toBe(own.angleRad);
    expect(inPlace.angleRad).toEqual(folded.angleRad);
    expect(inPlace.cos2).toEqual(folded.cos2);
  });

  it('leaves resolved pixels and unambiguous fields alone', () => {
    const ambiguous = new Uint8Array(f.angleRad.length);
    ambiguous[1] = 1;
    const folded = foldMod90({ ...f, ambiguous }, 20);
    expect(folded.angleRad[3]).toBe(f.angleRad[3]);
    expect(Math.abs((folded.angleRad[1] * 180) / Math.PI - truth(1))).toBeLessThan(1e-4);
    const plain = { ...f, ambiguity: 'none' as const };
    expect(foldMod90(plain, 20)).toBe(plain);
  });

  it('takes every angle to within 45 deg of the centre, whatever the centre, near the fold\'s edge included', () => {
    // From the definition: the folded angle lies in (-90, 90] deg, within 45 deg of the centre modulo 180 deg, and
    // differs from the input by a multiple of 90 deg, so its cos 2 theta and sin 2 theta (carried over, changed in sign
    // where it moved by an odd multiple) are those of twice its own angle (float32, hence 1e-5). Centres far beyond a
    // turn (1e8 deg) included; a third of the angles lie within a few float32 steps of 45 deg from the centre.
    const n = 30001;
    for (const centreDeg of [20, -1000, 720.5, 44.99, 1e8]) {
      const c = (centreDeg * Math.PI) / 180;
      const angleRad = Float32Array.from({ length: n }, (_, i) => {
        if (i % 3) return (((i * 7919) % 18000) / 100 - 90) * (Math.PI / 180);
        const edge = Math.fround(c + ((i % 2 ? 1 : -1) * Math.PI) / 4) + ((i % 11) - 5) * 1e-7;
        return Math.fround(edge - Math.PI * Math.round(edge / Math.PI));
      });
      const g = { ...fieldOf(n, 1, () => 0), angleRad, cos2: angleRad.map((a) => Math.cos(2 * a)), sin2: angleRad.map((a) => Math.sin(2 * a)), ambiguity: 'mod-90' as const };
      const folded = foldMod90(g, centreDeg);
      let worst = 0, outside = 0;
      for (let i = 0; i < n; i++) {
        const a = folded.angleRad[i];
        if (!(a > -Math.PI / 2 - 1e-6 && a <= Math.PI / 2 + 1e-6)) outside++;
        let d = (a - c) % Math.PI;
        if (d < 0) d += Math.PI;
        if (Math.min(d, Math.PI - d) > Math.PI / 4 + 1e-5) outside++;
        const steps = (a - angleRad[i]) / (Math.PI / 2);
        if (Math.abs(steps - Math.round(steps)) > 1e-5) outside++;
        worst = Math.max(worst, Math.abs(folded.cos2![i] - Math.cos(2 * a)), Math.abs(folded.sin2![i] - Math.sin(2 * a)));
      }
      expect(outside).toBe(0);
      expect(worst).toBeLessThan(1e-5);
    }
  });
});

