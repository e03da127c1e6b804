import { SCHEMA_VERSION } from '../../analyses/index.ts';
import { InputError } from '../../common/errors.ts';
import { cnPerDtexToNPerTex, denierToTex, dtexToTex, fibreNumbers, gfPerDenToNPerTex } from '../../fibre/index.ts';
import { numberOpt, type ParsedArgs } from '../args.ts';
import type { Command } from '../command.ts';
import { formatPairs } from '../format.ts';

/** At most one of several spellings of the same quantity, converted to the first one's unit. */
function oneOf(a: ParsedArgs, what: string, choices: [string, (v: number) => number][]): number | undefined {
  const given = choices.filter(([name]) => numberOpt(a, name) !== undefined);
  if (given.length > 1) {
    throw new InputError(`give the ${what} once: ${given.map(([n]) => `--${n}`).join(' and ')} were both given`);
  }
  if (given.length === 0) return undefined;
  const [name, convert] = given[0];
  return convert(numberOpt(a, name) as number);
}

const same = (v: number) => v;

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
    const tex = oneOf(a, 'linear density', [['linear-density-tex', same], ['linear-density-dtex', dtexToTex],
      ['linear-density-den', denierToTex]]);
    const tenacity = oneOf(a, 'tenacity', [['tenacity-n-per-tex', same], ['tenacity-cn-per-dtex', cnPerDtexToNPerTex],
      ['tenacity-gf-per-den', gfPerDenToNPerTex]]);
    const r = fibreNumbers({
      diameterUm, densityGPerCm3: density, linearDensityTex: tex, tenacityNPerTex: tenacity,
      strengthGPa: numberOpt(a, 'strength-gpa'), retardanceNm: numberOpt(a, 'retardance-nm'),
      thicknessUm: numberOpt(a, 'thickness-um'), intrinsicBirefringence: numberOpt(a, 'intrinsic-birefringence'),
    });
    const pairs: [string, number | null][] = [
      ['diameter um', r.diameterUm], ['density g/cm3', r.densityGPerCm3], ['area um2', r.areaUm2],
      ['solid tex', r.solidTex], ['solid dtex', r.solidDtex], ['solid denier', r.solidDenier],
      ['measured tex', r.linearDensityTex], ['packing fraction', r.packingFraction],
      ['tenacity N/tex', r.tenacityNPerTex], ['tenacity cN/dtex', r.tenacityCnPerDtex],
      ['tenacity gf/den', r.tenacityGfPerDen], ['strength GPa', r.strengthGPa], ['birefringence', r.birefringence],
      ['orientation factor', r.orientationFactor],
    ];
    return {
      json: { schemaVersion: SCHEMA_VERSION, analysis: 'fibre', ...r },
      table: formatPairs(pairs.filter(([, v]) => v !== null)),
      csvRows: [{ ...r, warnings: r.warnings.join('; ') }],
      warnings: r.warnings,
    };
  },
};
