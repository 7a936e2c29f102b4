/**
 * The store's read-only views for analysts (migration 7): a version-6 store migrates, the views
 * join a result to its pen and round once the outputs gave the store the rope's round, a pool's
 * result stands for each pen of the pool, a superseded report names the one in its place, and a
 * site's facts are replaced, never added to, on each build.
 */
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { MIGRATION_FUNCTIONS, MIGRATIONS } from '../../src/store/migrations.js';
import { readTidyView, replaceSiteFacts } from '../../src/store/tidyFacts.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

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

describe('the tidy views of the store', () => {
  it('migrate a version-6 store and join results to pens and rounds, one row per result and pen', () => {
    const ws = workspace();
    version6Store(ws.paths.dbFile);
    const { db } = ws.ws().store;
    expect(db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
    expect(db.pragma('foreign_key_check')).toEqual([]);
    // Before any outputs were built, no rope has a round: the view is empty, not wrong.
    expect(readTidyView(db, 'results', 'hollow-creek')).toEqual([]);
    const rope = (sampleId: string, penId: string, poolId: string | null) => ({
      sampleId,
      round: 1,
      roundId: 'r01-2026-08-03',
      roundStart: '2026-08-03',
      groupId: null,
      barnId: 'F1',
      penId,
      poolId,
    });
    replaceSiteFacts(db, 'hollow-creek', {
      ropeRounds: [rope('P1', 'A1', 'POOL'), rope('P2', 'A2', 'POOL'), rope('S3', 'A3', null)],
      rounds: [],
      alerts: [],
    });
    const rows = readTidyView(db, 'results', 'hollow-creek');
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
    replaceSiteFacts(db, 'hollow-creek', { ropeRounds: [rope('S3', 'A3', null)], rounds: [], alerts: [] });
    expect(readTidyView(db, 'results', 'hollow-creek')).toHaveLength(2);
    expect(readTidyView(db, 'results', 'hollow-creek', { from: '2026-08-04' })).toHaveLength(0);
    expect(readTidyView(db, 'results', 'hollow-creek', { to: '2026-08-03' })).toHaveLength(2);
  });
});
