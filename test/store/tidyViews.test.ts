/**
 * The store's read-only views for analysts (migration 7): a version-6 store migrates, the views
 * join a result to its pen and round once the outputs gave the store the rope's round, a pool's
 * result stands for each pen of the pool, a superseded report names the one in its place, and a
 * site's facts are replaced, never added to, on each build; the PostgreSQL store gives the same
 * rows as the SQLite store from the same facts.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FactValue, RopeRound, SiteFacts, TidyCells, TidyView } from '../../src/domain/store.js';
import { MIGRATION_FUNCTIONS, MIGRATIONS } from '../../src/store/migrations.js';
import { copyStore, openStoreSide } from '../../src/store/pg/copyStore.js';
import { SyncConnection } from '../../src/store/pg/syncConnection.js';
import { lockSitesPg, replaceSiteFactsPg, siteLockKey, tidyRowsPg } from '../../src/store/pg/tidyFacts.js';
import { Store } from '../../src/store/store.js';
import { readTidyView, replaceSiteFacts } from '../../src/store/tidyFacts.js';
import { freshDatabase, type TestDatabase } from '../helpers/pgServer.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { sqliteStore } from '../helpers/storeSql.js';

const workspace = workspacesPerTest();

/** A view's rows (the store gives cells) as objects keyed by column name, in the view's column order. */
function tidyRecords(cells: TidyCells): Record<string, unknown>[] {
  return cells.rows.map((row) => {
    const record: Record<string, unknown> = {};
    for (let column = 0; column < cells.names.length; column++) record[cells.names[column]!] = row[column];
    return record;
  });
}

/** A view's rows as objects keyed by column name. */
function viewRows(...args: Parameters<typeof readTidyView>): Record<string, unknown>[] {
  return tidyRecords(readTidyView(...args));
}

/** A version-6 store with one file, two ropes (P1 and P2 tested in pool POOL), the pool's result, and a second rope S3 reported twice. */
function version6Store(file: string): void {
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const db = new Database(file);
  for (const [name, fn] of Object.entries(MIGRATION_FUNCTIONS)) db.function(name, { deterministic: true }, fn);
  for (const migration of MIGRATIONS.slice(0, 6)) db.exec(migration.sql);
  db.pragma('user_version = 6');
  db.exec(`
    INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (1, 'f.csv', 'a', 'results', '2026-08-04T00:00:00Z', 'accepted', 1);
    INSERT INTO samples (id, sample_id) VALUES (1, 'P1'), (2, 'P2'), (3, 'POOL'), (4, 'S3');
    INSERT INTO reasons (id, text) VALUES (1, 'Ct below cutoff'), (2, 'not detected');
    INSERT INTO ropes (sample, site_id, barn_id, pen_id, hung_on, source, file_id, line, pool) VALUES
      (1, 'hollow-creek', 'F1', 'A1', '2026-08-03', 'sheet', 1, 2, 3),
      (2, 'hollow-creek', 'F1', 'A2', '2026-08-03', 'sheet', 1, 3, 3),
      (4, 'hollow-creek', 'F1', 'A3', '2026-08-03', 'sheet', 1, 4, NULL);
    INSERT INTO results (id, file_id, line, sample, lab_id, assay_id, lab_assay, ct, ct_raw, class, reason, positive_below, suspect_below, cycle_limit, content_key, collected_on) VALUES
      (10, 1, 2, 3, 'northfield', 'PRRSV', 'PRRSV', 27.1, '27.1', 'positive', 1, 35, 38, 40, 1, '2026-08-03'),
      (11, 1, 3, 4, 'northfield', 'PRRSV', 'PRRSV', NULL, 'Undetermined', 'negative', 2, 35, 38, 40, 2, '2026-08-03'),
      (12, 1, 4, 4, 'northfield', 'PRRSV', 'PRRSV', 33.5, '33.5', 'positive', 1, 35, 38, 40, 3, '2026-08-03');
    INSERT INTO supersessions (old_result_id, new_result_id, reason) VALUES (11, 12, 'corrected');
  `);
  db.close();
}

/** A rope of round 1 in barn F1 of the test site. */
function ropeRound(sampleId: string, penId: string, poolId: string | null = null) {
  return {
    sampleId,
    round: 1,
    roundId: 'r01-2026-08-03',
    roundStart: '2026-08-03',
    groupId: null,
    barnId: 'F1',
    penId,
    poolId,
  };
}

