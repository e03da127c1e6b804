import { describe, expect, it } from 'vitest';
import {
  birefringence, cnPerDtexToNPerTex, denierToTex, diameterUmFromTex, dtexToTex, fibreNumbers, gfPerDenToNPerTex,
  gpaFromNPerTex, nPerTexFromGpa, nPerTexToGfPerDen, offNormalWidth, orientationFactor, packingFraction, roundAreaUm2,
  studentTQuantile, texFromDiameter, texToDenier, texToDtex, vibroscopeLinearDensity,
} from '../../src/fibre/index.ts';
import { judgeCoverage, type IntervalSample } from '../validation/fibre.ts';
import { gaussianNoise } from './render.ts';

describe('linear-density units', () => {
  it('follow the definitions tex = g/km, dtex = g/10 km, denier = g/9 km', () => {
    // Definitions (tex = g per 1000 m, dtex = g per 10 000 m, denier = g per 9000 m): 1 tex = 10 dtex = 9 den; 1 den = 1/9 tex = 1.1111 dtex
    expect(texToDtex(1)).toBe(10);
    expect(texToDenier(1)).toBe(9);
    expect(texToDtex(denierToTex(1))).toBeCloseTo(1.1111, 4);
    // 1 dtex = 0.9 den
    expect(texToDenier(dtexToTex(1))).toBeCloseTo(0.9, 12);
    // 1 g over 9000 m is 1 den, i.e. 1000/9000 g per km = 0.11111 tex
    expect(denierToTex(1)).toBeCloseTo(1000 / 9000, 12);
  });
});

describe('solid round fibre: tex = rho * pi D^2 / 4 * 1e-3', () => {
  it('carbon fibre 7.0 um at 1.80 g/cm3', () => {
    // Closed forms: A = pi 7^2 / 4 = 38.48451 um^2; tex = 1.8 x 38.48451 x 1e-3 = 0.0692721 = 0.692721 dtex = 0.623449 den (tol 1e-5)
    expect(roundAreaUm2(7)).toBeCloseTo(38.4845, 4);
    const tex = texFromDiameter(7, 1.8);
    expect(Math.abs(tex - 0.069272)).toBeLessThan(1e-5);
    expect(Math.abs(texToDtex(tex) - 0.69272)).toBeLessThan(1e-5);
    expect(Math.abs(texToDenier(tex) - 0.62345)).toBeLessThan(1e-5);
  });
  it('PET 12 um at 1.38 g/cm3', () => {
    // Closed form: 1.38 x pi x 12^2 / 4 x 1e-3 = 0.156075 tex = 1.56075 dtex = 1.40467 den (tol 1e-4)
    const tex = texFromDiameter(12, 1.38);
    expect(Math.abs(tex - 0.15607)).toBeLessThan(1e-4);
    expect(Math.abs(texToDtex(tex) - 1.5607)).toBeLessThan(1e-4);
    expect(Math.abs(texToDenier(tex) - 1.4047)).toBeLessThan(1e-4);
  });
  it('inverse: PET diameters of 1 dtex and 1 den', () => {
    // Closed form D = sqrt(4 tex 1e3 / (pi rho)): sqrt(4 x 0.1 x 1e3 / (pi x 1.38)) = 9.6054 um; 1 den = 1/9 tex -> 10.1250 um (tol 1e-3)
    expect(Math.abs(diameterUmFromTex(dtexToTex(1), 1.38) - 9.605)).toBeLessThan(1e-3);
    expect(Math.abs(diameterUmFromTex(denierToTex(1), 1.38) - 10.125)).toBeLessThan(1e-3);
    // Round trip (algebraic identity)
    expect(texFromDiameter(diameterUmFromTex(0.3, 1.5), 1.5)).toBeCloseTo(0.3, 12);
  });
});

