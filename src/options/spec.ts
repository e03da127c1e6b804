/**
 * What one option of a `retarda` command is, and the words that write an analysis's options back as a command line.
 * The specs are read by the command line (parsing and --help) and by the app (its forms' ranges, its placeholders
 * and the command lines it shows); the defaults and ranges in them come from the analyses that check them.
 */
import type { Limit } from '../common/index.ts';

/** One option of a command. Names are written without the leading dashes. */
export interface OptionSpec {
  name: string;
  kind: 'number' | 'string' | 'flag';
  help: string;
  /** Numbers: the default and the allowed range, from the analysis that checks them (help shows both). */
  limit?: Limit;
  /** The default in words, where it is not one number or not a number (help shows it). */
  defaultText?: string;
  /** The option's name before it was renamed: still read for one release, with a notice on stderr. */
  formerName?: string;
}

/** The default as --help and the app's placeholders show it, or undefined when there is none. */
export function defaultText(o: OptionSpec): string | undefined {
  return o.defaultText ?? (o.limit?.default !== undefined ? String(o.limit.default) : undefined);
}

/** The allowed range as --help shows it ("0.3 to 200 px"), or undefined. */
export function rangeText(o: OptionSpec): string | undefined {
  const l = o.limit;
  return l ? `${l.min} to ${l.max}${l.unit ? ` ${l.unit}` : ''}${l.integer ? ', whole numbers' : ''}` : undefined;
}

/** The spec of `name` in `specs` (a programming error when it is not there). */
export function specOf(specs: readonly OptionSpec[], name: string): OptionSpec {
  const s = specs.find((o) => o.name === name);
  if (!s) throw new Error(`no option --${name}`);
  return s;
}

/**
 * The words of one option with a value: none when the value is undefined or null, or when it equals `omit` (the
 * value the analysis takes without the option, so leaving it out gives the same numbers).
 */
export function valueArg(name: string, value: number | string | null | undefined, omit?: number | string): string[] {
  if (value === undefined || value === null || value === omit) return [];
  return [`--${name}`, String(value)];
}

/** The words of a number option whose default is its limit's default. */
export const limitArg = (name: string, limit: Limit, value: number | undefined): string[] => valueArg(name, value, limit.default);

/** The word of a flag that is on. */
export const flagArg = (name: string, on: boolean | undefined): string[] => (on ? [`--${name}`] : []);

/** A list of numbers as `--angles` takes them: "0,22.5,45". */
export const numberListText = (v: readonly number[]): string => v.map(String).join(',');

/**
 * One word as a POSIX shell reads it back unchanged: as it is when it holds only characters the shell leaves
 * alone, otherwise in double quotes with ", \, $ and ` escaped (POSIX.1-2017, Shell Command Language, 2.2.3).
 */
export function shellWord(word: string): string {
  return /^[\w.,\-/=:+@%]+$/.test(word) ? word : `"${word.replace(/(["\\$`])/g, '\\$1')}"`;
}

/** The command line as shown: `retarda COMMAND WORD...`, each word quoted as a shell needs it. */
export function commandLine(command: string, words: readonly string[]): string {
  return ['retarda', command, ...words].map(shellWord).join(' ');
}
