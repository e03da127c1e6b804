/**
 * Fibre numbers (docs/methods.md §13, "Fibre numbers"): linear density, packing fraction, tenacity and tensile strength,
 * birefringence and orientation factor, vibroscope linear density.
 *
 * Definitions: tex = g per 1000 m, dtex = g per 10 000 m, denier = g per 9000 m, so 1 tex = 10 dtex =
 * 9 den. A solid fibre of cross-section A [um^2] and density rho [g/cm^3] has
 * tex = rho * A * 1e-3 (A * 1e-8 cm^2 times 1e5 cm per km). Tenacity to tensile strength: 1 N/tex = 1 GPa / (g/cm^3).
 */
import { InputError } from '../common/index.ts';
import { expandedInterval, type Interval } from './uncertainty.ts';
import { combineUncertainties } from '../common/index.ts';

/** Standard gravity (exact by definition, CGPM 1901), for gram-force. */
const STANDARD_GRAVITY_M_PER_S2 = 9.80665;

function positive(name: string, value: number, unit: string, max = 1e12): number {
  if (typeof value !== 'number' || !Number.isFinite(value) || value <= 0 || value > max) {
    throw new InputError(`${name} must be a positive number${unit ? ` in ${unit}` : ''}, got ${String(value)}`,
      `Give ${name} a value above 0`);
  }
  return value;
}

/** Cross-section of a round fibre, A = pi D^2 / 4, in um^2 from D in um. */
export function roundAreaUm2(diameterUm: number): number {
  positive('diameter', diameterUm, 'um', 1e6);
  return (Math.PI * diameterUm * diameterUm) / 4;
}

/** Linear density in tex of a solid fibre of cross-section `areaUm2` and density `densityGPerCm3`: rho A 1e-3. */
export function texFromArea(areaUm2: number, densityGPerCm3: number): number {
  positive('cross-section area', areaUm2, 'um^2');
  positive('density', densityGPerCm3, 'g/cm3', 100);
  return densityGPerCm3 * areaUm2 * 1e-3;
}

/** Linear density in tex of a solid round fibre: tex = rho pi D^2 / 4 * 1e-3 (D in um, rho in g/cm^3). */
export function texFromDiameter(diameterUm: number, densityGPerCm3: number): number {
  return texFromArea(roundAreaUm2(diameterUm), densityGPerCm3);
}

/** Diameter in um of a solid round fibre of linear density `tex`: D = sqrt(4 tex 1e3 / (pi rho)). */
export function diameterUmFromTex(tex: number, densityGPerCm3: number): number {
  positive('linear density', tex, 'tex');
  positive('density', densityGPerCm3, 'g/cm3', 100);
  return Math.sqrt((4 * tex * 1e3) / (Math.PI * densityGPerCm3));
}

/** tex -> dtex (x 10). */
export const texToDtex = (tex: number): number => tex * 10;
/** dtex -> tex (/ 10). */
export const dtexToTex = (dtex: number): number => dtex / 10;
/** tex -> denier (x 9: denier is g per 9000 m). */
export const texToDenier = (tex: number): number => tex * 9;
/** denier -> tex (/ 9). */
export const denierToTex = (denier: number): number => denier / 9;

export interface PackingFraction {
  /** Measured tex / tex of a solid round fibre of the measured diameter (1 = fully dense). */
  packingFraction: number;
  solidTex: number;
  warnings: string[];
}

/**
 * Packing fraction (fill factor) of a porous or multi-filament fibre: measured linear density over the
 * linear density a solid round fibre of the imaged diameter would have. A value above 1 is
 * physically impossible for a dense material; it is returned with a warning (wrong density, a
 * non-round cross-section seen edge-on, or a diameter under-estimate) rather than clipped.
 */
export function packingFraction(measuredTex: number, diameterUm: number, densityGPerCm3: number): PackingFraction {
  positive('measured linear density', measuredTex, 'tex');
  const solidTex = texFromDiameter(diameterUm, densityGPerCm3);
  const phi = measuredTex / solidTex;
  const warnings: string[] = [];
  if (phi > 1) {
    warnings.push(`packing fraction ${phi.toFixed(3)} is above 1: the measured linear density is more than a solid ` +
      'fibre of this diameter and density can have; check the density, the diameter and the cross-section shape');
  }
  return { packingFraction: phi, solidTex, warnings };
}

