/**
 * `ropewatch calc ...`: ad-hoc questions answered by the same kernels the pipeline uses; one file
 * per question under calc/, listed in calc/index.ts.
 */
import type { Command } from 'commander';
import type { CliIo } from '../io.js';
import { CALC_COMMANDS } from './calc/index.js';

export function registerCalc(program: Command, io: CliIo): void {
  const calc = program
    .command('calc')
    .description('answer ad-hoc survey questions (detection, sample size, site, freedom, spatial)');
  for (const register of CALC_COMMANDS) register(calc, io);
}
