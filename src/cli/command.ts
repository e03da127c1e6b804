import type { OptionSpec, ParsedArgs } from './args.ts';

/** What a subcommand hands back: main prints `table` or `json`, and writes `csvRows` with --csv. */
export interface CommandOutput {
  json: unknown;
  table: string;
  csvRows?: Record<string, string | number | boolean | null>[];
  /** Plain-word warnings, printed to stderr in table mode (they are inside `json` too). */
  warnings?: string[];
}

export interface Command {
  name: string;
  summary: string;
  /** Usage line after `retarda NAME`, e.g. "IMAGE... [--sigma PX]". */
  usage: string;
  options: OptionSpec[];
  run(args: ParsedArgs): Promise<CommandOutput>;
}