describe('tenacity and tensile strength: 1 N/tex = 1 GPa/(g/cm3)', () => {
  it('4.9 GPa at 1.80 g/cm3 is 2.7222 N/tex', () => {
    // 1 N/tex = 1 GPa / (g/cm3) (derived, docs/methods.md §13.3): 4.9 / 1.8 = 2.72222 N/tex (tol 1e-4)
    expect(Math.abs(nPerTexFromGpa(4.9, 1.8) - 2.7222)).toBeLessThan(1e-4);
    expect(gpaFromNPerTex(nPerTexFromGpa(4.9, 1.8), 1.8)).toBeCloseTo(4.9, 12);
  });
  it('1 cN/dtex = 0.1 N/tex and 1 gf/den = 0.0882599 N/tex', () => {
    // 1 cN/dtex = 0.01 N / 0.1 tex; 1 gf/den = 9.80665e-3 N / (1/9 tex) = 0.0882599 N/tex (standard gravity, CGPM 1901 definition)
    expect(cnPerDtexToNPerTex(1)).toBeCloseTo(0.1, 12);
    expect(Math.abs(gfPerDenToNPerTex(1) - 0.0882599)).toBeLessThan(1e-7);
    expect(nPerTexToGfPerDen(gfPerDenToNPerTex(3.2))).toBeCloseTo(3.2, 12);
  });
});

describe('packing fraction = measured tex / solid tex of the measured diameter', () => {
  it('is 0.5 for half the solid linear density, and warns above 1', () => {
    const solid = texFromDiameter(10, 1.5);
    const half = packingFraction(solid / 2, 10, 1.5);
    expect(half.packingFraction).toBeCloseTo(0.5, 12);
    expect(half.warnings).toEqual([]);
    const over = packingFraction(solid * 1.2, 10, 1.5);
    expect(over.packingFraction).toBeCloseTo(1.2, 12);
    expect(over.warnings.join(' ')).toMatch(/above 1/);
  });
});

describe('birefringence and orientation factor', () => {
  it('dn = retardance / thickness: 550 nm over 10 um is 0.055', () => {
    // Definition Gamma = d dn (docs/methods.md §13.4): 550 nm / 10 000 nm = 0.055
    expect(birefringence(550, 10)).toBeCloseTo(0.055, 12);
  });
  it('f = dn / dn0 with a warning outside [-0.5, 1]', () => {
    expect(orientationFactor(0.055, 0.11).orientationFactor).toBeCloseTo(0.5, 12);
    expect(orientationFactor(0.055, 0.11).warnings).toEqual([]);
    expect(orientationFactor(0.2, 0.11).warnings.join(' ')).toMatch(/outside/);
  });
});

describe('vibroscope (ASTM D1577 option C, ideal string): m = T / (4 L^2 f^2)', () => {
  it('T = 1.000 mN, L = 20.0 mm, f = 2041.2 Hz gives 1.500e-7 kg/m = 1.500 dtex', () => {
    // Closed form m = T / (4 L^2 f^2) = 1e-3 / (4 x 0.02^2 x 2041.2^2) = 1.5000e-7 kg/m = 1.500 dtex (1 dtex = 1e-7 kg/m) (tol 1e-3)
    const r = vibroscopeLinearDensity(1e-3, 0.02, 2041.2);
    expect(Math.abs(r.linearDensityKgPerM / 1.5e-7 - 1)).toBeLessThan(1e-3);
    expect(Math.abs(r.dtex - 1.5)).toBeLessThan(1e-3);
  });
});

describe('width measured off the normal', () => {
  it('reads D / cos psi: 20 um at 30 deg is 23.094 um', () => {
    // Closed form D / cos psi = 20 / cos 30 deg = 23.0940 um (tol 1e-3)
    expect(Math.abs(offNormalWidth(20, 30) - 23.094)).toBeLessThan(1e-3);
  });
});

