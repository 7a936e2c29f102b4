/**
 * Refused files read again once their cause is put right (a lab profile's column name, a
 * missing assay mapping): `ropewatch retry`, and the watcher after it reloads its configuration.
 * A file accepted now moves from inbox/rejected/ to inbox/archive/ and its .reason.txt goes; a
 * file refused again stays, with the new reason beside it.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import { configDigest } from '../config/digest.js';
import { ConfigError, formatProblem, loadConfig } from '../config/load.js';
import { reasonPath, REJECTED_DIR } from '../inboxFiles.js';
import { terminalText } from '../util/terminalText.js';
import type { Workspace } from '../workspace.js';
import { catchUp, ingestFiles } from './runFiles.js';
import { addCommonOptions, checkInbox, withWorkspace, type CommonOptions } from './workspaceOptions.js';
import { InputRejectedError, printJson, UsageError, type CliIo } from './io.js';

const REASON_SUFFIX = '.reason.txt';

/** The refused files waiting in inbox/rejected/, oldest name first (not their reasons, not hidden files). */
export function rejectedFiles(inbox: string): string[] {
  const dir = path.join(inbox, REJECTED_DIR);
  let entries: fs.Dirent[];
  try {
    entries = fs.readdirSync(dir, { withFileTypes: true });
  } catch {
    return [];
  }
  return entries
    .filter((entry) => !entry.isDirectory() && !entry.name.startsWith('.') && !entry.name.endsWith(REASON_SUFFIX))
    .map((entry) => path.join(dir, entry.name))
    .sort();
}

/**
 * Runs refused files through the pipeline with the workspace's current configuration; removes
 * the reason of each one that left rejected/ (accepted, a duplicate now, or taken by another
 * process). Returns whether any is still refused.
 */
export async function retryFiles(ws: Workspace, files: readonly string[], io: CliIo, json: boolean): Promise<{ stillRefused: number; accepted: number; receipts: unknown[] }> {
  const run = await ingestFiles(ws, files, io, json);
  let accepted = 0;
  for (const file of files) {
    if (fs.existsSync(file)) continue;
    accepted++;
    fs.rmSync(reasonPath(file), { force: true });
  }
  const stillRefused = run.receipts.filter((receipt) => receipt.status === 'rejected').length;
  return { stillRefused, accepted, receipts: run.receipts };
}

/**
 * Loads the configuration again; on success the workspace takes it, outputs built under the old
 * one are rebuilt, and refused files are tried again. A configuration that does not load is told
 * and the previous one kept.
 */
export async function reloadConfiguration(ws: Workspace, io: CliIo, stamp: () => string): Promise<void> {
  let config;
  try {
    config = loadConfig(ws.configDir);
  } catch (error) {
    if (!(error instanceof ConfigError)) throw error;
    // One log line: the problems side by side, not the multi-line message.
    const problems = error.problems.map((problem) => terminalText(formatProblem(problem))).join('; ');
    io.stderr(`${stamp()} ropewatch: the configuration changed but cannot be loaded (${problems}); the previous configuration stays in force\n`);
    return;
  }
  const digest = configDigest(ws.configDir);
  if (digest === ws.configDigest) return;
  ws.config = config;
  ws.configDigest = digest;
  io.stdout(`${stamp()} configuration reloaded from ${terminalText(ws.configDir)}\n`);
  catchUp(ws, io);
  const refused = rejectedFiles(ws.inbox);
  if (refused.length === 0) return;
  io.stdout(`${stamp()} trying ${refused.length} refused file(s) again with the new configuration\n`);
  const outcome = await retryFiles(ws, refused, io, false);
  io.stdout(`${stamp()} ${outcome.accepted} accepted now, ${outcome.stillRefused} still refused (see inbox/rejected/)\n`);
}

export function registerRetry(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('retry')
      .description(
        'read refused files again with the current configuration (after fixing a lab profile, say): the files named, or every file in inbox/rejected/; ' +
          'a file accepted now moves to inbox/archive/, one refused again stays with its new reason',
      )
      .argument('[files...]', 'refused files to read again (default: all of inbox/rejected/)')
      .option('--json', 'print the receipts as JSON'),
  ).action(async (files: string[], options: CommonOptions) => {
    checkInbox(io, options);
    await withWorkspace(io, options, async (ws) => {
      const targets = files.length > 0 ? files.map((file) => path.resolve(io.cwd, file)) : rejectedFiles(ws.inbox);
      for (const file of targets) if (!fs.existsSync(file)) throw new UsageError(`no such file: ${terminalText(file)}`);
      if (targets.length === 0) {
        if (options.json) printJson(io, []);
        else io.stdout(`nothing to retry: ${terminalText(path.join(ws.inbox, REJECTED_DIR))} holds no refused file\n`);
        return;
      }
      const outcome = await retryFiles(ws, targets, io, options.json === true);
      if (options.json) printJson(io, outcome.receipts);
      else io.stdout(`${outcome.accepted} of ${targets.length} accepted now; ${outcome.stillRefused} still refused\n`);
      if (outcome.stillRefused > 0) throw new InputRejectedError('some files are still refused: see their .reason.txt in inbox/rejected/');
    });
  });
}
