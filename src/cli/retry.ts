/**
 * Refused files read again once their cause is put right (a lab profile's column name, a
 * missing assay mapping): `ropewatch retry` (src/cli/commands/retry.ts), and the watcher after it reloads
 * its configuration.
 * A file accepted now moves from inbox/rejected/ to inbox/archive/ and its .reason.txt goes; a
 * file refused again stays, with the new reason beside it.
 */
import fs from 'node:fs';
import path from 'node:path';
import { configDigest } from '../config/digest.js';
import { ConfigError, formatProblem, loadConfig } from '../config/load.js';
import { reasonPath, REJECTED_DIR } from '../inboxFiles.js';
import { terminalText } from '../util/terminalText.js';
import type { Workspace } from '../workspace.js';
import { DEFAULT_PLACES } from '../workspacePaths.js';
import { catchUp, ingestFiles } from './runFiles.js';
import type { CliIo } from './io.js';

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
export async function retryFiles(
  ws: Workspace,
  files: readonly string[],
  io: CliIo,
  json: boolean,
): Promise<{ stillRefused: number; accepted: number; receipts: unknown[] }> {
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
 * and the previous one kept. (`watch` passes an io that puts the time before each line.)
 */
export async function reloadConfiguration(ws: Workspace, io: CliIo): Promise<void> {
  let config: ReturnType<typeof loadConfig>;
  try {
    config = loadConfig(ws.configDir);
  } catch (error) {
    if (!(error instanceof ConfigError)) throw error;
    // One log line: the problems side by side, not the multi-line message.
    const problems = error.problems.map((problem) => terminalText(formatProblem(problem))).join('; ');
    io.stderr(
      `ropewatch: the configuration changed but cannot be loaded (${problems}); the previous configuration stays in force\n`,
    );
    return;
  }
  const digest = configDigest(ws.configDir);
  if (digest === ws.configDigest) return;
  ws.config = config;
  ws.configDigest = digest;
  io.stdout(`configuration reloaded from ${terminalText(ws.configDir)}\n`);
  catchUp(ws, io);
  const refused = rejectedFiles(ws.inbox);
  if (refused.length === 0) return;
  io.stdout(`trying ${refused.length} refused file(s) again with the new configuration\n`);
  const outcome = await retryFiles(ws, refused, io, false);
  io.stdout(
    `${outcome.accepted} accepted now, ${outcome.stillRefused} still refused (see ${DEFAULT_PLACES.rejected})\n`,
  );
}
