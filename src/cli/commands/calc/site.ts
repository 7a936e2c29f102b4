/**
 * `ropewatch calc site`: site-level detection from barn-level detection probabilities,
 * 1 - prod(1 - p), or with infection reaching a given number of barns chosen at random.
 */
import type { Command } from 'commander';
import { siteDetection, twoStageSiteDetection } from '../../../stats/index.js';
import { plural, short } from '../../calcFormat.js';
import { formatPercentSignificant } from '../../../util/format.js';
import { printJson, type CliIo } from '../../io.js';
import { parseIntegerOption, parseProbabilityList } from '../../parseArgs.js';

interface SiteOptions {
  barn?: string;
  infectedBarns?: string;
  json?: boolean;
}

export function registerCalcSite(calc: Command, io: CliIo): void {
  calc
    .command('site')
    .description('site-level detection from barn-level detection probabilities, 1 - prod(1 - p)')
    .option('--barn <list>', 'comma-separated barn detection probabilities (0 for a barn not surveyed)')
    .option(
      '--infected-barns <D>',
      'barns infection is assumed to reach, chosen at random (two-stage design); default every barn',
    )
    .option('--json', 'print JSON')
    .action((options: SiteOptions) => {
      const barns = parseProbabilityList('--barn', options.barn);
      if (options.infectedBarns !== undefined) {
        const infectedBarns = parseIntegerOption('--infected-barns', options.infectedBarns, 1, barns.length);
        const probability = twoStageSiteDetection(barns, infectedBarns);
        if (options.json) {
          printJson(io, { barns, infectedBarns, probability });
          return;
        }
        io.stdout(
          `If ${plural(infectedBarns, 'barn', 'barns')} of ${barns.length} were infected (at random), the site would detect it with probability ${short(probability)} (${formatPercentSignificant(probability)}).\n`,
        );
        return;
      }
      const probability = siteDetection(barns);
      if (options.json) {
        printJson(io, { barns, probability });
        return;
      }
      io.stdout(
        `${plural(barns.length, 'barn', 'barns')} together detect with probability ${short(probability)} (${formatPercentSignificant(probability)}).\n`,
      );
    });
}
