import { fibreNumbersResult, type FibreNumbersRequest, type LinearDensityUnit, type TenacityUnit } from '../../analyses/index.ts';
import { FIBRE_OPTIONS, TENACITY_OPTION } from '../../options/index.ts';
import { InputError } from '../../common/errors.ts';
import { numberOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatCell, formatPairs } from '../format.ts';
import type { FibreNumberKey } from '../../fibre/index.ts';

/** At most one of several spellings of the same quantity, with the unit it was given in. */
function oneOf<U extends string>(a: ParsedArgs, what: string, choices: [string, U][]): { value: number; unit: U } | undefined {
  const given = choices.filter(([name]) => numberOpt(a, name) !== undefined);
  if (given.length > 1) {
    throw new InputError(`give the ${what} once: ${given.map(([n]) => `--${n}`).join(' and ')} were both given`);
  }
  if (given.length === 0) return undefined;
  const [name, unit] = given[0];
  return { value: numberOpt(a, name) as number, unit };
}

/** `retarda fibre`'s options (FIBRE_OPTIONS) as fibreNumbersResult takes them. */
export function fibreRequestFrom(a: ParsedArgs): FibreNumbersRequest {
  const diameterUm = numberOpt(a, 'diameter-um');
  const density = numberOpt(a, 'density');
  if (diameterUm === undefined || density === undefined) {
    throw new InputError('--diameter-um and --density are both needed', 'e.g. retarda fibre --diameter-um 7 --density 1.8');
  }
  const uncertainties = {
    diameterUm: numberOpt(a, 'diameter-uncertainty-um'), diameterDof: numberOpt(a, 'diameter-dof'),
    densityGPerCm3: numberOpt(a, 'density-uncertainty'), linearDensity: numberOpt(a, 'linear-density-uncertainty'),
    tenacity: numberOpt(a, 'tenacity-uncertainty'), strengthGPa: numberOpt(a, 'strength-uncertainty-gpa'),
    retardanceNm: numberOpt(a, 'retardance-uncertainty-nm'), thicknessUm: numberOpt(a, 'thickness-uncertainty-um'),
    intrinsicBirefringence: numberOpt(a, 'intrinsic-birefringence-uncertainty'),
  };
  return {
    diameterUm, densityGPerCm3: density,
    linearDensity: oneOf<LinearDensityUnit>(a, 'linear density', [['linear-density-tex', 'tex'], ['linear-density-dtex', 'dtex'], ['linear-density-den', 'den']]),
    tenacity: oneOf<TenacityUnit>(a, 'tenacity', (Object.entries(TENACITY_OPTION) as [TenacityUnit, string][]).map(([unit, name]) => [name, unit])),
    strengthGPa: numberOpt(a, 'strength-gpa'), retardanceNm: numberOpt(a, 'retardance-nm'),
    thicknessUm: numberOpt(a, 'thickness-um'), intrinsicBirefringence: numberOpt(a, 'intrinsic-birefringence'),
    ...(Object.values(uncertainties).some((v) => v !== undefined) ? { uncertainties } : {}),
  };
}

export const fibreCommand: Command = {
  name: 'fibre',
  summary: 'fibre numbers: linear density, packing fraction, tenacity and tensile strength, birefringence, orientation factor',
  usage: '--diameter-um D [--diameter-uncertainty-um U] --density G [--linear-density-tex T] [--tenacity-n-per-tex S] [--retardance-nm R] [--json]',
  options: FIBRE_OPTIONS,
  async run(a) {
    if (a.positionals.length > 0) {
      throw new InputError(`retarda fibre takes no files, got "${a.positionals[0]}"`, 'Give the numbers as options');
    }
    const r = fibreNumbersResult(fibreRequestFrom(a));
    // The CSV row holds the numbers only, as before the document gained its head; each interval as two columns.
    const { schemaVersion: _version, analysis: _analysis, intervals, ...numbers } = r;
    void _version; void _analysis;
    const intervalColumns: Record<string, number> = {};
    for (const [key, iv] of Object.entries(intervals)) {
      intervalColumns[`${key}CiLow`] = iv.ciLow;
      intervalColumns[`${key}CiHigh`] = iv.ciHigh;
    }
    const rows: [string, FibreNumberKey | null, number | null][] = [
      ['diameter um', null, r.diameterUm], ['density g/cm3', null, r.densityGPerCm3], ['area um2', 'areaUm2', r.areaUm2],
      ['solid tex', 'solidTex', r.solidTex], ['solid dtex', 'solidDtex', r.solidDtex], ['solid denier', 'solidDenier', r.solidDenier],
      ['measured tex', null, r.linearDensityTex], ['packing fraction', 'packingFraction', r.packingFraction],
      ['tenacity N/tex', 'tenacityNPerTex', r.tenacityNPerTex], ['tenacity cN/dtex', 'tenacityCnPerDtex', r.tenacityCnPerDtex],
      ['tenacity gf/den', 'tenacityGfPerDen', r.tenacityGfPerDen], ['tensile strength GPa', 'strengthGPa', r.strengthGPa],
      ['birefringence', 'birefringence', r.birefringence], ['orientation factor', 'orientationFactor', r.orientationFactor],
    ];
    const withInterval = (key: FibreNumberKey | null, v: number) => {
      const iv = key ? intervals[key] : undefined;
      return iv ? `${formatCell(v)}  (95 % interval ${formatCell(iv.ciLow)} - ${formatCell(iv.ciHigh)})` : v;
    };
    return {
      json: r,
      table: formatPairs(rows.filter(([, , v]) => v !== null).map(([label, key, v]) => [label, withInterval(key, v as number)])),
      csvRows: [{ ...numbers, ...intervalColumns, warnings: r.warnings.join('; ') }],
      warnings: r.warnings,
    };
  },
};