describe('fibreNumbers (the record behind `retarda fibre`)', () => {
  it('combines the numbers consistently', () => {
    const r = fibreNumbers({ diameterUm: 7, densityGPerCm3: 1.8, linearDensityTex: 0.06, tenacityNPerTex: 2.7222,
      retardanceNm: 700, intrinsicBirefringence: 0.2 });
    expect(Math.abs(r.solidTex - 0.069272)).toBeLessThan(1e-5); // closed form, as above: 1.8 x pi x 49 / 4 x 1e-3
    expect(r.packingFraction).toBeCloseTo(0.06 / r.solidTex, 12);
    expect(Math.abs((r.strengthGPa as number) - 4.9)).toBeLessThan(1e-3); // stress = tenacity x rho = 2.7222 x 1.8 = 4.89996 GPa
    expect(r.tenacityCnPerDtex).toBeCloseTo(27.222, 9);
    expect(r.thicknessUm).toBe(7);
    expect(r.birefringence).toBeCloseTo(0.1, 12);
    expect(r.orientationFactor).toBeCloseTo(0.5, 12);
  });
  it('throws InputError on negative, zero or NaN inputs and on tenacity and strength together', () => {
    expect(() => fibreNumbers({ diameterUm: -1, densityGPerCm3: 1.8 })).toThrow(/diameter/);
    expect(() => fibreNumbers({ diameterUm: 7, densityGPerCm3: 0 })).toThrow(/density/);
    expect(() => fibreNumbers({ diameterUm: NaN, densityGPerCm3: 1.8 })).toThrow(/diameter/);
    expect(() => fibreNumbers({ diameterUm: 7, densityGPerCm3: 1.8, linearDensityTex: -0.1 })).toThrow(/linear density/);
    expect(() => fibreNumbers({ diameterUm: 7, densityGPerCm3: 1.8, tenacityNPerTex: 1, strengthGPa: 2 }))
      .toThrow(/not both/);
    expect(() => birefringence(-5, 10)).toThrow(/retardance/);
    expect(() => orientationFactor(0.1, 0)).toThrow(/intrinsic/);
    expect(() => vibroscopeLinearDensity(1e-3, 0, 2000)).toThrow(/length/);
    expect(() => offNormalWidth(20, 90)).toThrow(/angle/);
  });
});