describe('the tidy views of the store', () => {
  it('migrate a version-6 store and join results to pens and rounds, one row per result and pen', () => {
    const ws = workspace();
    version6Store(ws.paths.dbFile);
    const { db } = sqliteStore(ws.ws().store);
    expect(db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
    expect(db.pragma('foreign_key_check')).toEqual([]);
    // Before any outputs were built, no rope has a round: the view is empty, not wrong.
    expect(viewRows(db, 'results', 'hollow-creek')).toEqual([]);
    replaceSiteFacts(db, 'hollow-creek', {
      ropeRounds: [ropeRound('P1', 'A1', 'POOL'), ropeRound('P2', 'A2', 'POOL'), ropeRound('S3', 'A3')],
      rounds: [],
      alerts: [],
    });
    const rows = viewRows(db, 'results', 'hollow-creek');
    expect(
      rows.map((row) => [row.pen, row.sample_id, row.pool, row.value, row.class, row.superseded_by, row.result_id]),
    ).toEqual([
      // The pool's one result stands for both of its pens (README, results.csv).
      ['A1', 'P1', 'POOL', 27.1, 'positive', null, 10],
      ['A2', 'P2', 'POOL', 27.1, 'positive', null, 10],
      // The first report of S3 was replaced by result 12 (supersessions row).
      ['A3', 'S3', null, null, 'negative', 12, 11],
      ['A3', 'S3', null, 33.5, 'positive', null, 12],
    ]);
    expect(rows.every((row) => row.round === 1 && row.date === '2026-08-03' && row.lab === 'northfield')).toBe(true);
    // A later build replaces the site's facts: no row twice.
    replaceSiteFacts(db, 'hollow-creek', { ropeRounds: [ropeRound('S3', 'A3')], rounds: [], alerts: [] });
    expect(viewRows(db, 'results', 'hollow-creek')).toHaveLength(2);
    expect(viewRows(db, 'results', 'hollow-creek', { from: '2026-08-04' })).toHaveLength(0);
    expect(viewRows(db, 'results', 'hollow-creek', { to: '2026-08-03' })).toHaveLength(2);
  });

  it('keep the first rope round given for a sample, whether its repeat comes in the same statement, a later one or the rows given one by one', () => {
    const ws = workspace();
    version6Store(ws.paths.dbFile);
    const { db } = sqliteStore(ws.ws().store);
    const sampleOf = (index: number) => `S${String(index).padStart(3, '0')}`;
    const rope = (index: number, penId: string) => ropeRound(sampleOf(index), penId);
    const ropeRounds = Array.from({ length: 120 }, (_, index) => rope(index, `P${index}`));
    // 123 rows: two statements of fifty, then 23 rows one by one; repeats in each part.
    ropeRounds.splice(30, 0, rope(10, 'ELSEWHERE'));
    ropeRounds.splice(70, 0, rope(20, 'ELSEWHERE'));
    ropeRounds.splice(115, 0, rope(60, 'ELSEWHERE'));
    expect(ropeRounds).toHaveLength(123);
    replaceSiteFacts(db, 'hollow-creek', { ropeRounds, rounds: [], alerts: [] });
    const stored = db
      .prepare('SELECT sample_id, pen_id FROM analysis_rope_rounds WHERE site_id = ? ORDER BY sample_id')
      .all('hollow-creek') as { sample_id: string; pen_id: string }[];
    expect(stored).toEqual(
      Array.from({ length: 120 }, (_, index) => ({ sample_id: sampleOf(index), pen_id: `P${index}` })),
    );
  });

  it('keep each connection its own statements: a second connection reads what the first wrote, and the first closed leaves it reading', () => {
    const ws = workspace();
    version6Store(ws.paths.dbFile);
    const { db } = sqliteStore(ws.ws().store);
    const other = new Database(ws.paths.dbFile);
    try {
      const rope = { round: 1, roundId: 'r01-2026-08-03', roundStart: '2026-08-03', groupId: null, barnId: 'F1' };
      // Both connections read (and so keep the view's statement) before any facts are written.
      expect(viewRows(db, 'results', 'hollow-creek')).toEqual([]);
      expect(viewRows(other, 'results', 'hollow-creek')).toEqual([]);
      replaceSiteFacts(db, 'hollow-creek', {
        ropeRounds: [{ ...rope, sampleId: 'S3', penId: 'A3', poolId: null }],
        rounds: [],
        alerts: [],
      });
      // S3's two reports (the first superseded by the second): inserted in version6Store above.
      expect(viewRows(other, 'results', 'hollow-creek').map((row) => row.result_id)).toEqual([11, 12]);
      db.close();
      replaceSiteFacts(other, 'hollow-creek', {
        ropeRounds: [{ ...rope, sampleId: 'P1', penId: 'A1', poolId: 'POOL' }],
        rounds: [],
        alerts: [],
      });
      expect(viewRows(other, 'results', 'hollow-creek').map((row) => [row.pen, row.result_id])).toEqual([['A1', 10]]);
      expect(() => viewRows(db, 'results', 'hollow-creek')).toThrow(/not open/);
    } finally {
      other.close();
    }
  });
});

/**
 * The PostgreSQL store's tidy facts against the SQLite store's, on the same inputs: the demo's
 * store (SQLite, the reference implementation) copied whole into a fresh PostgreSQL database
 * (`store copy`, whose digests check the copy), then the facts the demo's outputs gave SQLite
 * given again to PostgreSQL through replaceSiteFactsPg; each view must give the same rows in the
 * same order (the order the SQLite views give: src/store/tidyFacts.ts TIDY_ORDER).
 */
describe('the tidy facts on PostgreSQL, against SQLite on the same inputs', () => {
  let dir: string;
  let sqlite: Store;
  let pgDb: TestDatabase;
  let conn: SyncConnection;
  const sites = ['hollow-creek', 'tamsin-ridge'];

  beforeAll(async () => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-tidy-pg-'));
    const demo = await runCli(['demo'], { cwd: dir });
    expect(demo.code, demo.stderr).toBe(0);
    const file = path.join(dir, 'data', 'ropewatch.db');
    pgDb = await freshDatabase('tidy');
    const source = openStoreSide({ kind: 'sqlite', file }, 'source');
    const target = openStoreSide({ kind: 'postgres', url: pgDb.url }, 'target');
    try {
      copyStore(source, target);
    } finally {
      target.close();
      source.close();
    }
    sqlite = new Store(file, { create: false });
    conn = new SyncConnection(pgDb.url);
  }, 300_000);

  afterAll(async () => {
    conn?.close();
    sqlite?.close();
    await pgDb?.drop();
    if (dir !== undefined) fs.rmSync(dir, { recursive: true, force: true });
  });

  /** The facts a build gave the SQLite store for a site's rounds from `fromRound` on, as SiteFacts. */
  function sqliteFacts(siteId: string, fromRound = 1): SiteFacts {
    const ropeRounds = sqlite.db
      .prepare(
        `SELECT sample_id AS sampleId, round, round_id AS roundId, round_start AS roundStart, group_id AS groupId,
                barn_id AS barnId, pen_id AS penId, pool_id AS poolId
           FROM analysis_rope_rounds WHERE site_id = ? AND round >= ? ORDER BY round, sample_id`,
      )
      .all(siteId, fromRound) as RopeRound[];
    const rows = (table: string) =>
      sqlite.db
        .prepare(`SELECT * FROM ${table} WHERE site = ? AND round >= ? ORDER BY rowid`)
        .all(siteId, fromRound) as Record<string, FactValue>[];
    return { ropeRounds, rounds: rows('analysis_rounds'), alerts: rows('analysis_alerts') };
  }

  const views: TidyView[] = ['results', 'rounds', 'alerts'];

  it('gives every view the same rows in the same order once the facts are replaced', () => {
    for (const siteId of sites) {
      const facts = sqliteFacts(siteId);
      // The demo's facts are not empty (else the comparison proves nothing).
      expect(facts.ropeRounds.length, siteId).toBeGreaterThan(50);
      expect(facts.rounds.length, siteId).toBeGreaterThan(5);
      replaceSiteFactsPg(conn, siteId, facts);
      for (const view of views) {
        const want = tidyRecords(sqlite.tidyRows(view, siteId));
        expect(want.length, `${siteId} ${view}`).toBeGreaterThan(0);
        expect(tidyRecords(tidyRowsPg(conn, view, siteId)), `${siteId} ${view}`).toEqual(want);
        // The cells in the same column order as SQLite's.
        expect(tidyRowsPg(conn, view, siteId).names, `${siteId} ${view}`).toEqual(sqlite.tidyRows(view, siteId).names);
      }
    }
    const alerts = sites.flatMap((siteId) => tidyRecords(sqlite.tidyRows('alerts', siteId)));
    expect(alerts.length).toBeGreaterThan(0);
  });

  it('replaces the rounds from a given round on and keeps the earlier ones, as SQLite does', () => {
    const siteId = 'hollow-creek';
    // Round 4 on given again, without the last round's facts: both stores drop them alike.
    const later = sqliteFacts(siteId, 4);
    const lastRound = Math.max(...later.ropeRounds.map((rope) => rope.round));
    const cut: SiteFacts = {
      ropeRounds: later.ropeRounds.filter((rope) => rope.round < lastRound),
      rounds: later.rounds.filter((row) => Number(row.round) < lastRound),
      alerts: later.alerts.filter((row) => Number(row.round) < lastRound),
    };
    replaceSiteFactsPg(conn, siteId, cut, 4);
    sqlite.replaceSiteFacts(siteId, cut, 4);
    for (const view of views) {
      const want = tidyRecords(sqlite.tidyRows(view, siteId));
      expect(want.some((row) => row.round === lastRound)).toBe(false);
      // Round 1 kept its rows (it raised no alert in the demo).
      if (view !== 'alerts') expect(want.some((row) => row.round === 1)).toBe(true);
      expect(tidyRecords(tidyRowsPg(conn, view, siteId)), view).toEqual(want);
      for (const range of [{ from: '2026-09-01' }, { to: '2026-09-01' }, { fromRound: 3 }]) {
        expect(tidyRecords(tidyRowsPg(conn, view, siteId, range)), `${view} ${JSON.stringify(range)}`).toEqual(
          tidyRecords(sqlite.tidyRows(view, siteId, range)),
        );
      }
    }
  });

  it('keeps the first of two rope rounds given for one sample, as SQLite keeps it', () => {
    const siteId = 'tamsin-ridge';
    const facts = sqliteFacts(siteId);
    const first = facts.ropeRounds[0]!;
    const twice: SiteFacts = {
      ...facts,
      ropeRounds: [first, { ...first, penId: 'ELSEWHERE' }, ...facts.ropeRounds.slice(1)],
    };
    replaceSiteFactsPg(conn, siteId, twice);
    sqlite.replaceSiteFacts(siteId, twice);
    const pens = (rows: Record<string, unknown>[]) =>
      rows.filter((row) => row.sample_id === first.sampleId).map((row) => row.pen);
    expect(pens(tidyRecords(tidyRowsPg(conn, 'results', siteId)))).not.toContain('ELSEWHERE');
    expect(tidyRecords(tidyRowsPg(conn, 'results', siteId))).toEqual(tidyRecords(sqlite.tidyRows('results', siteId)));
  });

  it('holds a site lock against another session until it is let go (PostgreSQL 17 documentation, "Advisory Locks")', () => {
    const other = new SyncConnection(pgDb.url);
    try {
      const tryLock = (siteId: string) => {
        const got = other.query<{ got: boolean }>('SELECT pg_try_advisory_lock($1, $2) AS got', [
          0x726f_7065,
          siteLockKey(siteId),
        ]).rows[0]!.got;
        if (got) other.query('SELECT pg_advisory_unlock($1, $2)', [0x726f_7065, siteLockKey(siteId)]);
        return got;
      };
      const release = lockSitesPg(conn, ['tamsin-ridge', 'hollow-creek']);
      expect(tryLock('hollow-creek')).toBe(false);
      expect(tryLock('tamsin-ridge')).toBe(false);
      expect(tryLock('another-site')).toBe(true);
      release();
      release();
      expect(tryLock('hollow-creek')).toBe(true);
      // A session that ended let its locks go with it: letting go afterwards throws nothing over the error that ended it.
      const ending = new SyncConnection(pgDb.url);
      const releaseEnded = lockSitesPg(ending, ['hollow-creek']);
      expect(tryLock('hollow-creek')).toBe(false);
      ending.close();
      expect(releaseEnded).not.toThrow();
      expect(tryLock('hollow-creek')).toBe(true);
      expect(tryLock('tamsin-ridge')).toBe(true);
      // Session-level locks count up: none is left held by the session that let go.
      expect(
        conn.query<{ n: number }>(
          "SELECT count(*)::int AS n FROM pg_locks WHERE locktype = 'advisory' AND pid = pg_backend_pid()",
        ).rows[0]!.n,
      ).toBe(0);
    } finally {
      other.close();
    }
  });
});
