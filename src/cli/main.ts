import { isInputError } from '../common/index.ts';
import { COMMON_OPTIONS, parseArgs, flagOpt, renamedNotice, stringOpt } from './args.ts';
import { defaultText, rangeText } from '../options/index.ts';
import type { Command } from './command.ts';
import { COMMANDS } from './commands/index.ts';
import { toCsv } from '../report/index.ts';
import { writeBytes } from './io.ts';

/** Where the CLI prints: process.stdout / stderr, or a capture in tests. */
export interface Sink { write(s: string): unknown }

/** Runs one subcommand. Exit status: 0 success, 2 bad input or options, 1 internal fault (README.md, "Command line"). */
export async function main(argv: string[], out: Sink = process.stdout, err: Sink = process.stderr): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === 'help' || name === '-h') {
    out.write(topHelp());
    return name ? 0 : 2;
  }
  if (name === '--version') {
    out.write('retarda 0.1.0\n');
    return 0;
  }
  const cmd = COMMANDS.find((c) => c.name === name) ?? COMMANDS.find((c) => c.formerName === name);
  if (!cmd) {
    err.write(`retarda: unknown subcommand "${name}". Run "retarda --help" for the list.\n`);
    return 2;
  }
  if (cmd.name !== name) err.write(`retarda ${cmd.name}: note: ${renamedNotice(`retarda ${name}`, `retarda ${cmd.name}`)}\n`);
  try {
    const args = parseArgs(rest, [...cmd.options, ...COMMON_OPTIONS]);
    if (flagOpt(args, 'help')) {
      out.write(commandHelp(cmd));
      return 0;
    }
    for (const n of args.notices) err.write(`retarda ${cmd.name}: note: ${n}\n`);
    const before = args.notices.length;
    const result = await cmd.run(args);
    // Former option values are met while the command reads its options.
    for (const n of args.notices.slice(before)) err.write(`retarda ${cmd.name}: note: ${n}\n`);
    const csvPath = stringOpt(args, 'csv');
    if (csvPath) await writeBytes(csvPath, new TextEncoder().encode(toCsv(result.csvRows ?? [])));
    if (flagOpt(args, 'json')) out.write(JSON.stringify(result.json, null, 2) + '\n');
    else {
      out.write(result.table + '\n');
      for (const w of result.warnings ?? []) err.write(`warning: ${w}\n`);
    }
    return 0;
  } catch (e) {
    if (isInputError(e)) {
      err.write(`retarda ${cmd.name}: ${oneLine((e as Error).message)}\n`);
      return 2;
    }
    if (outOfMemory(e)) {
      err.write(`retarda ${cmd.name}: there is not enough memory for these images. ` +
        'Crop or bin the images, give fewer at a time, or close other programs\n');
      return 2;
    }
    err.write(`retarda ${cmd.name}: ${FAULT_LINE}\n`);
    if (process.env.RETARDA_DEBUG && e instanceof Error) err.write(`${e.stack}\n`);
    return 1;
  }
}

const oneLine = (s: string) => s.replace(/\s*\n\s*/g, ' ');

/**
 * The one line printed for a fault (exit 1): a bug in the program, never the error's own text (which
 * is programmer's language); what to report and where. RETARDA_DEBUG=1 adds the details to attach.
 */
export const FAULT_LINE = 'internal fault: this is a bug in retarda, not a problem with your files or options. ' +
  'Please report it on the Retarda issue list, attaching the command line, the input files and what the same ' +
  'command prints with RETARDA_DEBUG=1 set';

/** A typed-array allocation the JavaScript engine could not satisfy (too little memory left). */
function outOfMemory(e: unknown): boolean {
  return e instanceof RangeError && /allocation failed|out of memory/i.test(e.message);
}

function topHelp(): string {
  const w = Math.max(...COMMANDS.map((c) => c.name.length));
  return [
    'retarda: alignment numbers from polarised-light microscope images',
    '',
    'usage: retarda SUBCOMMAND [options]   (retarda SUBCOMMAND --help for its options)',
    '',
    ...COMMANDS.map((c) => `  ${c.name.padEnd(w)}  ${c.summary}`),
    '',
    'Every subcommand prints a table, or one JSON document with --json. Exit status 0 ok, 2 bad input, 1 fault.',
    '',
  ].join('\n');
}

function commandHelp(cmd: Command): string {
  const opts = [...cmd.options, ...COMMON_OPTIONS];
  const w = Math.max(...opts.map((o) => o.name.length + (o.kind === 'flag' ? 0 : 4)));
  return [
    `usage: retarda ${cmd.name} ${cmd.usage}`,
    '',
    cmd.summary,
    '',
    ...opts.map((o) => {
      const head = o.kind === 'flag' ? `--${o.name}` : `--${o.name} ${o.kind === 'number' ? 'N' : 'S'}`;
      const facts = [defaultText(o) !== undefined ? `default ${defaultText(o)}` : '', rangeText(o) ?? ''].filter(Boolean);
      return `  ${head.padEnd(w + 2)}  ${o.help}${facts.length ? ` (${facts.join('; ')})` : ''}`;
    }),
    '',
  ].join('\n');
}
