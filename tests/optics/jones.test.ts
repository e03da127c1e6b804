import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import {
  trainIntensity, crossedIntensity, oneRetarderIntensity, plateIntensity, colourModel, transmission, interferenceColour,
  resolveTrain, fullWavePlate, quarterWavePlate,
} from '../../src/optics/index.ts';
import { DEG } from '../../src/common/angles.ts';
import { InputError } from '../../src/common/errors.ts';
import { seededRandom } from '../../src/order/random.ts';

const crossed = (thetaDeg: number, g: number, lam: number) => trainIntensity(0, [{ axisRad: thetaDeg * DEG, retardanceNm: g }], 90 * DEG, lam);

describe('Jones calculus: one retarder between polars', () => {
  it('reproduces the monochromatic check values', () => {
    // Closed form, crossed polars: I/I0 = sin^2 2theta sin^2(pi Gamma / lambda). lambda 550: theta 45, Gamma 275 -> 1 x 1;
    // Gamma 550 -> sin^2 pi = 0; theta 0 -> 0; theta 22.5, Gamma 275 -> sin^2 45 deg = 0.5 (1e-12: float64 rounding).
    expect(crossed(45, 275, 550)).toBeCloseTo(1, 12);
    expect(crossed(45, 550, 550)).toBeCloseTo(0, 12);
    for (const g of [100, 333, 1234]) expect(crossed(0, g, 550)).toBeCloseTo(0, 12);
    expect(crossed(22.5, 275, 550)).toBeCloseTo(0.5, 12);
  });

  it('matches the closed forms for crossed polars and for any analyser angle', () => {
    // Closed form, analyser at phi to the polariser: I/I0 = cos^2 phi - sin 2(theta - phi) sin 2 theta sin^2(pi Gamma / lambda)
    // (the form used by Sorensen 2013, Eur. J. Mineral. 25:5-10); crossed (phi = 90): sin^2 2theta sin^2(pi Gamma / lambda).
    const rand = seededRandom(7);
    for (let n = 0; n < 200; n++) {
      const th = (rand() * 180 - 90) * DEG, phi = (rand() * 180 - 90) * DEG, g = rand() * 2000, lam = 380 + rand() * 400;
      expect(trainIntensity(0, [{ axisRad: th, retardanceNm: g }], 90 * DEG, lam)).toBeCloseTo(crossedIntensity(th, g, lam), 12);
      expect(trainIntensity(0, [{ axisRad: th, retardanceNm: g }], phi, lam)).toBeCloseTo(oneRetarderIntensity(phi, th, g, lam), 12);
    }
  });

  it('extinction with the slow axis along a polariser, maximum at 45 deg', () => {
    // Closed form: the sin^2 2theta factor is 0 at theta = 0, 90 and largest at +-45.
    let best = -1, bestI = -1;
    for (let t = -90; t < 90; t += 0.5) {
      const i = crossed(t, 200, 550);
      if (i > bestI) { bestI = i; best = t; }
    }
    expect(Math.abs(Math.abs(best) - 45)).toBeLessThan(1e-9);
    expect(crossed(90, 200, 550)).toBeCloseTo(0, 12);
  });
});

