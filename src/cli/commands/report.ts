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
import { parseIntegerOption } from '../parseArgs.js';

type ReportOptions = CommonOptions & { site?: string; round?: string; jobs?: string };
type Builds = Awaited<ReturnType<typeof CommandModules.regenerateOutputsInParallel>>;
type Modules = Pick<typeof CommandModules, 'siteOption'>;

/** The most sites `--jobs` builds at once (each worker holds a site's analysis and a store connection). */
const MAX_JOBS = 64;

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
function printWritten(io: CliIo, ws: Workspace, builds: Builds): void {
  // A site's folder is staged and swapped in whole, stale round folders removed: what it
  // holds now is what this run wrote.
  printJson(io, {
    outbox: ws.outbox,
    index: fs.existsSync(path.join(ws.outbox, OUTBOX_NAMES.indexPage)) ? OUTBOX_NAMES.indexPage : null,
    sites: builds.map((build) => ({
      site: build.site.id,
      name: build.site.name,
      rounds: build.rounds,
      files: fs.existsSync(path.join(ws.outbox, build.site.id))
        ? filesUnder(path.join(ws.outbox, build.site.id), ws.outbox)
        : [],
    })),
  });
}

/**
 * On a terminal, one line rewritten in place before each site (site n of N, elapsed) and cleared
 * at the end; nothing when standard error is a file or a pipe.
 */
function progressOn(io: CliIo): { onSite?: (site: { id: string }, place: number, of: number) => void } {
  if (!io.stderrIsTerminal) return {};
  const started = io.now().getTime();
  return {
    onSite: (site, place, of) => {
      const elapsed = Math.round((io.now().getTime() - started) / 1000);
      io.stderr(`\rsite ${place} of ${of} (${site.id}), ${elapsed} s elapsed\x1b[K`);
      if (place === of) io.stderr('\n');
    },
  };
}

export function registerReport(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('report')
      .description('rebuild every output (summaries, cluster reviews, rope lists, pages) from the store')
      .option('--site <site>', 'only this site')
      .option('--round <round>', 'only this round number (with --site); the site folder is still rewritten whole')
      .option(
        '--jobs <n>',
        'sites built at once, each on a worker thread (default: one per available core; 1 builds one site at a time in this process)',
      )
      .option('--json', 'print what was written as JSON: per site its rounds and files'),
  ).action(async (options: ReportOptions) => {
    const jobs = options.jobs === undefined ? undefined : parseIntegerOption('--jobs', options.jobs, 1, MAX_JOBS);
    const modules = await commandModules();
    const { deliverOwedAlerts, OutputError, regenerateOutputsInParallel, removeStrayTemps, withWorkspace } = modules;
    await withWorkspace(io, options, async (ws) => {
      const siteIds = chosenSites(ws, options, modules);
      removeStrayTemps(ws.outbox);
      let builds: Builds;
      try {
        builds = await regenerateOutputsInParallel(ws, siteIds, {
          full: true,
          ...(jobs === undefined ? {} : { jobs }),
          ...progressOn(io),
        });
      } catch (error) {
        if (error instanceof OutputError) throw new InputRejectedError(error.message);
        throw error;
      }
      await deliverOwedAlerts(ws, io);
      if (options.round !== undefined) {
        const number = Number(options.round);
        const exists = builds[0]?.rounds.some((round) => round.number === number);
        if (!exists) throw new UsageError(`site ${options.site} has no round ${options.round}`);
      }
      if (options.json) printWritten(io, ws, builds);
      else for (const build of builds) io.stdout(`wrote ${build.site.id}: ${build.rounds.length} round(s)\n`);
    });
  });
}
