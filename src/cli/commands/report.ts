/** `ropewatch report`: regenerate the outputs from the store. */
import fs from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import type { Workspace } from '../../workspace.js';
import { OUTBOX_NAMES } from '../../workspacePaths.js';
import { commandModules } from '../command.js';
import type * as CommandModules from '../commandModules.js';
import { addCommonOptions, type CommonOptions } from '../commonOptions.js';
import { InputRejectedError, printJson, UsageError, type CliIo } from '../io.js';

type ReportOptions = CommonOptions & { site?: string; round?: string };
type Analyses = ReturnType<typeof CommandModules.regenerateOutputs>;
type Modules = Pick<typeof CommandModules, 'siteOption'>;

/** Every file under `dir`, relative to `base` with `/` between folders, sorted. */
function filesUnder(dir: string, base: string): string[] {
  const entries = fs.readdirSync(dir, { withFileTypes: true, recursive: true });
  return entries
    .filter((entry) => entry.isFile())
    .map((entry) => path.relative(base, path.join(entry.parentPath, entry.name)).split(path.sep).join('/'))
    .sort();
}

/** The site ids --site names (every site without it). */
function chosenSites(ws: Workspace, options: ReportOptions, { siteOption }: Modules): string[] | undefined {
  if (options.round !== undefined && options.site === undefined) throw new UsageError('--round needs --site');
  if (options.site === undefined) return undefined;
  return [siteOption(ws, options.site).id];
}

/** What was written, as --json prints it: per site its rounds and files. */
function printWritten(io: CliIo, ws: Workspace, analyses: Analyses): void {
  // A site's folder is staged and swapped in whole, stale round folders removed: what it
  // holds now is what this run wrote.
  printJson(io, {
    outbox: ws.outbox,
    index: fs.existsSync(path.join(ws.outbox, OUTBOX_NAMES.indexPage)) ? OUTBOX_NAMES.indexPage : null,
    sites: analyses.map((analysis) => ({
      site: analysis.site.id,
      name: analysis.site.name,
      rounds: analysis.rounds.map((round) => ({ number: round.number, id: round.id, startOn: round.startOn })),
      files: fs.existsSync(path.join(ws.outbox, analysis.site.id))
        ? filesUnder(path.join(ws.outbox, analysis.site.id), ws.outbox)
        : [],
    })),
  });
}

export function registerReport(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('report')
      .description('regenerate outputs (summaries, cluster reviews, rope lists, pages) from the store')
      .option('--site <site>', 'only this site')
      .option('--round <round>', 'only this round number (with --site); the site folder is still rewritten whole')
      .option('--json', 'print what was written as JSON: per site its rounds and files'),
  ).action(async (options: ReportOptions) => {
    const modules = await commandModules();
    const { deliverOwedAlerts, OutputError, regenerateOutputs, removeStrayTemps, withWorkspace } = modules;
    await withWorkspace(io, options, async (ws) => {
      const siteIds = chosenSites(ws, options, modules);
      removeStrayTemps(ws.outbox);
      let analyses: Analyses;
      try {
        analyses = regenerateOutputs(ws, siteIds);
      } catch (error) {
        if (error instanceof OutputError) throw new InputRejectedError(error.message);
        throw error;
      }
      await deliverOwedAlerts(ws, io);
      if (options.round !== undefined) {
        const number = Number(options.round);
        const exists = analyses[0]?.rounds.some((round) => round.number === number);
        if (!exists) throw new UsageError(`site ${options.site} has no round ${options.round}`);
      }
      if (options.json) printWritten(io, ws, analyses);
      else
        for (const analysis of analyses) io.stdout(`wrote ${analysis.site.id}: ${analysis.rounds.length} round(s)\n`);
    });
  });
}