/** Tensile strength in GPa from tenacity in N/tex at density rho: sigma = tenacity * rho (1 N/tex = 1 GPa/(g/cm^3)). */
export function gpaFromNPerTex(nPerTex: number, densityGPerCm3: number): number {
  positive('tenacity', nPerTex, 'N/tex', 1e3);
  positive('density', densityGPerCm3, 'g/cm3', 100);
  return nPerTex * densityGPerCm3;
}

/** Tenacity in N/tex from tensile strength in GPa at density rho: tenacity = sigma / rho. */
export function nPerTexFromGpa(gpa: number, densityGPerCm3: number): number {
  positive('tensile strength', gpa, 'GPa', 1e4);
  positive('density', densityGPerCm3, 'g/cm3', 100);
  return gpa / densityGPerCm3;
}

/** cN/dtex -> N/tex: 1 cN/dtex = 0.01 N / 0.1 tex = 0.1 N/tex. */
export const cnPerDtexToNPerTex = (cnPerDtex: number): number => cnPerDtex * 0.1;
/** N/tex -> cN/dtex. */
export const nPerTexToCnPerDtex = (nPerTex: number): number => nPerTex * 10;
/** gf/den -> N/tex: 9.80665e-3 N / (1/9 tex) = 0.0882599 N/tex per gf/den. */
export const gfPerDenToNPerTex = (gfPerDen: number): number => gfPerDen * STANDARD_GRAVITY_M_PER_S2 * 1e-3 * 9;
/** N/tex -> gf/den. */
export const nPerTexToGfPerDen = (nPerTex: number): number => nPerTex / (STANDARD_GRAVITY_M_PER_S2 * 1e-3 * 9);

/**
 * Birefringence Delta n = retardance / thickness (dimensionless), retardance in nm, thickness in um
 * (so Delta n = retardanceNm / (thicknessUm * 1000)). For a round fibre viewed side-on the path through
 * its centre is the diameter, so use the centre-line retardance: Gamma(x) = 2 Delta n sqrt(R^2 - x^2)
 * (docs/methods.md §2.2) makes a median over the whole width about 0.87 of it.
 */
export function birefringence(retardanceNm: number, thicknessUm: number): number {
  if (typeof retardanceNm !== 'number' || !Number.isFinite(retardanceNm) || retardanceNm < 0) {
    throw new InputError(`retardance must be a number of nm >= 0, got ${String(retardanceNm)}`);
  }
  positive('thickness', thicknessUm, 'um', 1e6);
  return retardanceNm / (thicknessUm * 1000);
}

export interface OrientationFactor {
  /** Delta n / Delta n_intrinsic (Hermans-type orientation factor from birefringence). */
  orientationFactor: number;
  warnings: string[];
}

/**
 * Orientation factor f = Delta n / Delta n0, with Delta n0 the intrinsic birefringence of the perfectly
 * aligned material (signed: a negative Delta n0 material has negative Delta n when aligned). f outside
 * [-0.5, 1] (the range of <P2>) is returned with a warning.
 */
export function orientationFactor(birefringenceValue: number, intrinsicBirefringence: number): OrientationFactor {
  if (!Number.isFinite(birefringenceValue)) {
    throw new InputError(`birefringence must be a finite number, got ${String(birefringenceValue)}`);
  }
  if (!Number.isFinite(intrinsicBirefringence) || intrinsicBirefringence === 0 || Math.abs(intrinsicBirefringence) > 5) {
    throw new InputError(`intrinsic birefringence must be a non-zero number (|value| <= 5), got ${String(intrinsicBirefringence)}`);
  }
  const f = birefringenceValue / intrinsicBirefringence;
  const warnings = f > 1 || f < -0.5
    ? [`orientation factor ${f.toFixed(3)} is outside [-0.5, 1]: check the retardance order, thickness and intrinsic birefringence`]
    : [];
  return { orientationFactor: f, warnings };
}

export interface VibroscopeResult {
  linearDensityKgPerM: number;
  tex: number;
  dtex: number;
  denier: number;
}

