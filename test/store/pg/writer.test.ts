/**
 * The PostgreSQL writer against the SQLite store, its reference implementation: the same files
 * through the same ingest code (ingestFile) into a SQLite store and into a fresh PostgreSQL
 * database must give equal receipts and, table by table, equal digests (storeDigests: every row
 * in key order, ids included). Then what only a shared server has: a file stored twice, a
 * rollback, and writers racing (writerChild.ts holds a file's transaction open in another process).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import type { Config } from '../../../src/config/types.js';
import type { StoreBackend } from '../../../src/domain/store.js';
import { ingestFile, type Receipt } from '../../../src/ingest/ingestFile.js';
import { parseStoreLocation } from '../../../src/store/location.js';
import { openStoreSide, storeDigests, type CopiedTableReport } from '../../../src/store/pg/copyStore.js';
import { openPgStore } from '../../../src/store/pg/store.js';
import { Store } from '../../../src/store/store.js';
import { freshDatabase, type TestDatabase } from '../../helpers/pgServer.js';
import { runCli } from '../../helpers/runCli.js';

const HERE = path.dirname(fileURLToPath(import.meta.url));
const CORPUS = path.resolve(HERE, '../../fixtures/exports');
const NOW = new Date('2026-12-01T12:00:00Z');

let dir: string;
const databases: TestDatabase[] = [];

async function database(label: string): Promise<TestDatabase> {
  const made = await freshDatabase(label);
  databases.push(made);
  return made;
}

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-pgwriter-'));
}, 60_000);

afterAll(async () => {
  for (const made of databases) await made.drop();
  if (dir !== undefined) fs.rmSync(dir, { recursive: true, force: true });
});

function digestsOf(location: string): CopiedTableReport[] {
  const side = openStoreSide(parseStoreLocation(location), 'source');
  try {
    return storeDigests(side);
  } finally {
    side.close();
  }
}

/** Ingests the files in order into the store; their receipts. */
async function ingestAll(files: readonly string[], config: Config, store: StoreBackend): Promise<Receipt[]> {
  const receipts: Receipt[] = [];
  for (const file of files) receipts.push(await ingestFile(file, { config, store, now: () => NOW }));
  return receipts;
}

/** The same files into SQLite and PostgreSQL: both stores' receipts and digests. */
async function bothStores(
  label: string,
  files: readonly string[],
  config: Config,
): Promise<{ sqlite: Receipt[]; pg: Receipt[]; sqliteDigests: CopiedTableReport[]; pgDigests: CopiedTableReport[] }> {
  const sqliteFile = path.join(dir, `${label}.db`);
  const sqliteStore = new Store(sqliteFile);
  const sqlite = await ingestAll(files, config, sqliteStore).finally(() => sqliteStore.close());
  const db = await database(label);
  const pgStore = openPgStore(db.url);
  const pg = await ingestAll(files, config, pgStore).finally(() => pgStore.close());
  return { sqlite, pg, sqliteDigests: digestsOf(sqliteFile), pgDigests: digestsOf(db.url) };
}

describe('PostgreSQL writer: the same files give the SQLite store`s rows (the reference implementation)', () => {
  it('stores the demo scenario`s drops with equal receipts and equal digests of every table', async () => {
    const demoDir = path.join(dir, 'demo');
    fs.mkdirSync(demoDir);
    const demo = await runCli(['demo'], { cwd: demoDir });
    expect(demo.code, demo.stderr).toBe(0);
    // The drops in the order the demo stored them (its files table), from the archive and the rejected folder.
    const Database = (await import('better-sqlite3')).default;
    const demoDb = new Database(path.join(demoDir, 'data', 'ropewatch.db'), { readonly: true });
    const names = (demoDb.prepare('SELECT name FROM files ORDER BY id').all() as { name: string }[]).map((r) => r.name);
    demoDb.close();
    const files = names.map((name) =>
      ['archive', 'rejected']
        .map((folder) => path.join(demoDir, 'inbox', folder, name))
        .find((file) => fs.existsSync(file)),
    );
    expect(files.every((file) => file !== undefined)).toBe(true);
    const config = loadConfig(path.join(demoDir, 'config'));
    const result = await bothStores('demo', files as string[], config);
    expect(result.sqlite.map((r) => r.status)).toContain('accepted');
    expect(result.pg).toEqual(result.sqlite);
    expect(result.pgDigests).toEqual(result.sqliteDigests);
    expect(result.sqliteDigests.find((t) => t.table === 'results')?.rows).toBeGreaterThan(100);
  }, 600_000);

  it('stores the hostile-input corpus with equal receipts and equal digests of every table', async () => {
    const files = fs
      .readdirSync(CORPUS, { withFileTypes: true })
      .filter((entry) => entry.isFile() && !entry.name.endsWith('.expected.json') && !entry.name.endsWith('.ts'))
      .map((entry) => path.join(CORPUS, entry.name))
      .sort();
    const config = loadConfig(path.join(CORPUS, 'config'));
    const result = await bothStores('corpus', files, config);
    expect(new Set(result.sqlite.map((r) => r.status))).toEqual(new Set(['accepted', 'rejected']));
    expect(result.pg).toEqual(result.sqlite);
    expect(result.pgDigests).toEqual(result.sqliteDigests);
  }, 300_000);
});