describe('Jones calculus: sample followed by a plate', () => {
  it('matches the closed form for random samples and plates', () => {
    // Closed form (multiplying out the two Jones matrices, c = cos(delta/2), s = sin(delta/2), delta = 2 pi Gamma / lambda):
    // I = (cp ss sin2ts + sp cs sin2tp)^2 + (sp ss sin2(tp - ts))^2.
    const rand = seededRandom(11);
    for (let n = 0; n < 200; n++) {
      const ts = (rand() * 180 - 90) * DEG, tp = (rand() * 180 - 90) * DEG, gs = rand() * 1500, gp = rand() * 800, lam = 380 + rand() * 400;
      const jones = trainIntensity(0, [{ axisRad: ts, retardanceNm: gs }, { axisRad: tp, retardanceNm: gp }], 90 * DEG, lam);
      expect(jones).toBeCloseTo(plateIntensity(ts, gs, tp, gp, lam), 12);
    }
  });

  it('gives the intensities numpy finds at 450/550/650 nm', () => {
    // Not published: computed by tests/fixtures/reference/make_optics_reference.py, which multiplies the 2 x 2 complex
    // Jones matrices in numpy (sample 100 nm at 22.5 deg, then a 550-nm plate at 45 deg, crossed polars):
    // I = 0.791942 / 0.146146 / 0.037847. Both in float64: 1e-6 is the fixture's 9 printed digits with room to spare.
    const want = JSON.parse(readFileSync(new URL('../fixtures/reference/optics-reference.json', import.meta.url), 'utf8')).jones.sampleThenPlate.intensity;
    const at = (lam: number) => trainIntensity(0, [{ axisRad: 22.5 * DEG, retardanceNm: 100 }, { axisRad: 45 * DEG, retardanceNm: 550 }], 90 * DEG, lam);
    for (const lam of [450, 550, 650]) expect(Math.abs(at(lam) - want[String(lam)])).toBeLessThan(1e-6);
  });

  it('parallel slow axes add, crossed slow axes subtract', () => {
    // Closed form (the line above with theta_s = theta_p or theta_p + 90): sin^2((dp + ds)/2) and sin^2((dp - ds)/2).
    for (const [gs, gp, lam] of [[100, 550, 480], [300, 530, 610], [37, 560, 700]]) {
      const add = trainIntensity(0, [{ axisRad: 45 * DEG, retardanceNm: gs }, { axisRad: 45 * DEG, retardanceNm: gp }], 90 * DEG, lam);
      const sub = trainIntensity(0, [{ axisRad: -45 * DEG, retardanceNm: gs }, { axisRad: 45 * DEG, retardanceNm: gp }], 90 * DEG, lam);
      expect(add).toBeCloseTo(Math.sin((Math.PI * (gp + gs)) / lam) ** 2, 12);
      expect(sub).toBeCloseTo(Math.sin((Math.PI * (gp - gs)) / lam) ** 2, 12);
    }
  });

  it('Gamma_p = Gamma_s = 550 crossed is black in white light', () => {
    // Closed form: crossed slow axes subtract, I = sin^2(pi (550 - 550) / lambda) = 0 at every wavelength, so Y = 0.
    const m = colourModel({ illuminant: { kind: 'D65' } });
    expect(interferenceColour(m, { angleRad: -45 * DEG, retardanceNm: 550 }).xyz[1]).toBeLessThan(1e-9);
  });

  it('a length-fast sample (negative birefringence) behaves as a length-slow one turned by 90 deg', () => {
    const m = colourModel({});
    const fast = transmission(m, { angleRad: 20 * DEG, retardanceNm: 150, birefringenceSign: -1 });
    const slow = transmission(m, { angleRad: 110 * DEG, retardanceNm: 150 });
    fast.forEach((v, i) => expect(v).toBeCloseTo(slow[i], 12));
  });
});

describe('optical train and monochrome mode', () => {
  it('monochrome mode integrates one wavelength (default filter 546 nm)', () => {
    // Closed form: crossed I/I0 = sin^2 2theta sin^2(pi Gamma / lambda); Y of the open beam is 1 by construction.
    const m = colourModel({ monochromeNm: 546, compensator: null });
    const c = interferenceColour(m, { angleRad: 30 * DEG, retardanceNm: 120 });
    expect(c.xyz[1]).toBeCloseTo(crossedIntensity(30 * DEG, 120, 546), 12);
    expect(quarterWavePlate().retardanceNm).toBeCloseTo(546 / 4, 12);
  });

  it('the open beam has Y = 1 and parallel polars without a sample pass everything', () => {
    const m = colourModel({ analyserDeg: 0, compensator: null });
    expect(interferenceColour(m, { angleRad: 0, retardanceNm: 0 }).xyz[1]).toBeCloseTo(1, 12);
  });

  it('resolveTrain fills the defaults and rejects nonsense', () => {
    const t = resolveTrain();
    expect(t.polariserDeg).toBe(0);
    expect(t.analyserDeg).toBe(90);
    expect(t.compensator).toEqual(fullWavePlate(550, 45));
    expect(t.illuminant).toEqual({ kind: 'blackbody', temperatureK: 3200 });
    expect(() => resolveTrain({ compensator: fullWavePlate(-5) })).toThrow(InputError);
    expect(() => resolveTrain({ monochromeNm: 2000 })).toThrow(InputError);
    expect(() => resolveTrain({ polariserDeg: Number.NaN })).toThrow(InputError);
  });
});