/**
 * Vibroscope linear density (ASTM D1577 option C; ideal string of length L under tension T vibrating at
 * its fundamental f = (1/(2L)) sqrt(T/m)): m = T / (4 L^2 f^2) in kg/m; 1 tex = 1e-6 kg/m.
 * Bending stiffness is neglected (the ideal-string model), which over-estimates m for stiff fibres.
 */
export function vibroscopeLinearDensity(tensionN: number, lengthM: number, frequencyHz: number): VibroscopeResult {
  positive('tension', tensionN, 'N', 1e3);
  positive('vibrating length', lengthM, 'm', 10);
  positive('frequency', frequencyHz, 'Hz', 1e9);
  const m = tensionN / (4 * lengthM * lengthM * frequencyHz * frequencyHz);
  const tex = m * 1e6;
  return { linearDensityKgPerM: m, tex, dtex: texToDtex(tex), denier: texToDenier(tex) };
}

/** Apparent width of a fibre of width D measured psi degrees off its normal: D / cos(psi). */
export function offNormalWidth(widthTrue: number, psiDeg: number): number {
  if (!Number.isFinite(psiDeg) || Math.abs(psiDeg) >= 90) {
    throw new InputError(`angle off the normal must be a number of degrees in (-90, 90), got ${String(psiDeg)}`);
  }
  positive('width', widthTrue, '');
  return widthTrue / Math.cos((psiDeg * Math.PI) / 180);
}

export interface FibreNumbersInput {
  diameterUm: number;
  densityGPerCm3: number;
  /** Measured linear density, for the packing fraction. */
  linearDensityTex?: number;
  tenacityNPerTex?: number;
  strengthGPa?: number;
  retardanceNm?: number;
  /** Optical path for the birefringence; default the diameter. */
  thicknessUm?: number;
  intrinsicBirefringence?: number;
  /** Standard uncertainties (k = 1) of the inputs, in the inputs' units; see FibreNumberUncertainties. */
  uncertainties?: FibreNumberUncertainties;
}

/**
 * Standard uncertainties (k = 1) of the calculator's inputs, each in the unit of its input, with the
 * diameter's effective degrees of freedom (from `retarda diameter`: `dofUm`; infinite when not given).
 */
export interface FibreNumberUncertainties {
  diameterUm?: number;
  diameterDof?: number;
  densityGPerCm3?: number;
  linearDensityTex?: number;
  tenacityNPerTex?: number;
  strengthGPa?: number;
  retardanceNm?: number;
  thicknessUm?: number;
  intrinsicBirefringence?: number;
}

/** The numbers that can carry an interval. */
export type FibreNumberKey = 'areaUm2' | 'solidTex' | 'solidDtex' | 'solidDenier' | 'packingFraction' | 'tenacityNPerTex'
  | 'tenacityCnPerDtex' | 'tenacityGfPerDen' | 'strengthGPa' | 'birefringence' | 'orientationFactor';

/** A number's 95 % interval and the inputs whose uncertainties made it. */
export interface FibreNumberInterval extends Interval {
  from: (keyof FibreNumberUncertainties)[];
}

/** One input of a product of powers y = K x1^a1 x2^a2 ...: its exponent, value, standard uncertainty and dof. */
interface PowerInput {
  name: keyof FibreNumberUncertainties;
  exponent: number;
  value: number;
  u: number | undefined;
  dof?: number;
}

/**
 * Interval of y = K prod x_i^a_i by the law of propagation for independent inputs (GUM, JCGM 100:2008,
 * 5.1.6: relative uncertainties of a product of powers add in quadrature with weights a_i):
 * u(y)/y = sqrt(sum (a_i u(x_i)/x_i)^2), dof by Welch-Satterthwaite, k = t(0.975, dof). Null when no input
 * has an uncertainty. docs/methods.md, "Fibre numbers: uncertainty".
 */
export function powerLawInterval(y: number, inputs: PowerInput[]): FibreNumberInterval | null {
  const given = inputs.filter((x) => x.u !== undefined && x.u > 0);
  if (given.length === 0) return null;
  const c = combineUncertainties(given.map((x) => ({
    u: Math.abs((y * x.exponent * (x.u as number)) / x.value), dof: x.dof ?? Infinity,
  })));
  return { ...expandedInterval(y, c), from: given.map((x) => x.name) };
}

