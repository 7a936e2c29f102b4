/**
 * The edge where ropewatch meets the world: which config, store, inbox and outbox a command works
 * on, opened once per command and passed to everything that needs them.
 */
import path from 'node:path';
import { configDigest } from './config/digest.js';
import { loadConfig } from './config/load.js';
import type { Config } from './config/types.js';
import { Store } from './store/store.js';

export interface WorkspacePaths {
  configDir: string;
  dbFile: string;
  inbox: string;
  outbox: string;
}

export interface Workspace extends WorkspacePaths {
  config: Config;
  /** Digest of the configuration files as loaded (outputs record it). */
  configDigest: string;
  store: Store;
  now: () => Date;
  log: (line: string) => void;
  close: () => void;
}

export interface PathOptions {
  config?: string;
  db?: string;
  inbox?: string;
  outbox?: string;
}

export const DEFAULT_PATHS = Object.freeze({
  config: 'config',
  db: 'data/ropewatch.db',
  inbox: 'inbox',
  outbox: 'outbox',
});

export function resolvePaths(cwd: string, options: PathOptions): WorkspacePaths {
  return {
    configDir: path.resolve(cwd, options.config ?? DEFAULT_PATHS.config),
    dbFile: path.resolve(cwd, options.db ?? DEFAULT_PATHS.db),
    inbox: path.resolve(cwd, options.inbox ?? DEFAULT_PATHS.inbox),
    outbox: path.resolve(cwd, options.outbox ?? DEFAULT_PATHS.outbox),
  };
}

export interface OpenOptions {
  /**
   * Create the store when it does not exist (default). Only commands that write (ingest, watch,
   * demo, report, plan) do: a command that only reads a mistyped --db must say so, not create an
   * empty store and report nothing.
   */
  createStore?: boolean;
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
  const store = new Store(paths.dbFile, { create: options.createStore ?? true });
  return { ...paths, config, configDigest: digest, store, now, log, close: () => store.close() };
}
