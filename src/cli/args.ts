import { InputError } from '../common/index.ts';
import type { OptionSpec } from '../options/index.ts';

export type { OptionSpec };

export interface ParsedArgs {
  positionals: string[];
  options: Map<string, string | boolean>;
  /** One line each: former option names or values read (printed on stderr; the output is unchanged). */
  notices: string[];
}

/** The notice for a former name read in place of its new one. */
export const renamedNotice = (former: string, now: string) => `${former} is now ${now}; the old name is read until the next release`;

/** Options every subcommand takes. */
export const COMMON_OPTIONS: OptionSpec[] = [
  { name: 'json', kind: 'flag', help: 'print one JSON document instead of a table' },
  { name: 'csv', kind: 'string', help: 'also write the results as CSV to this file (one row per image for image commands)' },
  { name: 'help', kind: 'flag', help: 'show this help' },
];

/**
 * Parses `--name value`, `--name=value` and `--flag`. Anything unknown is an InputError naming it,
 * so a typo never silently falls back to a default.
 */
export function parseArgs(argv: string[], specs: OptionSpec[]): ParsedArgs {
  const byName = new Map(specs.map((s) => [s.name, s]));
  const formerly = new Map(specs.filter((s) => s.formerName).map((s) => [s.formerName!, s]));
  const positionals: string[] = [];
  const options = new Map<string, string | boolean>();
  const notices: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (!arg.startsWith('--') || arg === '--') {
      positionals.push(arg);
      continue;
    }
    const eq = arg.indexOf('=');
    const given = eq > 0 ? arg.slice(2, eq) : arg.slice(2);
    const spec = byName.get(given) ?? formerly.get(given);
    const name = spec?.name ?? given;
    if (spec && spec.name !== given) {
      if (options.has(name)) throw new InputError(`--${name} was given twice (once as --${given})`);
      const note = renamedNotice(`--${given}`, `--${name}`);
      if (!notices.includes(note)) notices.push(note);
    }
    if (!spec) {
      throw new InputError(`unknown option --${name}`, 'Run the subcommand with --help to see its options');
    }
    if (spec.kind === 'flag') {
      if (eq > 0) throw new InputError(`option --${name} takes no value`);
      options.set(name, true);
      continue;
    }
    let value: string | undefined;
    if (eq > 0) value = arg.slice(eq + 1);
    else {
      value = argv[i + 1];
      i++;
    }
    if (value === undefined || (value.startsWith('--') && spec.kind !== 'number')) {
      throw new InputError(`option --${name} needs a value`);
    }
    if (spec.kind === 'number' && !Number.isFinite(Number(value))) {
      throw new InputError(`option --${name} needs a number, got "${value}"`);
    }
    options.set(name, value);
  }
  return { positionals, options, notices };
}

export function numberOpt(a: ParsedArgs, name: string): number | undefined {
  const v = a.options.get(name);
  return typeof v === 'string' ? Number(v) : undefined;
}

export function stringOpt(a: ParsedArgs, name: string): string | undefined {
  const v = a.options.get(name);
  return typeof v === 'string' ? v : undefined;
}

export function flagOpt(a: ParsedArgs, name: string): boolean {
  return a.options.get(name) === true;
}

/** Parses a comma-separated list of numbers such as "0,22.5,45,67.5". */
export function numberList(text: string, what: string): number[] {
  const parts = text.split(',').map((s) => s.trim());
  const nums = parts.map(Number);
  if (parts.length === 0 || nums.some((n, i) => parts[i] === '' || !Number.isFinite(n))) {
    throw new InputError(`${what} must be numbers separated by commas, got "${text}"`);
  }
  return nums;
}
