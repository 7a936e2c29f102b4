/**
 * Looking at a store from outside the process that writes it, on either backend: whether a file's
 * transaction is open, whether a sample's result is committed. For the crash tests, which must
 * kill a writer at a chosen moment.
 */
import fs from 'node:fs';
import Database from 'better-sqlite3';
import { isPostgresLocation } from '../../src/store/location.js';
import { SyncConnection } from '../../src/store/pg/syncConnection.js';

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

/**
 * Waits until another connection is storing a file. SQLite: a probe `BEGIN IMMEDIATE` with no busy
 * timeout fails with SQLITE_BUSY exactly while another holds the write lock (the WAL file is no
 * signal: the page cache holds a whole transaction until its commit). PostgreSQL: another session
 * holds a RowExclusiveLock on `files`, which the file's INSERT takes and keeps to the end of its
 * transaction (PostgreSQL 17 documentation, 13.3.1 Table-Level Locks; the pg_locks view).
 */
export async function waitForFileTransaction(location: string, timeoutMs: number): Promise<void> {
  const started = Date.now();
  if (isPostgresLocation(location)) {
    const conn = new SyncConnection(location);
    try {
      while (Date.now() - started < timeoutMs) {
        const held = conn.query(
          `SELECT 1 FROM pg_locks l JOIN pg_class c ON c.oid = l.relation
           WHERE c.relname = 'files' AND l.mode = 'RowExclusiveLock' AND l.granted AND l.pid <> pg_backend_pid()`,
        ).rows;
        if (held.length > 0) return;
        await sleep(15);
      }
    } finally {
      conn.close();
    }
    throw new Error(`no process began storing a file in ${location} within ${timeoutMs} ms`);
  }
  const probe = new Database(location, { timeout: 0 });
  try {
    while (Date.now() - started < timeoutMs) {
      try {
        probe.exec('BEGIN IMMEDIATE');
        probe.exec('ROLLBACK');
      } catch (error) {
        if ((error as { code?: string }).code === 'SQLITE_BUSY') return;
        throw error;
      }
      await sleep(15);
    }
    throw new Error(`no process took the write lock of ${location} within ${timeoutMs} ms`);
  } finally {
    probe.close();
  }
}

const STORED = 'SELECT COUNT(*) AS n FROM results r JOIN samples s ON s.id = r.sample WHERE s.sample_id = ';

/** storedResults on an open PostgreSQL connection (0 while the schema is not there yet). */
function storedOn(conn: SyncConnection, sampleId: string): number {
  try {
    return conn.query<{ n: number }>(`${STORED}$1`, [sampleId]).rows[0]!.n;
  } catch {
    return 0;
  }
}

/** How many committed results `sampleId` has (0 while the store or its schema is not there yet). */
export function storedResults(location: string, sampleId: string): number {
  if (isPostgresLocation(location)) {
    const conn = new SyncConnection(location);
    try {
      return storedOn(conn, sampleId);
    } finally {
      conn.close();
    }
  }
  if (!fs.existsSync(location)) return 0;
  const db = new Database(location, { readonly: true, timeout: 0 });
  try {
    return (db.prepare(`${STORED}?`).get(sampleId) as { n: number }).n;
  } catch {
    return 0;
  } finally {
    db.close();
  }
}

/**
 * Waits until a committed result for `sampleId` can be read from the store. On PostgreSQL one
 * connection asks again and again: opening one per look (a worker thread and a login, half a
 * second under load) would make the caller act long after the commit it waits for.
 */
export async function waitForStored(location: string, sampleId: string, timeoutMs: number): Promise<void> {
  const started = Date.now();
  const conn = isPostgresLocation(location) ? new SyncConnection(location) : undefined;
  const stored = (): number => (conn === undefined ? storedResults(location, sampleId) : storedOn(conn, sampleId));
  try {
    while (Date.now() - started < timeoutMs) {
      if (stored() > 0) return;
      await sleep(5);
    }
  } finally {
    conn?.close();
  }
  throw new Error(`no commit of ${sampleId} within ${timeoutMs} ms`);
}
