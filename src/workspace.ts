/**
 * The edge where ropewatch meets the world: which config, store, inbox and outbox a command works
 * on, opened once per command and passed to everything that needs them.
 */
import { configDigest } from './config/digest.js';
import { loadConfig } from './config/load.js';
import type { Config } from './config/types.js';
import { Store } from './store/store.js';
import type { WorkspacePaths } from './workspacePaths.js';

export {
  DEFAULT_PATHS,
  resolvePaths,
  type PathOptions,
  type WorkspacePaths,
} from './workspacePaths.js';

export interface Workspace extends WorkspacePaths {
  config: Config;
  /** Digest of the configuration files as loaded (outputs record it). */
  configDigest: string;
  store: Store;
  now: () => Date;
  log: (line: string) => void;
  close: () => void;
}

export interface OpenOptions {
  /**
   * Create the store when it does not exist (default). Only commands that write (ingest, watch,
   * demo, report, plan) do: a command that only reads a mistyped --db must say so, not create an
   * empty store and report nothing.
   */
  createStore?: boolean;
  /** How long a writer waits for another process's write lock (default 120 s). */
  busyTimeoutMs?: number;
}

/**
 * Loads the configuration, then opens the store.
 * @throws ConfigError for the configuration, StoreOpenError for the store (both name the file).
 */
export function openWorkspace(
  paths: WorkspacePaths,
  now: () => Date,
  log: (line: string) => void,
  options: OpenOptions = {},
): Workspace {
  const config = loadConfig(paths.configDir);
  const digest = configDigest(paths.configDir);
  const store = new Store(paths.dbFile, {
    create: options.createStore ?? true,
    ...(options.busyTimeoutMs === undefined ? {} : { busyTimeoutMs: options.busyTimeoutMs }),
  });
  return { ...paths, config, configDigest: digest, store, now, log, close: () => store.close() };
}
