import type { Command } from '../command.ts';
import { orientCommand } from './orient.ts';
import { profileCommand } from './profile.ts';
import { plateCommand } from './plate.ts';
import { plate2Command } from './plate2.ts';
import { quadCommand } from './quad.ts';
import { chartCommand } from './chart.ts';
import { diameterCommand } from './diameter.ts';
import { calibrateCommand } from './calibrate.ts';
import { fibreCommand } from './fibre.ts';

/** Every subcommand, in the order `retarda --help` lists them. */
export const COMMANDS: Command[] = [orientCommand, profileCommand, plateCommand, plate2Command, quadCommand, chartCommand, diameterCommand, calibrateCommand, fibreCommand];
