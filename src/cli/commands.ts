/**
 * The pipeline commands: ingest, watch, status, report. Each opens the workspace at the edge,
 * runs, closes it, and reports through the injected io.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Command } from 'commander';
import { ConfigError } from '../config/load.js';
import type { Receipt } from '../ingest/ingestFile.js';
import { FileTakenError, inboxProblem, takenByAnother } from '../inboxFiles.js';
import { buildSiteRounds } from '../interpret/roundModel.js';
import { catchUpOutputs, OutputError, regenerateOutputs } from '../outputs.js';
import { removeStrayTemps } from '../report/files.js';
import { planText } from '../report/planText.js';
import { FileStillChangingError, processFile, type ProcessOutcome } from '../pipeline.js';
import { runDemo } from '../demo/runDemo.js';
import { terminalText } from '../util/terminalText.js';
import { watchInbox } from '../watch/index.js';
import { StoreOpenError } from '../store/store.js';
import { openWorkspace, resolvePaths, type OpenOptions, type PathOptions, type Workspace } from '../workspace.js';
import { InputRejectedError, InterruptedError, printJson, UsageError, type CliIo } from './io.js';
import { parseIntegerOption } from './parseArgs.js';

export interface CommonOptions extends PathOptions {
  json?: boolean;
}

/** --config, --db, --inbox, --outbox: the same on every command that touches the workspace. */
export function addCommonOptions(command: Command): Command {
  return command
    .option('--config <dir>', 'configuration folder (sites.yaml, assays.yaml, labs/)', 'config')
    .option('--db <file>', 'SQLite store', 'data/ropewatch.db')
    .option('--inbox <dir>', 'drop folder for lab exports and rope sheets', 'inbox')
    .option('--outbox <dir>', 'folder for summaries, reviews and rope lists', 'outbox');
}

/** Opens the workspace, turning configuration and store problems into usage errors (exit 2). */
export function withWorkspace<T>(io: CliIo, options: CommonOptions, run: (ws: Workspace) => T, open: OpenOptions = {}): T {
  let ws: Workspace;
  try {
    ws = openWorkspace(resolvePaths(io.cwd, options), io.now, (line) => io.stderr(`${line}\n`), open);
  } catch (error) {
    if (error instanceof ConfigError) throw new UsageError(`configuration: ${error.message}`);
    if (error instanceof StoreOpenError) throw new UsageError(error.message);
    throw error;
  }
  let closeNow = true;
  try {
    const result = run(ws);
    if (result instanceof Promise) {
      closeNow = false;
      return result.finally(() => ws.close()) as T;
    }
    return result;
  } finally {
    if (closeNow) ws.close();
  }
}

/** Sample IDs printed by `status` before "and N more" (--json lists them all). */
const STATUS_LIST_LIMIT = 20;

function listSome(ids: readonly string[], limit: number): string {
  if (ids.length === 0) return 'none';
  const shown = ids.slice(0, limit).join(', ');
  return ids.length > limit ? `${ids.length}: ${shown} and ${ids.length - limit} more (--json lists them all)` : shown;
}

/** One line per receipt for the terminal; names and messages from the file are escaped. */
function receiptLine(receipt: Receipt): string {
  return terminalText(receiptSummary(receipt));
}

function receiptSummary(receipt: Receipt): string {
  if (receipt.status === 'rejected') return `rejected ${receipt.file}: ${receipt.reason?.message ?? 'see receipt'}`;
  if (receipt.status === 'duplicate') return `skipped  ${receipt.file}: the same bytes were ingested before`;
  const parts = [`${receipt.rows.accepted} rows stored`];
  if (receipt.rows.rejected) parts.push(`${receipt.rows.rejected} refused`);
  if (receipt.rows.duplicate) parts.push(`${receipt.rows.duplicate} already stored`);
  if (receipt.rows.superseded) parts.push(`${receipt.rows.superseded} superseding earlier reports`);
  if (receipt.unresolvedSampleIds.length) parts.push(`${receipt.unresolvedSampleIds.length + receipt.unresolvedNotListed} samples awaiting a rope sheet`);
  if (receipt.resolvedSampleIds.length) parts.push(`${receipt.resolvedSampleIds.length} earlier results now placed`);
  return `accepted ${receipt.file} (${receipt.kind}${receipt.lab ? `, ${receipt.lab}` : ''}): ${parts.join(', ')}`;
}

