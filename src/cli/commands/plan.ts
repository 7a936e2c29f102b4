/** `ropewatch plan --site <site>`: make or remake a site's next-round rope list. */
import type { Command } from 'commander';
import { commandModules } from '../command.js';
import { addCommonOptions, type CommonOptions } from '../commonOptions.js';
import { printJson, type CliIo } from '../io.js';
import { parseIntegerOption } from '../parseArgs.js';
import { DEFAULT_PLACES } from '../../workspacePaths.js';

export function registerPlan(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('plan')
      .description(
        `make or remake a site's next-round rope list (${DEFAULT_PLACES.outbox}<site>/next-round.csv and .json); its sample IDs become the expected rope sheet`,
      )
      .requiredOption('--site <site>', 'site id, code or name')
      .option('--budget <ropes>', "ropes the producer will hang this round (overrides the site's ropeBudget)")
      .option('--json', 'print the plan as JSON'),
  ).action(async (options: CommonOptions & { site: string; budget?: string }) => {
    const budget =
      options.budget === undefined ? undefined : parseIntegerOption('--budget', options.budget, 0, 100_000);
    const { planText, regenerateSite, siteOption, withWorkspace } = await commandModules();
    withWorkspace(io, options, (ws) => {
      const site = siteOption(ws, options.site);
      const analysis = regenerateSite(ws, site, budget === undefined ? {} : { budget });
      if (options.json) printJson(io, analysis.plan);
      else io.stdout(planText(analysis.plan));
    });
  });
}
