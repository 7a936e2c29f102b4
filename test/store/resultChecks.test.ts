/**
 * Migration 8: the results table's CHECKs on lists of words, written as equalities joined by OR
 * (since migration 9 on the readings a result names). A version-7 store migrates with every row,
 * id and column as it was (read through results_read since migration 9), the views read the same
 * rows, the CHECKs refuse what they refused before, and storing a result no longer opens a
 * temporary table (SQLite's bytecode: an `x IN (a, b, c)` of more than two constants is coded with
 * OpenEphemeral, sqlite.org/opcode.html; sqlite.org/lang_altertable.html for the rebuild).
 */
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { MIGRATION_FUNCTIONS, MIGRATIONS } from '../../src/store/migrations.js';
import { prepareRowStatements } from '../../src/store/rowStatements.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { sqliteStore } from '../helpers/storeSql.js';
import { wideResultInserter } from '../helpers/wideResults.js';

const workspace = workspacesPerTest();

/** A version-7 store: one file, two samples, three results (one S/P), one supersession. */
function version7Store(file: string): void {
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const db = new Database(file);
  for (const [name, fn] of Object.entries(MIGRATION_FUNCTIONS)) db.function(name, { deterministic: true }, fn);
  for (const migration of MIGRATIONS.slice(0, 7)) db.exec(migration.sql);
  db.pragma('user_version = 7');
  db.exec(`
    INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (1, 'f.csv', 'a', 'results', '2026-08-04T00:00:00Z', 'accepted', 1);
    INSERT INTO samples (id, sample_id) VALUES (1, 'S1'), (2, 'S2');
    INSERT INTO reasons (id, text) VALUES (1, 'Ct below cutoff'), (2, 'not detected');
    INSERT INTO ropes (sample, site_id, barn_id, pen_id, hung_on, source, file_id, line) VALUES
      (1, 'hollow-creek', 'F1', 'A1', '2026-08-03', 'sheet', 1, 2);
    INSERT INTO results (id, file_id, line, sample, lab_id, assay_id, lab_assay, ct, ct_raw, lab_call, class, reason, positive_below, suspect_below,
        cycle_limit, content_key, collected_on, status_kind, status_word, lab_call_class) VALUES
      (10, 1, 2, 1, 'northfield', 'PRRSV', 'PRRSV', NULL, 'Undetermined', 'Negative', 'negative', 2, 35, 38, 40, 4503599627370495, '2026-08-03', 'preliminary', 'Prelim', 'negative'),
      (11, 1, 3, 1, 'northfield', 'PRRSV', 'PRRSV', 33.5, '33.5', NULL, 'positive', 1, 35, 38, 40, 2, '2026-08-03', 'corrected', 'Amended', NULL);
    INSERT INTO results (id, file_id, line, sample, lab_id, assay_id, lab_assay, ct_raw, class, reason, positive_below, suspect_below, cycle_limit,
        content_key, measure, sp, positive_at_or_above, suspect_at_or_above) VALUES
      (12, 1, 4, 2, 'northfield', 'PRRSV-AB', 'PRRSV X3', '0.52', 'positive', 1, 0, 0, 0, 3, 'sp-ratio', 0.52, 0.4, NULL);
    INSERT INTO supersessions (old_result_id, new_result_id, reason, kind) VALUES (10, 11, 'corrected', 'correction');
  `);
  db.close();
}

const readAll = (db: Database.Database, sql: string) => db.prepare(sql).raw().all();

describe('migration 8: the results CHECKs as equalities', () => {
  it('migrates a version-7 store keeping every result, column order, link and view row', () => {
    const ws = workspace();
    version7Store(ws.paths.dbFile);
    const before = new Database(ws.paths.dbFile);
    const columns = before.pragma('table_info(results)') as { name: string }[];
    const results = readAll(before, 'SELECT * FROM results ORDER BY id');
    const readings = readAll(before, 'SELECT * FROM supersession_readings');
    before.close();

    const { db } = sqliteStore(ws.ws().store);
    expect(db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
    expect(MIGRATIONS.length).toBeGreaterThanOrEqual(8);
    expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
    expect(db.pragma('foreign_key_check')).toEqual([]);
    // The columns a result had, in their order, then the reading it names (migration 9).
    expect((db.pragma('table_info(results_read)') as { name: string }[]).map((c) => c.name)).toEqual([
      ...columns.map((c) => c.name),
      'reading',
    ]);
    const names = columns.map((c) => c.name).join(', ');
    expect(readAll(db, `SELECT ${names} FROM results_read ORDER BY id`)).toEqual(results);
    expect(readAll(db, 'SELECT * FROM supersession_readings')).toEqual(readings);
    expect(results).toHaveLength(3);
    // The natural key is still UNIQUE: the same row again is a duplicate, not a second row.
    const insert = wideResultInserter(db, { ignoreDuplicates: true });
    expect(
      insert({
        file_id: 1,
        line: 9,
        sample: 1,
        lab_id: 'northfield',
        assay_id: 'PRRSV',
        lab_assay: 'PRRSV',
        ct_raw: '33.5',
        class: 'positive',
        reason: 1,
        positive_below: 35,
        suspect_below: 38,
        cycle_limit: 40,
        content_key: 2,
      }),
    ).toBe(0);
  });

  it('refuses, by CHECK, the words the lists did not hold, and lets NULL through where the column allows it', () => {
    const ws = workspace();
    const { db } = sqliteStore(ws.ws().store);
    db.exec(`INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (1, 'f.csv', 'a', 'results', 'x', 'accepted', 1);
             INSERT INTO samples (id, sample_id) VALUES (1, 'S1'); INSERT INTO reasons (id, text) VALUES (1, 'r');`);
    const insert = (resultClass: string | null, statusKind: string | null, callClass: string | null) =>
      db
        .prepare(
          `INSERT INTO readings (lab_assay, measure, class, call_differs, positive_below, suspect_below, cycle_limit, status_kind, lab_call_class)
           VALUES ('a', 'ct', ?, 0, 35, 38, 40, ?, ?)`,
        )
        .run(resultClass, statusKind, callClass);
    // The lists of migrations 1 and 4, word by word.
    for (const word of ['positive', 'suspect', 'negative', 'invalid'])
      expect(() => insert(word, null, word)).not.toThrow();
    for (const word of ['preliminary', 'final', 'corrected'])
      expect(() => insert('negative', word, null)).not.toThrow();
    expect(() => insert('Positive', null, null)).toThrow(/CHECK/);
    expect(() => insert('unknown', null, null)).toThrow(/CHECK/);
    expect(() => insert(null, null, null)).toThrow(/NOT NULL/);
    expect(() => insert('negative', 'draft', null)).toThrow(/CHECK/);
    expect(() => insert('negative', null, 'detected')).toThrow(/CHECK/);
    expect(() => insert('negative', '', null)).toThrow(/CHECK/);
  });

  it('stores a result without opening a temporary table (no OpenEphemeral in the insert)', () => {
    const ws = workspace();
    const { db } = sqliteStore(ws.ws().store);
    const { insertResult } = prepareRowStatements(db);
    const parameters = insertResult.source.split('?').length - 1;
    expect(parameters).toBe(15);
    const program = db.prepare(`EXPLAIN ${insertResult.source}`).all(...Array<null>(parameters).fill(null)) as {
      opcode: string;
    }[];
    expect(program.length).toBeGreaterThan(0);
    expect(program.filter((op) => op.opcode === 'OpenEphemeral')).toEqual([]);
  });
});
