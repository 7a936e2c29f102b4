/**
 * What every workspace command shares when it runs: opening the workspace at the edge
 * (configuration and store problems become usage errors, exit 2), and the inbox check before
 * anything is stored. The --config, --db, --inbox and --outbox options are declared in
 * `commonOptions.ts`.
 */
import { ConfigError } from '../config/load.js';
import { findSite } from '../config/names.js';
import type { Site } from '../config/types.js';
import { inboxProblem } from '../inboxFiles.js';
import { StoreLocationError } from '../store/location.js';
import { StoreOpenError } from '../store/store.js';
import { terminalText } from '../util/terminalText.js';
import { openWorkspace, resolvePaths, type OpenOptions, type Workspace, type WorkspacePaths } from '../workspace.js';
import { CONFIG_FILES } from '../workspacePaths.js';
import type { CommonOptions } from './commonOptions.js';
import { UsageError, type CliIo } from './io.js';

/**
 * `ROPEWATCH_BUSY_TIMEOUT_MS`: how long a writer waits for another process's write lock before
 * it gives up on the file (default 120 s); a value that is not a positive integer is a usage error.
 */
function busyTimeoutFromEnv(env: CliIo['env']): OpenOptions {
  const text = env.ROPEWATCH_BUSY_TIMEOUT_MS;
  if (text === undefined || text === '') return {};
  if (!/^[1-9]\d{0,8}$/.test(text))
    throw new UsageError(`ROPEWATCH_BUSY_TIMEOUT_MS must be a whole number of milliseconds, got "${text}"`);
  return { busyTimeoutMs: Number(text) };
}

/**
 * The workspace's paths from the options, the store from --db or ROPEWATCH_DB; a store location
 * that does not parse is a usage error (exit 2) that never shows its password.
 */
export function pathsOf(io: CliIo, options: CommonOptions): WorkspacePaths {
  try {
    return resolvePaths(io.cwd, options, io.env);
  } catch (error) {
    if (error instanceof StoreLocationError) throw new UsageError(error.message);
    throw error;
  }
}

/** Opens the workspace, turning configuration and store problems into usage errors (exit 2). */
export function withWorkspace<T>(
  io: CliIo,
  options: CommonOptions,
  run: (ws: Workspace) => T,
  open: OpenOptions = {},
): T {
  let ws: Workspace;
  try {
    ws = openWorkspace(pathsOf(io, options), io.now, (line) => io.stderr(`${line}\n`), {
      ...busyTimeoutFromEnv(io.env),
      ...open,
    });
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

/** The site --site names by its id, code or name; a usage error (exit 2) when none has it. */
export function siteOption(ws: Workspace, text: string): Site {
  const site = findSite(ws.config.sites, text);
  if (!site) throw new UsageError(`no site ${JSON.stringify(text)} in ${ws.configDir}/${CONFIG_FILES.sites}`);
  return site;
}

/** Refuses to start (exit 2) when processed files could not be moved out of the inbox. */
export function checkInbox(io: CliIo, options: CommonOptions): void {
  const problem = inboxProblem(pathsOf(io, options).inbox);
  if (problem !== null) throw new UsageError(terminalText(problem));
}