export interface FibreNumbers {
  diameterUm: number;
  densityGPerCm3: number;
  areaUm2: number;
  solidTex: number;
  solidDtex: number;
  solidDenier: number;
  linearDensityTex: number | null;
  linearDensityDtex: number | null;
  linearDensityDenier: number | null;
  packingFraction: number | null;
  tenacityNPerTex: number | null;
  tenacityCnPerDtex: number | null;
  tenacityGfPerDen: number | null;
  /** Tensile strength on the solid cross-section at the given density (tenacity x density), GPa. */
  strengthGPa: number | null;
  retardanceNm: number | null;
  thicknessUm: number | null;
  birefringence: number | null;
  intrinsicBirefringence: number | null;
  orientationFactor: number | null;
  /** 95 % intervals of the numbers whose inputs carry a standard uncertainty (absent otherwise). */
  intervals: Partial<Record<FibreNumberKey, FibreNumberInterval>>;
  warnings: string[];
}

/**
 * Every fibre number the inputs allow, in one record (the `retarda fibre` output). Tenacity and
 * strength are alternatives: give one and the other follows at the given density.
 */
export function fibreNumbers(input: FibreNumbersInput): FibreNumbers {
  const { diameterUm, densityGPerCm3 } = input;
  const areaUm2 = roundAreaUm2(diameterUm);
  const solidTex = texFromDiameter(diameterUm, densityGPerCm3);
  const warnings: string[] = [];
  let pf: number | null = null;
  const measured = input.linearDensityTex ?? null;
  if (measured !== null) {
    const p = packingFraction(measured, diameterUm, densityGPerCm3);
    pf = p.packingFraction;
    warnings.push(...p.warnings);
  }
  if (input.tenacityNPerTex !== undefined && input.strengthGPa !== undefined) {
    throw new InputError('give either the tenacity (N/tex) or the tensile strength (GPa), not both');
  }
  let tenacity: number | null = null;
  let strength: number | null = null;
  if (input.tenacityNPerTex !== undefined) {
    tenacity = input.tenacityNPerTex;
    strength = gpaFromNPerTex(tenacity, densityGPerCm3);
  } else if (input.strengthGPa !== undefined) {
    strength = input.strengthGPa;
    tenacity = nPerTexFromGpa(strength, densityGPerCm3);
  }
  let dn: number | null = null;
  let thickness: number | null = null;
  let f: number | null = null;
  if (input.retardanceNm !== undefined) {
    thickness = input.thicknessUm ?? diameterUm;
    dn = birefringence(input.retardanceNm, thickness);
    if (input.intrinsicBirefringence !== undefined) {
      // A retardance is a magnitude: it gives |Delta n|, so compare with |Delta n0| (the compensator's
      // addition or subtraction colour, not this number, tells length-slow from length-fast).
      const o = orientationFactor(dn, Math.abs(input.intrinsicBirefringence));
      f = o.orientationFactor;
      warnings.push(...o.warnings);
    }
  } else if (input.intrinsicBirefringence !== undefined) {
    warnings.push('intrinsic birefringence given without a retardance: no orientation factor computed');
  }
  const intervals = numberIntervals(input, { areaUm2, solidTex, packingFraction: pf, tenacity, strength, dn, thickness, f });
  return {
    diameterUm, densityGPerCm3, areaUm2, solidTex, solidDtex: texToDtex(solidTex), solidDenier: texToDenier(solidTex),
    linearDensityTex: measured, linearDensityDtex: measured === null ? null : texToDtex(measured),
    linearDensityDenier: measured === null ? null : texToDenier(measured), packingFraction: pf,
    tenacityNPerTex: tenacity, tenacityCnPerDtex: tenacity === null ? null : nPerTexToCnPerDtex(tenacity),
    tenacityGfPerDen: tenacity === null ? null : nPerTexToGfPerDen(tenacity), strengthGPa: strength,
    retardanceNm: input.retardanceNm ?? null, thicknessUm: thickness, birefringence: dn,
    intrinsicBirefringence: input.intrinsicBirefringence ?? null, orientationFactor: f, intervals, warnings,
  };
}

const checkUncertainty = (name: string, u: number | undefined) => {
  if (u !== undefined && !(Number.isFinite(u) && u >= 0)) {
    throw new InputError(`the uncertainty of the ${name} must be a number >= 0, got ${String(u)}`,
      'Give a standard uncertainty (k = 1) in the unit of the value');
  }
  return u;
};

