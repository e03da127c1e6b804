import { fibreNumbersResult, type LinearDensityUnit, type TenacityUnit } from '../../analyses/index.ts';
import { InputError } from '../../common/errors.ts';
import { numberOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatPairs } from '../format.ts';

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

export const fibreCommand: Command = {
  name: 'fibre',
  summary: 'fibre numbers: linear density, packing fraction, specific stress, birefringence, orientation factor',
  usage: '--diameter-um D --density G [--linear-density-tex T] [--tenacity-n-per-tex S] [--retardance-nm R] [--json]',
  options: [
    { name: 'diameter-um', kind: 'number', help: 'fibre diameter, um' },
    { name: 'density', kind: 'number', help: 'density of the solid material, g/cm3' },
    { name: 'linear-density-tex', kind: 'number', help: 'measured linear density, tex (for the packing fraction)' },
    { name: 'linear-density-dtex', kind: 'number', help: 'measured linear density, dtex' },
    { name: 'linear-density-den', kind: 'number', help: 'measured linear density, denier' },
    { name: 'tenacity-n-per-tex', kind: 'number', help: 'specific stress (tenacity), N/tex' },
    { name: 'tenacity-cn-per-dtex', kind: 'number', help: 'specific stress, cN/dtex' },
    { name: 'tenacity-gf-per-den', kind: 'number', help: 'specific stress, gf/den' },
    { name: 'strength-gpa', kind: 'number', help: 'stress, GPa (gives the tenacity at this density)' },
    { name: 'retardance-nm', kind: 'number', help: 'retardance through the fibre, nm (for the birefringence)' },
    { name: 'thickness-um', kind: 'number', help: 'optical path for the birefringence, um', defaultText: 'the diameter' },
    { name: 'intrinsic-birefringence', kind: 'number', help: 'birefringence of perfectly aligned material (orientation factor)' },
  ],
  async run(a) {
    if (a.positionals.length > 0) {
      throw new InputError(`retarda fibre takes no files, got "${a.positionals[0]}"`, 'Give the numbers as options');
    }
    const diameterUm = numberOpt(a, 'diameter-um');
    const density = numberOpt(a, 'density');
    if (diameterUm === undefined || density === undefined) {
      throw new InputError('--diameter-um and --density are both needed', 'e.g. retarda fibre --diameter-um 7 --density 1.8');
    }
    const r = fibreNumbersResult({
      diameterUm, densityGPerCm3: density,
      linearDensity: oneOf<LinearDensityUnit>(a, 'linear density', [['linear-density-tex', 'tex'], ['linear-density-dtex', 'dtex'], ['linear-density-den', 'den']]),
      tenacity: oneOf<TenacityUnit>(a, 'tenacity', [['tenacity-n-per-tex', 'N/tex'], ['tenacity-cn-per-dtex', 'cN/dtex'], ['tenacity-gf-per-den', 'gf/den']]),
      strengthGPa: numberOpt(a, 'strength-gpa'), retardanceNm: numberOpt(a, 'retardance-nm'),
      thicknessUm: numberOpt(a, 'thickness-um'), intrinsicBirefringence: numberOpt(a, 'intrinsic-birefringence'),
    });
    // The CSV row holds the numbers only, as before the document gained its head.
    const { schemaVersion: _version, analysis: _analysis, ...numbers } = r;
    void _version; void _analysis;
    const pairs: [string, number | null][] = [
      ['diameter um', r.diameterUm], ['density g/cm3', r.densityGPerCm3], ['area um2', r.areaUm2],
      ['solid tex', r.solidTex], ['solid dtex', r.solidDtex], ['solid denier', r.solidDenier],
      ['measured tex', r.linearDensityTex], ['packing fraction', r.packingFraction],
      ['tenacity N/tex', r.tenacityNPerTex], ['tenacity cN/dtex', r.tenacityCnPerDtex],
      ['tenacity gf/den', r.tenacityGfPerDen], ['strength GPa', r.strengthGPa], ['birefringence', r.birefringence],
      ['orientation factor', r.orientationFactor],
    ];
    return {
      json: r,
      table: formatPairs(pairs.filter(([, v]) => v !== null)),
      csvRows: [{ ...numbers, warnings: r.warnings.join('; ') }],
      warnings: r.warnings,
    };
  },
};
