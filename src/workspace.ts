/**
 * The edge where ropewatch meets the world: which config, store, inbox and outbox a command works
 * on, opened once per command and passed to everything that needs them.
 */
import path from 'node:path';
import { configDigest } from './config/digest.js';
import { loadConfig } from './config/load.js';
import type { Config } from './config/types.js';
import type { StoreBackend } from './domain/store.js';
import { storeLocationFrom } from './store/location.js';
import { openStore } from './store/openStore.js';
import { DEFAULT_PATHS, type PathOptions, type WorkspacePaths } from './workspacePaths.js';

export { DEFAULT_PATHS, type PathOptions, type WorkspacePaths } from './workspacePaths.js';

export interface Workspace extends WorkspacePaths {
  config: Config;
  /** Digest of the configuration files as loaded (outputs record it). */
  configDigest: string;
  store: StoreBackend;
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
  const store = openStore(paths.storeLocation, {
    create: options.createStore ?? true,
    ...(options.busyTimeoutMs === undefined ? {} : { busyTimeoutMs: options.busyTimeoutMs }),
  });
  return { ...paths, config, configDigest: digest, store, now, log, close: () => store.close() };
}

/**
 * The workspace's paths: each option as given, or its default, resolved against `cwd`; the store
 * from --db, else ROPEWATCH_DB in `env`, else the default file (a SQLite path resolved, a
 * PostgreSQL URL as it is).
 * @throws StoreLocationError when the store's location is a PostgreSQL URL that does not parse.
 */
export function resolvePaths(
  cwd: string,
  options: PathOptions,
  env: Readonly<Record<string, string | undefined>> = {},
): WorkspacePaths {
  const location = storeLocationFrom(options.db, env, DEFAULT_PATHS.db);
  return {
    configDir: path.resolve(cwd, options.config ?? DEFAULT_PATHS.config),
    storeLocation: location.kind === 'sqlite' ? { kind: 'sqlite', file: path.resolve(cwd, location.file) } : location,
    inbox: path.resolve(cwd, options.inbox ?? DEFAULT_PATHS.inbox),
    outbox: path.resolve(cwd, options.outbox ?? DEFAULT_PATHS.outbox),
  };
}