/**
 * Rebuilds outputs left behind the store by an earlier run (a crash or a full disk between a
 * commit and its outputs). Returns false when they still cannot be written.
 */
export function catchUp(ws: Workspace, io: CliIo): boolean {
  try {
    const rebuilt = catchUpOutputs(ws);
    if (rebuilt.length > 0) io.stderr(`ropewatch: the outputs of ${rebuilt.join(', ')} were behind the store (an earlier run stopped before writing them); rebuilt\n`);
    return true;
  } catch (error) {
    if (!(error instanceof OutputError)) throw error;
    io.stderr(`ropewatch: ${terminalText(error.message)}\n`);
    return false;
  }
}

/** The line for a file another process took first: no receipt, not a refusal. */
function takenLine(file: string): string {
  return terminalText(`skipped  ${path.basename(file)}: already taken by another process`);
}

/**
 * Runs one file through the pipeline and tells the user. Returns the outcome; 'changing' when
 * the file was still being written (nothing stored, left in the inbox); 'taken' when another
 * process took it first (it stored or refused it and wrote its receipt).
 */
export async function processAndTell(ws: Workspace, file: string, io: CliIo, json: boolean): Promise<ProcessOutcome | 'changing' | 'taken'> {
  let outcome: ProcessOutcome;
  try {
    outcome = await processFile(ws, file);
  } catch (error) {
    if (error instanceof FileTakenError || takenByAnother(error, file)) {
      if (json) io.stderr(`ropewatch: ${takenLine(file)}\n`);
      else io.stdout(`${takenLine(file)}\n`);
      return 'taken';
    }
    if (!(error instanceof FileStillChangingError)) throw error;
    io.stderr(`ropewatch: not read yet: ${terminalText(error.message)}\n`);
    return 'changing';
  }
  if (!json) io.stdout(`${receiptLine(outcome.receipt)}\n`);
  if (outcome.outputError) io.stderr(`ropewatch: ${terminalText(`${path.basename(file)} stored, but ${outcome.outputError.message}`)}\n`);
  return outcome;
}

/**
 * Exit code of a command stopped by a signal: 128 + its number (signal(7): SIGINT 2 -> 130,
 * SIGTERM 15 -> 143), the shell's convention (POSIX Shell Command Language 2.8.2: above 128).
 * A stop with no signal named counts as an interrupt.
 */
export function signalExitCode(signal: string): number {
  const number = (os.constants.signals as Record<string, number | undefined>)[signal];
  return 128 + (number ?? os.constants.signals.SIGINT);
}

export interface IngestRun {
  receipts: Receipt[];
  failed: boolean;
  /** The signal that stopped the run (`a stop request` when it came without a name), or null. */
  stoppedBy: string | null;
  /** Files not started because of the stop: still where they were. */
  left: string[];
}

/**
 * Runs files through the pipeline in order; returns receipts. Exit 1 follows from refusals, from
 * files still being written and from outputs that could not be written. A stop request lets the
 * file in hand finish (its transaction commits or rolls back whole) and leaves the others untouched.
 */
export async function ingestFiles(ws: Workspace, files: readonly string[], io: CliIo, json: boolean): Promise<IngestRun> {
  const receipts: Receipt[] = [];
  let failed = !catchUp(ws, io);
  const stop: { by: string | null } = { by: null };
  void io.stopSignal?.then((signal) => {
    stop.by = signal ?? 'a stop request';
  });
  for (const [index, file] of files.entries()) {
    // A signal is delivered through the event loop: give it a turn before taking the next file.
    await new Promise<void>((resolve) => setImmediate(resolve));
    if (stop.by !== null) return { receipts, failed, stoppedBy: stop.by, left: files.slice(index) };
    const outcome = await processAndTell(ws, file, io, json);
    if (outcome === 'taken') continue;
    if (outcome === 'changing') {
      failed = true;
      continue;
    }
    receipts.push(outcome.receipt);
    if (outcome.receipt.status === 'rejected' || outcome.receipt.rows.rejected > 0 || outcome.outputError) failed = true;
  }
  return { receipts, failed, stoppedBy: null, left: [] };
}

