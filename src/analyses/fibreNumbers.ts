/**
 * The fibre-numbers calculator as an analysis: plain numbers in (with the linear density and the
 * tenacity in the unit the user has them), the `retarda fibre --json` document out.
 */
import { cnPerDtexToNPerTex, denierToTex, dtexToTex, fibreNumbers, gfPerDenToNPerTex, type FibreNumbers } from '../fibre/index.ts';
import { InputError } from '../common/index.ts';
import { SCHEMA_VERSION } from './schema.ts';

export type LinearDensityUnit = 'tex' | 'dtex' | 'den';
export type TenacityUnit = 'N/tex' | 'cN/dtex' | 'gf/den';

export interface FibreNumbersRequest {
  diameterUm: number;
  densityGPerCm3: number;
  /** Measured linear density (for the packing fraction) in tex, dtex or denier. */
  linearDensity?: { value: number; unit: LinearDensityUnit };
  /** Tenacity (breaking force per linear density) in N/tex, cN/dtex or gf/den; an alternative to strengthGPa. */
  tenacity?: { value: number; unit: TenacityUnit };
  strengthGPa?: number;
  retardanceNm?: number;
  /** Optical path for the birefringence, um (default the diameter). */
  thicknessUm?: number;
  intrinsicBirefringence?: number;
  /**
   * Standard uncertainties (k = 1) of the inputs, each in the unit its value is given in (the linear density's
   * and the tenacity's in theirs), and the diameter's degrees of freedom (`dofUm` of `retarda diameter`).
   */
  uncertainties?: {
    diameterUm?: number;
    diameterDof?: number;
    densityGPerCm3?: number;
    linearDensity?: number;
    tenacity?: number;
    strengthGPa?: number;
    retardanceNm?: number;
    thicknessUm?: number;
    intrinsicBirefringence?: number;
  };
}

export interface FibreNumbersResult extends FibreNumbers { schemaVersion: number; analysis: 'fibre' }

/** 1 dtex = 0.1 tex; 1 den = 1/9 tex (tex = g/km, denier = g/9 km). */
const TEX_FROM: Record<LinearDensityUnit, (v: number) => number> = { tex: (v) => v, dtex: dtexToTex, den: denierToTex };
/** 1 cN/dtex = 0.1 N/tex; 1 gf/den = 0.0882598 N/tex (standard gravity). */
const N_PER_TEX_FROM: Record<TenacityUnit, (v: number) => number> = { 'N/tex': (v) => v, 'cN/dtex': cnPerDtexToNPerTex, 'gf/den': gfPerDenToNPerTex };

/**
 * Linear density of the solid round fibre (tex = area um2 x density g/cm3 x 1e-3), dtex and denier; the
 * packing fraction (measured / solid tex); tenacity <-> tensile strength (GPa = N/tex x g/cm3); birefringence
 * (retardance / thickness) and the orientation factor (birefringence / intrinsic birefringence); 95 % intervals of
 * those whose inputs carry standard uncertainties (law of propagation, GUM). See fibreNumbers.
 * @throws InputError for a missing or non-positive diameter or density, an unknown unit, or both tenacity and strength
 */
export function fibreNumbersResult(o: FibreNumbersRequest): FibreNumbersResult {
  if (o.diameterUm === undefined || o.densityGPerCm3 === undefined) {
    throw new InputError('the diameter and the density are both needed', 'Give both (for example --diameter-um 7 --density 1.8)');
  }
  const unitOf = <U extends string>(table: Record<U, unknown>, unit: string, what: string): U => {
    if (!(unit in table)) throw new InputError(`unknown ${what} unit "${unit}"`, `Use one of ${Object.keys(table).join(', ')}`);
    return unit as U;
  };
  const tex = o.linearDensity ? TEX_FROM[unitOf(TEX_FROM, o.linearDensity.unit, 'linear density')](o.linearDensity.value) : undefined;
  const tenacity = o.tenacity ? N_PER_TEX_FROM[unitOf(N_PER_TEX_FROM, o.tenacity.unit, 'tenacity')](o.tenacity.value) : undefined;
  const u = o.uncertainties ?? {};
  if (u.linearDensity !== undefined && !o.linearDensity) throw new InputError('an uncertainty of the linear density was given without the linear density');
  if (u.tenacity !== undefined && !o.tenacity) throw new InputError('an uncertainty of the tenacity was given without the tenacity');
  // The unit conversions are exact scale factors, so they apply to the uncertainties as to the values.
  const r = fibreNumbers({
    diameterUm: o.diameterUm, densityGPerCm3: o.densityGPerCm3, linearDensityTex: tex, tenacityNPerTex: tenacity,
    strengthGPa: o.strengthGPa, retardanceNm: o.retardanceNm, thicknessUm: o.thicknessUm, intrinsicBirefringence: o.intrinsicBirefringence,
    uncertainties: {
      diameterUm: u.diameterUm, diameterDof: u.diameterDof, densityGPerCm3: u.densityGPerCm3,
      linearDensityTex: u.linearDensity === undefined || !o.linearDensity ? undefined : TEX_FROM[o.linearDensity.unit](u.linearDensity),
      tenacityNPerTex: u.tenacity === undefined || !o.tenacity ? undefined : N_PER_TEX_FROM[o.tenacity.unit](u.tenacity),
      strengthGPa: u.strengthGPa, retardanceNm: u.retardanceNm, thicknessUm: u.thicknessUm,
      intrinsicBirefringence: u.intrinsicBirefringence,
    },
  });
  return { schemaVersion: SCHEMA_VERSION, analysis: 'fibre', ...r };
}