/**
 * The intervals of every number whose inputs carry an uncertainty (see powerLawInterval): area ~ D^2,
 * solid tex ~ rho D^2, packing fraction ~ T rho^-1 D^-2, stress = tenacity rho (or tenacity = stress / rho),
 * birefringence = retardance / thickness (thickness = D unless given), orientation factor = that / Delta n0.
 */
function numberIntervals(input: FibreNumbersInput, v: {
  areaUm2: number; solidTex: number; packingFraction: number | null; tenacity: number | null; strength: number | null;
  dn: number | null; thickness: number | null; f: number | null;
}): Partial<Record<FibreNumberKey, FibreNumberInterval>> {
  const u = input.uncertainties ?? {};
  for (const [k, val] of Object.entries(u)) if (k !== 'diameterDof') checkUncertainty(k, val);
  if (u.diameterDof !== undefined && !(u.diameterDof >= 1)) {
    throw new InputError(`the diameter's degrees of freedom must be at least 1, got ${String(u.diameterDof)}`);
  }
  const D: PowerInput = { name: 'diameterUm', exponent: 2, value: input.diameterUm, u: u.diameterUm, dof: u.diameterDof };
  const rho = (exponent: number): PowerInput => ({ name: 'densityGPerCm3', exponent, value: input.densityGPerCm3, u: u.densityGPerCm3 });
  const out: Partial<Record<FibreNumberKey, FibreNumberInterval>> = {};
  const put = (key: FibreNumberKey, iv: FibreNumberInterval | null) => { if (iv) out[key] = iv; };
  const scaled = (iv: FibreNumberInterval | null, factor: number): FibreNumberInterval | null => iv && {
    ...iv, u: iv.u * factor, ciLow: iv.ciLow * factor, ciHigh: iv.ciHigh * factor,
  };
  put('areaUm2', powerLawInterval(v.areaUm2, [D]));
  const tex = powerLawInterval(v.solidTex, [D, rho(1)]);
  put('solidTex', tex);
  put('solidDtex', scaled(tex, 10));
  put('solidDenier', scaled(tex, 9));
  if (v.packingFraction !== null && input.linearDensityTex !== undefined) {
    put('packingFraction', powerLawInterval(v.packingFraction, [
      { name: 'linearDensityTex', exponent: 1, value: input.linearDensityTex, u: u.linearDensityTex },
      { ...D, exponent: -2 }, rho(-1)]));
  }
  if (v.tenacity !== null && v.strength !== null) {
    const fromTenacity = input.tenacityNPerTex !== undefined;
    const given: PowerInput = fromTenacity
      ? { name: 'tenacityNPerTex', exponent: 1, value: v.tenacity, u: u.tenacityNPerTex }
      : { name: 'strengthGPa', exponent: 1, value: v.strength, u: u.strengthGPa };
    const ten = powerLawInterval(v.tenacity, fromTenacity ? [given] : [given, rho(-1)]);
    put('tenacityNPerTex', ten);
    put('tenacityCnPerDtex', scaled(ten, nPerTexToCnPerDtex(1)));
    put('tenacityGfPerDen', scaled(ten, nPerTexToGfPerDen(1)));
    put('strengthGPa', powerLawInterval(v.strength, fromTenacity ? [given, rho(1)] : [given]));
  }
  if (v.dn !== null && v.thickness !== null && input.retardanceNm !== undefined) {
    const path: PowerInput = input.thicknessUm !== undefined
      ? { name: 'thicknessUm', exponent: -1, value: v.thickness, u: u.thicknessUm }
      : { ...D, exponent: -1 };
    const R: PowerInput = { name: 'retardanceNm', exponent: 1, value: input.retardanceNm, u: u.retardanceNm };
    if (input.retardanceNm > 0) {
      put('birefringence', powerLawInterval(v.dn, [R, path]));
      if (v.f !== null && input.intrinsicBirefringence !== undefined) {
        put('orientationFactor', powerLawInterval(v.f, [R, path, {
          name: 'intrinsicBirefringence', exponent: -1, value: Math.abs(input.intrinsicBirefringence), u: u.intrinsicBirefringence,
        }]));
      }
    }
  }
  return out;
}