/** Refuses to start (exit 2) when processed files could not be moved out of the inbox. */
function checkInbox(io: CliIo, options: CommonOptions): void {
  const problem = inboxProblem(resolvePaths(io.cwd, options).inbox);
  if (problem !== null) throw new UsageError(terminalText(problem));
}

export function registerPipelineCommands(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('ingest')
      .description('process lab exports and rope sheets once, then exit (processed files move to inbox/archive/, refused ones to inbox/rejected/)')
      .argument('<files...>', 'files to ingest (usually in the inbox)')
      .option('--json', 'print the receipts as JSON'),
  ).action(async (files: string[], options: CommonOptions) => {
    const resolved = files.map((file) => path.resolve(io.cwd, file));
    for (const file of resolved) if (!fs.existsSync(file)) throw new UsageError(terminalText(`no such file: ${file}`));
    checkInbox(io, options);
    const outcome = await withWorkspace(io, options, (ws) => ingestFiles(ws, resolved, io, options.json === true));
    if (options.json) printJson(io, outcome.receipts);
    if (outcome.stoppedBy !== null) {
      const done = resolved.length - outcome.left.length;
      throw new InterruptedError(
        terminalText(`stopped by ${outcome.stoppedBy} after ${done} of ${resolved.length} file(s); ${outcome.left.length} not started, left where they are for the next run:`) +
          outcome.left.map((file) => `\n  ${terminalText(file)}`).join(''),
        signalExitCode(outcome.stoppedBy),
      );
    }
    if (outcome.failed) throw new InputRejectedError('some input was refused: see the receipts in outbox/receipts/');
  });

  addCommonOptions(
    program
      .command('watch')
      .description('watch the inbox and process each file as it arrives, one at a time, until stopped (SIGINT/SIGTERM)')
      .option('--poll', 'poll the folder instead of file-system events (network shares)')
      .option('--stable-ms <ms>', 'quiet time before a file counts as completely written', '2000'),
  ).action(async (options: CommonOptions & { poll?: boolean; stableMs: string }) => {
    const stableMs = Number(options.stableMs);
    if (!Number.isFinite(stableMs) || stableMs < 0) throw new UsageError(`--stable-ms must be a number of milliseconds >= 0, got ${JSON.stringify(options.stableMs)}`);
    checkInbox(io, options);
    await withWorkspace(io, options, async (ws) => {
      fs.mkdirSync(ws.inbox, { recursive: true });
      catchUp(ws, io);
      io.stdout(`watching ${ws.inbox} (stop with Ctrl-C)\n`);
      await watchInbox({
        inbox: ws.inbox,
        poll: options.poll === true,
        stableMs,
        stop: (io.stopSignal ?? new Promise<void>(() => {})).then(() => undefined),
        // watchInbox logs file names as found in the folder; the watcher itself says "stopped".
        log: (line) => io.stdout(`${terminalText(line)}\n`),
        onError: (error, file) => io.stderr(`ropewatch: ${terminalText(`${file ? `${file}: ` : ''}${(error as Error).message ?? String(error)}`)}\n`),
        onFile: async (file) => {
          // A file still being written is read again when it settles (the watcher saw it change).
          await processAndTell(ws, file, io, false);
        },
      });
    });
  });

  addCommonOptions(
    program.command('status').description('what the store holds: files, rows, unresolved samples, sites and their last round').option('--json', 'print as JSON'),
  ).action((options: CommonOptions) => {
    withWorkspace(io, options, (ws) => {
      const counts = ws.store.counts();
      const unresolved = ws.store.unresolvedSampleIds();
      const sites = ws.config.sites.map((site) => {
        const rounds = buildSiteRounds(site, ws.store.ropes(site.id), ws.store.currentResults(site.id), ws.store.plannedWithoutResults(site.id));
        const last = rounds.at(-1);
        const planned = ws.store.plannedRopes(site.id).filter((rope) => rope.afterRound === (last?.number ?? 0));
        return {
          site: site.id,
          name: site.name,
          rounds: rounds.length,
          lastRound: last ? { number: last.number, id: last.id, startOn: last.startOn } : null,
          missingRopesLastRound: last ? last.barns.flatMap((barn) => barn.missingSampleIds) : [],
          nextRound: planned.length > 0 ? { ropes: planned.length, dueOn: planned[0]!.dueOn } : null,
        };
      });
      const status = { store: ws.dbFile, ...counts, unresolvedSampleCount: unresolved.length, unresolvedSamples: unresolved, sites };
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
              (site.lastRound ? `, last ${site.lastRound.id}` : '') +
              (site.missingRopesLastRound.length ? ` (${site.missingRopesLastRound.length} ropes missing: ${site.missingRopesLastRound.join(', ')})` : '') +
              (site.nextRound ? `; next round: ${site.nextRound.ropes} ropes planned, due ${site.nextRound.dueOn}` : ''),
          ),
        ]
          // Sample IDs and names come from lab files: escaped for the terminal.
          .map(terminalText)
          .join('\n') + '\n',
      );
    }, { createStore: false });
  });

  addCommonOptions(
    program
      .command('report')
      .description('regenerate outputs (summaries, cluster reviews, rope lists, pages) from the store')
      .option('--site <site>', 'only this site')
      .option('--round <round>', 'only this round number (with --site); the site folder is still rewritten whole'),
  ).action((options: CommonOptions & { site?: string; round?: string }) => {
    withWorkspace(io, options, (ws) => {
      if (options.round !== undefined && options.site === undefined) throw new UsageError('--round needs --site');
      let siteIds: string[] | undefined;
      if (options.site !== undefined) {
        const site = ws.config.siteById.get(options.site.toUpperCase());
        if (!site) throw new UsageError(`no site ${JSON.stringify(options.site)} in ${ws.configDir}/sites.yaml`);
        siteIds = [site.id];
      }
      removeStrayTemps(ws.outbox);
      let analyses;
      try {
        analyses = regenerateOutputs(ws, siteIds);
      } catch (error) {
        if (error instanceof OutputError) throw new InputRejectedError(error.message);
        throw error;
      }
      if (options.round !== undefined) {
        const number = Number(options.round);
        const exists = analyses[0]?.rounds.some((round) => round.number === number);
        if (!exists) throw new UsageError(`site ${options.site} has no round ${options.round}`);
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
      .option('--force', 'also reset a store that holds files the demo did not make (a configuration the demo did not write is never replaced)'),
  ).action(async (options: CommonOptions & { force?: boolean }) => {
    await runDemo(io, resolvePaths(io.cwd, options), options.force === true);
  });

  addCommonOptions(
    program
      .command('plan')
      .description("make or remake a site's next-round rope list (outbox/<site>/next-round.csv and .json); its sample IDs become the expected rope sheet")
      .requiredOption('--site <site>', 'site id, code or name')
      .option('--budget <ropes>', "ropes the producer will hang this round (overrides the site's ropeBudget)")
      .option('--json', 'print the plan as JSON'),
  ).action((options: CommonOptions & { site: string; budget?: string }) => {
    const budget = options.budget === undefined ? undefined : parseIntegerOption('--budget', options.budget, 0, 100_000);
    withWorkspace(io, options, (ws) => {
      const wanted = options.site.toUpperCase();
      const site = ws.config.sites.find((candidate) => [candidate.id, candidate.code, candidate.name].some((name) => name.toUpperCase() === wanted));
      if (!site) throw new UsageError(`no site ${JSON.stringify(options.site)} in ${ws.configDir}/sites.yaml`);
      const [analysis] = regenerateOutputs(ws, [site.id], budget === undefined ? {} : { budget });
      if (options.json) printJson(io, analysis!.plan);
      else io.stdout(planText(analysis!.plan));
    });
  });
}
