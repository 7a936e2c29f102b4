import type { Command } from 'commander';
import type { CliIo } from './io.js';
import { addDetectionCalcCommands } from './calcStats.js';
import { addSpatialCalcCommand } from './calcSpatial.js';

/** `ropewatch calc ...`: ad-hoc questions answered by the same kernels the pipeline uses. */
export function registerCalc(program: Command, io: CliIo): void {
  const calc = program.command('calc').description('answer ad-hoc survey questions (detection, sample size, site, freedom, spatial)');
  addDetectionCalcCommands(calc, io);
  addSpatialCalcCommand(calc, io);
}
