import type { Command } from '../command.ts';
import { orientCommand } from './orient.ts';
import { profileCommand } from './profile.ts';
import { plateCommand } from './plate.ts';
import { platePairCommand } from './platePair.ts';
import { angleSeriesCommand } from './angleSeries.ts';
import { chartCommand } from './chart.ts';
import { diameterCommand } from './diameter.ts';
import { calibrateCommand } from './calibrate.ts';
import { fibreCommand } from './fibre.ts';
import { seriesCommand } from './series.ts';
import { trendCommand } from './trend.ts';

/** Every subcommand, in the order `retarda --help` lists them. */
export const COMMANDS: Command[] = [orientCommand, profileCommand, plateCommand, platePairCommand, angleSeriesCommand, chartCommand, diameterCommand, calibrateCommand, fibreCommand, seriesCommand, trendCommand];
