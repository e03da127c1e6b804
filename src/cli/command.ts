import type { OptionSpec, ParsedArgs } from './args.ts';
import type { CsvValue } from '../report/index.ts';

/** What a subcommand hands back: main prints `table` or `json`, and writes `csvRows` with --csv. */
export interface CommandOutput {
  json: unknown;
  table: string;
  csvRows?: Record<string, CsvValue>[];
  /** Plain-word warnings, printed to stderr in table mode (they are inside `json` too). */
  warnings?: string[];
}

export interface Command {
  name: string;
  /** The subcommand's name before it was renamed: still run for one release, with a notice on stderr. */
  formerName?: string;
  summary: string;
  /** Usage line after `retarda NAME`, e.g. "IMAGE... [--sigma PX]". */
  usage: string;
  options: OptionSpec[];
  run(args: ParsedArgs): Promise<CommandOutput>;
}
