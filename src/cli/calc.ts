import type { Command } from 'commander';
import type { CliIo } from './io.js';
import { addDetectionCalcCommands } from './calcStats.js';

/**
 * `ropewatch calc ...`: ad-hoc questions answered by the same kernels the pipeline uses. The
 * spatial calculator (calcSpatial.ts, with its schema library) is imported when it runs.
 */
export function registerCalc(program: Command, io: CliIo): void {
  const calc = program
    .command('calc')
    .description('answer ad-hoc survey questions (detection, sample size, site, freedom, spatial)');
  addDetectionCalcCommands(calc, io);
  calc
    .command('spatial')
    .description("spatial clustering of positive pens: join counts, Moran's I, Gi*, Bernoulli scan")
    .requiredOption(
      '--input <file>',
      'case JSON: { pens: [{ id, x, y, positive, load }], neighbours | k | band, style, permutations, seed }',
    )
    .option('--json', 'print the result as JSON')
    .action(async (opts: { input: string; json?: boolean }) =>
      (await import('./calcSpatial.js')).runSpatialCalc(io, opts),
    );
}
