import type { Command } from '../command.ts';
import { orientCommand } from './orient.ts';
import { profileCommand } from './profile.ts';

/** Every subcommand, in the order `retarda --help` lists them. */
export const COMMANDS: Command[] = [orientCommand, profileCommand];
