/**
 * `ropewatch calc spatial`: spatial clustering of a case file. The calculator (calcSpatial.ts,
 * with its schema library) is imported when it runs.
 */
import type { Command } from 'commander';
import type { CliIo } from '../../io.js';

export function registerCalcSpatial(calc: Command, io: CliIo): void {
  calc
    .command('spatial')
    .description("spatial clustering of positive pens: join counts, Moran's I, Gi*, Bernoulli scan")
    .requiredOption(
      '--input <file>',
      'case JSON: { pens: [{ id, x, y, positive, load }], neighbours | k | band, style, permutations, seed }',
    )
    .option('--json', 'print the result as JSON')
    .action(async (opts: { input: string; json?: boolean }) =>
      (await import('../../calcSpatial.js')).runSpatialCalc(io, opts),
    );
}
