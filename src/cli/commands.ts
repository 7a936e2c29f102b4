/**
 * The pipeline commands: ingest, watch, status, report, plan, demo. Each opens the workspace at
 * the edge, runs, closes it, and reports through the injected io. The modules a command runs with
 * are imported when it runs (commandModules.ts), so declaring the commands costs next to nothing.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import { terminalText } from '../util/terminalText.js';
import { addCommonOptions, type CommonOptions } from './commonOptions.js';
import { InputRejectedError, InterruptedError, printJson, UsageError, type CliIo } from './io.js';
import { parseIntegerOption } from './parseArgs.js';
import { stampLines } from './stampLines.js';

const commandModules = () => import('./commandModules.js');

/** Every file under `dir`, relative to `base` with `/` between folders, sorted. */
function filesUnder(dir: string, base: string): string[] {
  const entries = fs.readdirSync(dir, { withFileTypes: true, recursive: true });
  return entries
    .filter((entry) => entry.isFile())
    .map((entry) => path.relative(base, path.join(entry.parentPath, entry.name)).split(path.sep).join('/'))
    .sort();
}

/** Sample IDs printed by `status` before "and N more" (--json lists them all). */
const STATUS_LIST_LIMIT = 20;

function listSome(ids: readonly string[], limit: number): string {
  if (ids.length === 0) return 'none';
  const shown = ids.slice(0, limit).join(', ');
  return ids.length > limit ? `${ids.length}: ${shown} and ${ids.length - limit} more (--json lists them all)` : shown;
}

