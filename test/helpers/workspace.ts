/**
 * Temporary workspaces for tests: a config folder (a copy of the demo config, or custom files),
 * an inbox, an outbox and a SQLite store in a fresh temp dir. Files go through the real pipeline
 * (`processFile`) or the CLI (`cliFlags` gives the --config/--db/--inbox/--outbox flags).
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import type { Config } from '../../src/config/types.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { processFile, type ProcessOutcome } from '../../src/pipeline.js';
import { Store } from '../../src/store/store.js';
import { parseStoreLocation, type StoreLocation } from '../../src/store/location.js';
import { openWorkspace, type Workspace, type WorkspacePaths } from '../../src/workspace.js';
import { storeSql, type StoreSql } from './storeSql.js';
import { lazyTestStoreLocation } from './testStore.js';

export const FIXED_NOW = new Date('2026-12-01T12:00:00Z');

export interface TestWorkspaceOptions {
  /** Copy this config folder (default: the demo config). */
  configFrom?: string;
  /** Files to write over the copied config, relative to the config folder (e.g. `labs/x.yaml`). */
  configFiles?: Record<string, string>;
}

/** A test workspace's paths, with its SQLite store's file (tests look into it). */
export type SqlitePaths = WorkspacePaths & { dbFile: string };

/**
 * A test workspace's paths: `db` is what --db takes (the SQLite file, or on the PostgreSQL run
 * the database's URL); `dbFile` is where a SQLite store's file would be.
 */
export type TestPaths = SqlitePaths & { db: string };

/** A workspace on a SQLite store, whose connection tests may query. */
export type SqliteWorkspace = Workspace & { store: Store };

/** The paths of a workspace under `root` with the default layout and a SQLite store. */
export function sqlitePaths(root: string): SqlitePaths {
  const dbFile = path.join(root, 'data', 'ropewatch.db');
  return {
    configDir: path.join(root, 'config'),
    storeLocation: { kind: 'sqlite', file: dbFile },
    dbFile,
    inbox: path.join(root, 'inbox'),
    outbox: path.join(root, 'outbox'),
  };
}

/** A workspace opened on a SQLite store, typed so (tests reach past the interface to its connection). */
export function openSqliteWorkspace(
  paths: WorkspacePaths,
  now: () => Date,
  log: (line: string) => void,
): SqliteWorkspace {
  const ws = openWorkspace(paths, now, log);
  if (!(ws.store instanceof Store)) {
    ws.close();
    throw new Error('a SQLite workspace was asked for, and the store is not SQLite');
  }
  return ws as SqliteWorkspace;
}

export interface TestWorkspace {
  root: string;
  paths: TestPaths;
  /** --config/--db/--inbox/--outbox flags for the CLI. */
  cliFlags: string[];
  config: () => Config;
  /** The open workspace (opened on first use; `closeStore` closes it so the CLI can run alone). */
  ws: () => Workspace;
  /** Plain SQL on the workspace's store, on either backend. */
  sql: () => StoreSql;
  /** Writes `bytes` as inbox/<name> and runs it through processFile. */
  drop: (name: string, bytes: Buffer | string) => Promise<ProcessOutcome>;
  closeStore: () => void;
  /** Removes the temp dir (closing the store first). */
  cleanup: () => void;
}

export function makeWorkspace(options: TestWorkspaceOptions = {}): TestWorkspace {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-test-'));
  const sqlite = sqlitePaths(root);
  // On the PostgreSQL run the store is a new database, made when `db`, `storeLocation` or the CLI
  // flags are first read (a test of the config folder alone makes none); dbFile then names no file.
  const store = lazyTestStoreLocation(sqlite.dbFile, 'ws');
  let storeLocation: StoreLocation | undefined;
  const paths: TestPaths = {
    ...sqlite,
    get storeLocation() {
      storeLocation ??= parseStoreLocation(store.location);
      return storeLocation;
    },
    get db() {
      return store.location;
    },
  };
  fs.cpSync(options.configFrom ?? DEMO_CONFIG_DIR, paths.configDir, { recursive: true });
  for (const [name, text] of Object.entries(options.configFiles ?? {})) {
    fs.mkdirSync(path.dirname(path.join(paths.configDir, name)), { recursive: true });
    fs.writeFileSync(path.join(paths.configDir, name), text);
  }
  fs.mkdirSync(paths.inbox, { recursive: true });
  fs.mkdirSync(paths.outbox, { recursive: true });
  let open: Workspace | undefined;
  const ws = () =>
    (open ??= openWorkspace(
      paths,
      () => FIXED_NOW,
      () => {},
    ));
  const closeStore = () => {
    open?.close();
    open = undefined;
  };
  return {
    root,
    paths,
    get cliFlags() {
      return ['--config', paths.configDir, '--db', paths.db, '--inbox', paths.inbox, '--outbox', paths.outbox];
    },
    config: () => (open ? open.config : loadConfig(paths.configDir)),
    ws,
    drop: async (name, bytes) => {
      const file = path.join(paths.inbox, name);
      fs.writeFileSync(file, bytes);
      const workspace = ws();
      return processFile(workspace, file);
    },
    closeStore,
    sql: () => storeSql(ws().store),
    cleanup: () => {
      closeStore();
      store.drop();
      fs.rmSync(root, { recursive: true, force: true });
    },
  };
}

/** Every file under `dir` (relative path, sorted) with its SHA-256, optionally skipping some top-level folders. */
export function treeHashes(dir: string, skipTop: readonly string[] = []): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (current: string, rel: string) => {
    if (!fs.existsSync(current)) return;
    for (const entry of fs.readdirSync(current, { withFileTypes: true }).sort((a, b) => (a.name < b.name ? -1 : 1))) {
      const relPath = rel === '' ? entry.name : `${rel}/${entry.name}`;
      if (rel === '' && skipTop.includes(entry.name)) continue;
      const full = path.join(current, entry.name);
      if (entry.isDirectory()) walk(full, relPath);
      else out[relPath] = createHash('sha256').update(fs.readFileSync(full)).digest('hex');
    }
  };
  walk(dir, '');
  return out;
}

/**
 * A workspace factory for one test file: every workspace it makes is removed after each test.
 * Call at the top level of the file: `const workspace = workspacesPerTest();`.
 */
export function workspacesPerTest(): (options?: TestWorkspaceOptions) => TestWorkspace {
  let made: TestWorkspace[] = [];
  afterEach(() => {
    for (const ws of made) ws.cleanup();
    made = [];
  });
  return (options) => {
    const ws = makeWorkspace(options);
    made.push(ws);
    return ws;
  };
}