describe('intervals of the fibre numbers (law of propagation, GUM JCGM 100:2008 5.1.6 and G.2b)', () => {
  // scipy.stats.norm.ppf(0.975) = 1.959963984540054 (the coverage factor for infinite degrees of freedom)
  const K_NORMAL = 1.959963984540054;

  it('tex ~ rho D^2: the diameter\'s relative uncertainty counts twice, the density\'s once', () => {
    const r = fibreNumbers({ diameterUm: 10, densityGPerCm3: 1.38, uncertainties: { diameterUm: 0.1, densityGPerCm3: 0.01 } });
    // Closed form: u(tex)/tex = sqrt((2 x 0.1/10)^2 + (0.01/1.38)^2)
    const rel = Math.hypot(2 * 0.01, 0.01 / 1.38);
    const tex = r.intervals.solidTex!;
    expect(tex.u / r.solidTex).toBeCloseTo(rel, 12);
    expect(tex.k).toBeCloseTo(K_NORMAL, 9);
    expect(tex.ciHigh - r.solidTex).toBeCloseTo(K_NORMAL * rel * r.solidTex, 12);
    expect(tex.from).toEqual(['diameterUm', 'densityGPerCm3']);
    // dtex and denier are exact multiples (10 and 9), and so are their intervals.
    expect(r.intervals.solidDtex!.ciLow).toBeCloseTo(10 * tex.ciLow, 12);
    expect(r.intervals.solidDenier!.ciHigh).toBeCloseTo(9 * tex.ciHigh, 12);
    // The area depends on the diameter only: u(A)/A = 2 u(D)/D.
    expect(r.intervals.areaUm2!.u / r.areaUm2).toBeCloseTo(0.02, 12);
  });

  it('takes the diameter\'s degrees of freedom into the coverage factor (Welch-Satterthwaite)', () => {
    const r = fibreNumbers({ diameterUm: 10, densityGPerCm3: 1.38,
      uncertainties: { diameterUm: 0.1, diameterDof: 5, densityGPerCm3: 0.01 } });
    const tex = r.intervals.solidTex!;
    // nu_eff = u_c^4 / (u_D-part^4 / 5 + u_rho-part^4 / infinity), parts relative to tex (closed form)
    const dPart = 2 * 0.01;
    const rhoPart = 0.01 / 1.38;
    const nu = (dPart ** 2 + rhoPart ** 2) ** 2 / (dPart ** 4 / 5);
    expect(tex.dof).toBeCloseTo(nu, 9);
    expect(tex.k).toBeCloseTo(studentTQuantile(0.975, nu), 9);
    expect(tex.k).toBeGreaterThan(K_NORMAL);
  });

  it('packing fraction ~ T rho^-1 D^-2, stress = tenacity x rho, birefringence = R / D', () => {
    const r = fibreNumbers({ diameterUm: 8, densityGPerCm3: 1.5, linearDensityTex: 0.06, tenacityNPerTex: 2, retardanceNm: 400,
      intrinsicBirefringence: 0.2,
      uncertainties: { diameterUm: 0.08, densityGPerCm3: 0.03, linearDensityTex: 0.0006, tenacityNPerTex: 0.1, retardanceNm: 8 } });
    expect(r.intervals.packingFraction!.u / r.packingFraction!).toBeCloseTo(Math.hypot(0.01, 2 * 0.01, 0.02), 12);
    expect(r.intervals.strengthGPa!.u / r.strengthGPa!).toBeCloseTo(Math.hypot(0.05, 0.02), 12);
    // The tenacity was given: its interval is its own.
    expect(r.intervals.tenacityNPerTex!.u).toBeCloseTo(0.1, 12);
    expect(r.intervals.tenacityCnPerDtex!.u).toBeCloseTo(1, 12);
    // The optical path is the diameter (not given): u(dn)/dn = sqrt((u(R)/R)^2 + (u(D)/D)^2).
    expect(r.intervals.birefringence!.u / r.birefringence!).toBeCloseTo(Math.hypot(0.02, 0.01), 12);
    // No uncertainty given for the intrinsic birefringence: the orientation factor carries R's and D's only.
    expect(r.intervals.orientationFactor!.from).toEqual(['retardanceNm', 'diameterUm']);
  });

  it('gives no interval where no input carries an uncertainty, and refuses a negative one', () => {
    expect(fibreNumbers({ diameterUm: 7, densityGPerCm3: 1.8 }).intervals).toEqual({});
    expect(() => fibreNumbers({ diameterUm: 7, densityGPerCm3: 1.8, uncertainties: { diameterUm: -0.1 } })).toThrow(/uncertainty/);
  });

  it('covers the true tex at its stated rate over 2000 seeded measurements (and 20 % narrower or wider would not)', () => {
    // Each trial: a diameter measured with noise whose standard uncertainty is itself estimated from 7 values
    // (6 degrees of freedom, as a type A uncertainty is), and a density with a known uncertainty. Truth by construction.
    const g = gaussianNoise(2024);
    const samples: IntervalSample[] = [];
    const trueD = 8;
    const trueRho = 1.38;
    const trueTex = (trueRho * Math.PI * trueD * trueD) / 4 * 1e-3;
    for (let t = 0; t < 2000; t++) {
      const sdD = 0.12;
      let chi2 = 0;
      for (let k = 0; k < 6; k++) chi2 += g() ** 2;
      const r = fibreNumbers({ diameterUm: trueD + sdD * g(), densityGPerCm3: trueRho + 0.01 * g(),
        uncertainties: { diameterUm: sdD * Math.sqrt(chi2 / 6), diameterDof: 6, densityGPerCm3: 0.01 } });
      const iv = r.intervals.solidTex!;
      samples.push({ estimate: r.solidTex, u: iv.u, dof: iv.dof, half: iv.ciHigh - r.solidTex, truth: trueTex });
    }
    const j = judgeCoverage(samples);
    expect(j.coveragePct).toBeGreaterThanOrEqual(93);
    expect(j.coveragePct).toBeLessThanOrEqual(97);
    expect(j.pass).toBe(true);
    expect(judgeCoverage(samples, 0.8).pass).toBe(false);
    expect(judgeCoverage(samples, 1.2).pass).toBe(false);
  });
});