export function registerPipelineCommands(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('ingest')
      .description(
        'process lab exports and rope sheets once, then exit (processed files move to inbox/archive/, refused ones to inbox/rejected/)',
      )
      .argument('<files...>', 'files to ingest (usually in the inbox)')
      .option('--json', 'print the receipts as JSON'),
  ).action(async (files: string[], options: CommonOptions) => {
    const { checkInbox, ingestFiles, signalExitCode, withWorkspace } = await commandModules();
    const resolved = files.map((file) => path.resolve(io.cwd, file));
    for (const file of resolved) if (!fs.existsSync(file)) throw new UsageError(terminalText(`no such file: ${file}`));
    checkInbox(io, options);
    const outcome = await withWorkspace(io, options, (ws) => ingestFiles(ws, resolved, io, options.json === true));
    if (options.json) printJson(io, outcome.receipts);
    if (outcome.stoppedBy !== null) {
      const done = resolved.length - outcome.left.length;
      throw new InterruptedError(
        terminalText(
          `stopped by ${outcome.stoppedBy} after ${done} of ${resolved.length} file(s); ${outcome.left.length} not started, left where they are for the next run:`,
        ) + outcome.left.map((file) => `\n  ${terminalText(file)}`).join(''),
        signalExitCode(outcome.stoppedBy),
      );
    }
    if (outcome.failed) throw new InputRejectedError('some input was refused: see the receipts in outbox/receipts/');
  });

  addCommonOptions(
    program
      .command('watch')
      .description(
        'watch the inbox and process each file as it arrives, one at a time, until stopped (SIGINT/SIGTERM); ' +
          'reloads the configuration when its files change and then tries refused files again',
      )
      .option('--poll', 'poll the folder instead of file-system events (network shares)')
      .option('--stable-ms <ms>', 'quiet time before a file counts as completely written', '2000'),
  ).action(async (options: CommonOptions & { poll?: boolean; stableMs: string }) => {
    const stableMs = Number(options.stableMs);
    if (!Number.isFinite(stableMs) || stableMs < 0)
      throw new UsageError(
        `--stable-ms must be a number of milliseconds >= 0, got ${JSON.stringify(options.stableMs)}`,
      );
    const {
      catchUp,
      checkInbox,
      deliverOwedAlerts,
      processAndTell,
      reloadConfiguration,
      watchConfig,
      watchInbox,
      withWorkspace,
    } = await commandModules();
    checkInbox(io, options);
    // A watch runs for days and its output is a log: every line it writes begins with the time
    // (ISO 8601, UTC, from the injected clock).
    const log = stampLines(io);
    await withWorkspace(log, options, async (ws) => {
      fs.mkdirSync(ws.inbox, { recursive: true });
      catchUp(ws, log);
      await deliverOwedAlerts(ws, log);
      log.stdout(`watching ${ws.inbox} (stop with Ctrl-C)\n`);
      // One thing at a time on the workspace: a dropped file, or a reload of the configuration
      // (with the retry of refused files it brings).
      let last: Promise<unknown> = Promise.resolve();
      const inTurn = <T>(task: () => Promise<T>): Promise<T> => {
        const run = last.then(task);
        last = run.catch(() => undefined);
        return run;
      };
      const configWatch = watchConfig({
        dir: ws.configDir,
        poll: options.poll === true,
        onChange: () => {
          void inTurn(() => reloadConfiguration(ws, log)).catch((error: unknown) =>
            log.stderr(
              `ropewatch: reloading the configuration failed: ${terminalText((error as Error).message ?? String(error))}\n`,
            ),
          );
        },
        onError: (error) =>
          log.stderr(
            `ropewatch: the configuration folder cannot be watched: ${terminalText((error as Error).message ?? String(error))}\n`,
          ),
      });
      await configWatch.ready;
      try {
        await watchInbox({
          inbox: ws.inbox,
          poll: options.poll === true,
          stableMs,
          stop: (io.stopSignal ?? new Promise<void>(() => {})).then(() => undefined),
          // watchInbox logs file names as found in the folder; the watcher itself says "stopped".
          log: (line) => log.stdout(`${terminalText(line)}\n`),
          onError: (error, file) =>
            log.stderr(
              `ropewatch: ${terminalText(`${file ? `${file}: ` : ''}${(error as Error).message ?? String(error)}`)}\n`,
            ),
          onFile: async (file) => {
            // A file still being written is read again when it settles (the watcher saw it change).
            await inTurn(async () => {
              await processAndTell(ws, file, log, false);
              await deliverOwedAlerts(ws, log);
            });
          },
        });
      } finally {
        await configWatch.close();
        await last;
      }
    });
  });

  addCommonOptions(
    program
      .command('status')
      .description('what the store holds: files, rows, unresolved samples, sites and their last round')
      .option('--json', 'print as JSON'),
  ).action(async (options: CommonOptions) => {
    const { buildSiteRounds, clockDay, withWorkspace } = await commandModules();
    withWorkspace(
      io,
      options,
      (ws) => {
        const counts = ws.store.counts();
        const unresolved = ws.store.unresolvedSampleIds();
        const sites = ws.config.sites.map((site) => {
          const rounds = buildSiteRounds(
            site,
            ws.store.ropes(site.id),
            ws.store.currentResults(site.id),
            ws.store.plannedWithoutResults(site.id),
            {},
            clockDay(ws.now()),
          );
          const last = rounds.at(-1);
          const planned = ws.store.plannedRopes(site.id).filter((rope) => rope.afterRound === (last?.number ?? 0));
          return {
            site: site.id,
            name: site.name,
            rounds: rounds.length,
            lastRound: last
              ? {
                  number: last.number,
                  id: last.id,
                  startOn: last.startOn,
                  state: last.state,
                  resultsDueOn: last.resultsDueOn,
                }
              : null,
            missingRopesLastRound: last ? last.barns.flatMap((barn) => barn.missingSampleIds) : [],
            nextRound: planned.length > 0 ? { ropes: planned.length, dueOn: planned[0]!.dueOn } : null,
          };
        });
        const status = {
          store: ws.dbFile,
          ...counts,
          unresolvedSampleCount: unresolved.length,
          unresolvedSamples: unresolved,
          sites,
        };
        if (options.json) {
          printJson(io, status);
          return;
        }
        io.stdout(
          [
            `store ${ws.dbFile}`,
            `files: ${counts.files} (${counts.rejectedFiles} rejected)`,
            `results: ${counts.results} stored, ${counts.currentResults} current (others superseded by reissues)`,
            `ropes: ${counts.ropes} on sheets, ${counts.planned} planned`,
            `refused rows: ${counts.rejectedRows}`,
            `unresolved samples (no rope sheet yet): ${listSome(unresolved, STATUS_LIST_LIMIT)}`,
            ...sites.map(
              (site) =>
                `site ${site.site} (${site.name}): ${site.rounds} round${site.rounds === 1 ? '' : 's'}` +
                (site.lastRound
                  ? `, last ${site.lastRound.id}${site.lastRound.state === 'complete' ? '' : ` (${site.lastRound.state === 'awaiting-results' ? 'awaiting results' : 'partial results'}, due by ${site.lastRound.resultsDueOn})`}`
                  : '') +
                (site.missingRopesLastRound.length
                  ? ` (${site.missingRopesLastRound.length} ropes missing: ${site.missingRopesLastRound.join(', ')})`
                  : '') +
                (site.nextRound
                  ? `; next round: ${site.nextRound.ropes} ropes planned, due ${site.nextRound.dueOn}`
                  : ''),
            ),
          ]
            // Sample IDs and names come from lab files: escaped for the terminal.
            .map(terminalText)
            .join('\n') + '\n',
        );
      },
      { createStore: false },
    );
  });

  addCommonOptions(
    program
      .command('report')
      .description('regenerate outputs (summaries, cluster reviews, rope lists, pages) from the store')
      .option('--site <site>', 'only this site')
      .option('--round <round>', 'only this round number (with --site); the site folder is still rewritten whole')
      .option('--json', 'print what was written as JSON: per site its rounds and files'),
  ).action(async (options: CommonOptions & { site?: string; round?: string }) => {
    const { deliverOwedAlerts, OutputError, regenerateOutputs, removeStrayTemps, withWorkspace } =
      await commandModules();
    await withWorkspace(io, options, async (ws) => {
      if (options.round !== undefined && options.site === undefined) throw new UsageError('--round needs --site');
      let siteIds: string[] | undefined;
      if (options.site !== undefined) {
        const site = ws.config.siteById.get(options.site.toUpperCase());
        if (!site) throw new UsageError(`no site ${JSON.stringify(options.site)} in ${ws.configDir}/sites.yaml`);
        siteIds = [site.id];
      }
      removeStrayTemps(ws.outbox);
      let analyses: ReturnType<typeof regenerateOutputs>;
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
      if (options.json) {
        // A site's folder is staged and swapped in whole, stale round folders removed: what it
        // holds now is what this run wrote.
        printJson(io, {
          outbox: ws.outbox,
          index: fs.existsSync(path.join(ws.outbox, 'index.html')) ? 'index.html' : null,
          sites: analyses.map((analysis) => ({
            site: analysis.site.id,
            name: analysis.site.name,
            rounds: analysis.rounds.map((round) => ({ number: round.number, id: round.id, startOn: round.startOn })),
            files: fs.existsSync(path.join(ws.outbox, analysis.site.id))
              ? filesUnder(path.join(ws.outbox, analysis.site.id), ws.outbox)
              : [],
          })),
        });
        return;
      }
      for (const analysis of analyses) io.stdout(`wrote ${analysis.site.id}: ${analysis.rounds.length} round(s)\n`);
    });
  });

  addCommonOptions(
    program
      .command('demo')
      .description(
        'run the invented demo scenario end to end: writes config/, drops files into inbox/ and processes them into outbox/ (resets the demo store first); ' +
          'refuses a config folder holding files it did not write (use --config <other dir>)',
      )
      .option(
        '--force',
        'also reset a store that holds files the demo did not make (a configuration the demo did not write is never replaced)',
      ),
  ).action(async (options: CommonOptions & { force?: boolean }) => {
    const { resolvePaths, runDemo } = await commandModules();
    await runDemo(io, resolvePaths(io.cwd, options), options.force === true);
  });

  addCommonOptions(
    program
      .command('plan')
      .description(
        "make or remake a site's next-round rope list (outbox/<site>/next-round.csv and .json); its sample IDs become the expected rope sheet",
      )
      .requiredOption('--site <site>', 'site id, code or name')
      .option('--budget <ropes>', "ropes the producer will hang this round (overrides the site's ropeBudget)")
      .option('--json', 'print the plan as JSON'),
  ).action(async (options: CommonOptions & { site: string; budget?: string }) => {
    const budget =
      options.budget === undefined ? undefined : parseIntegerOption('--budget', options.budget, 0, 100_000);
    const { planText, regenerateOutputs, withWorkspace } = await commandModules();
    withWorkspace(io, options, (ws) => {
      const wanted = options.site.toUpperCase();
      const site = ws.config.sites.find((candidate) =>
        [candidate.id, candidate.code, candidate.name].some((name) => name.toUpperCase() === wanted),
      );
      if (!site) throw new UsageError(`no site ${JSON.stringify(options.site)} in ${ws.configDir}/sites.yaml`);
      const [analysis] = regenerateOutputs(ws, [site.id], budget === undefined ? {} : { budget });
      if (options.json) printJson(io, analysis!.plan);
      else io.stdout(planText(analysis!.plan));
    });
  });
}
