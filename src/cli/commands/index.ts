import type { Command } from '../command.ts';

/** Every subcommand, in the order `retarda --help` lists them. */
export const COMMANDS: Command[] = [];
