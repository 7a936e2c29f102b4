/**
 * PostgreSQL migration 2: how a result was read moves to `readings`. The same rows, stored at
 * PostgreSQL version 1 and at SQLite version 8, come out of the PostgreSQL migration as they come
 * out of the SQLite store's migration 9: every value kept (read back through results_read), the
 * views' rows unchanged, readings numbered in the order their first result was stored with NULLs
 * grouped together, and the two stores' tables row for row alike.
 */
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MIGRATION_FUNCTIONS, MIGRATIONS } from '../../../src/store/migrations.js';
import { migratePg, PG_MIGRATIONS, pgSchemaVersion } from '../../../src/store/pg/migrations.js';
import { SyncConnection } from '../../../src/store/pg/syncConnection.js';
import { freshDatabase, type TestDatabase } from '../../helpers/pgServer.js';

/** The columns results had before the readings moved out, in their order. */
const OLD_RESULT_COLUMNS = [
  'id',
  'file_id',
  'line',
  'sample',
  'lab_id',
  'assay_id',
  'lab_assay',
  'ct',
  'ct_raw',
  'lab_call',
  'accession',
  'collected_on',
  'reported_on',
  'report_status',
  'control',
  'class',
  'reason',
  'load_band',
  'positive_below',
  'suspect_below',
  'cycle_limit',
  'call_differs',
  'content_key',
  'status_kind',
  'status_word',
  'lab_call_class',
  'sample_id_as_written',
  'sp',
  'positive_at_or_above',
  'suspect_at_or_above',
  'measure',
].join(', ');

/**
 * Ct rows with and without a lab call, status and load band; S/P rows with and without a suspect
 * cutoff; a reading met again after others (17 reads as 10); two supersessions, one of S/P rows;
 * three ropes in the tidy tables, one tested in a pool.
 */
const ROWS = `
  INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (1, 'f.csv', 'a', 'results', '2026-08-04T00:00:00Z', 'accepted', 1);
  INSERT INTO samples (id, sample_id) VALUES (1, 'S1'), (2, 'S2'), (3, 'POOL'), (4, 'S4');
  INSERT INTO reasons (id, text) VALUES (1, 'Ct below cutoff'), (2, 'not detected'), (3, 'S/P at or above cutoff');
  INSERT INTO results (id, file_id, line, sample, lab_id, assay_id, lab_assay, ct, ct_raw, lab_call, accession, collected_on, reported_on,
      report_status, control, class, reason, load_band, positive_below, suspect_below, cycle_limit, call_differs, content_key,
      status_kind, status_word, lab_call_class, sample_id_as_written, sp, positive_at_or_above, suspect_at_or_above, measure) VALUES
    (10, 1, 2, 1, 'northfield', 'PRRSV', 'PRRSV', NULL, 'Undetermined', 'Negative', 'C-1', '2026-08-03', '2026-08-05',
      'Prelim', NULL, 'negative', 2, NULL, 35, 38, 40, 0, 1, 'preliminary', 'Prelim', 'negative', NULL, NULL, NULL, NULL, 'ct'),
    (11, 1, 3, 1, 'northfield', 'PRRSV', 'PRRSV', 33.5, '33.5', NULL, NULL, '2026-08-03', NULL,
      NULL, NULL, 'positive', 1, NULL, 35, 38, 40, 0, 2, 'corrected', 'Amended', NULL, 's1', NULL, NULL, NULL, 'ct'),
    (12, 1, 4, 2, 'northfield', 'PRRSV-AB', 'PRRSV X3', NULL, '0.52', NULL, NULL, '2026-08-03', NULL,
      NULL, NULL, 'positive', 3, NULL, 0, 0, 0, 0, 3, NULL, NULL, NULL, NULL, 0.52, 0.4, NULL, 'sp-ratio'),
    (13, 1, 5, 2, 'northfield', 'PRRSV', 'PRRSV', 31.25, '31.25', NULL, NULL, '2026-08-03', NULL,
      NULL, NULL, 'positive', 1, NULL, 35, 38, 40, 0, 4, 'corrected', 'Amended', NULL, NULL, NULL, NULL, NULL, 'ct'),
    (14, 1, 6, 3, 'northfield', 'PRRSV-AB', 'PRRSV X3', NULL, '0.3', NULL, NULL, '2026-08-03', NULL,
      NULL, NULL, 'negative', 2, NULL, 0, 0, 0, 0, 5, NULL, NULL, NULL, NULL, 0.3, 0.4, 0.35, 'sp-ratio'),
    (15, 1, 7, 3, 'northfield', 'PRRSV-AB', 'PRRSV X3', NULL, '0.38', NULL, NULL, '2026-08-03', '2026-08-09',
      NULL, NULL, 'suspect', 3, NULL, 0, 0, 0, 0, 6, NULL, NULL, NULL, NULL, 0.38, 0.4, 0.35, 'sp-ratio'),
    (16, 1, 8, 1, 'northfield', 'PRRSV', 'PRRSV', 20, '20.0', 'POS', NULL, '2026-08-03', NULL,
      'Final', 'IPC ok', 'positive', 1, 'high', 35, 38, 40, 1, 7, 'final', 'Final', 'suspect', NULL, NULL, NULL, NULL, 'ct'),
    (17, 1, 9, 4, 'northfield', 'PRRSV', 'PRRSV', NULL, 'Undetermined', 'Negative', 'C-2', '2026-08-03', '2026-08-05',
      'Prelim', NULL, 'negative', 2, NULL, 35, 38, 40, 0, 8, 'preliminary', 'Prelim', 'negative', NULL, NULL, NULL, NULL, 'ct');
  INSERT INTO supersessions (old_result_id, new_result_id, reason, kind) VALUES
    (10, 11, 'corrected', 'correction'), (14, 15, 'reissued', 'reissue');
  INSERT INTO analysis_rope_rounds (site_id, sample_id, round, round_id, round_start, group_id, barn_id, pen_id, pool_id) VALUES
    ('hollow-creek', 'S1', 1, 'R1', '2026-08-03', NULL, 'F1', 'A1', NULL),
    ('hollow-creek', 'S2', 1, 'R1', '2026-08-03', 'G1', 'F1', 'A2', NULL),
    ('hollow-creek', 'S4', 1, 'R1', '2026-08-03', NULL, 'F1', 'A3', 'POOL');
`;

/** The readings the rows make, in id order (the columns of readings after its id). */
const EXPECTED_READINGS = [
  [
    'PRRSV',
    'ct',
    'negative',
    'Negative',
    'negative',
    0,
    'Prelim',
    'preliminary',
    'Prelim',
    null,
    null,
    35,
    38,
    40,
    null,
    null,
  ],
  ['PRRSV', 'ct', 'positive', null, null, 0, null, 'corrected', 'Amended', null, null, 35, 38, 40, null, null],
  ['PRRSV X3', 'sp-ratio', 'positive', null, null, 0, null, null, null, null, null, 0, 0, 0, 0.4, null],
  ['PRRSV X3', 'sp-ratio', 'negative', null, null, 0, null, null, null, null, null, 0, 0, 0, 0.4, 0.35],
  ['PRRSV X3', 'sp-ratio', 'suspect', null, null, 0, null, null, null, null, null, 0, 0, 0, 0.4, 0.35],
  ['PRRSV', 'ct', 'positive', 'POS', 'suspect', 1, 'Final', 'final', 'Final', 'IPC ok', 'high', 35, 38, 40, null, null],
];

let db: TestDatabase;
let conn: SyncConnection;
let lite: Database.Database;
const before = { results: [] as unknown[][], supersessions: [] as unknown[][], tidy: [] as unknown[][] };
let applied: number[];

/** Rows as arrays of values, in the order of the query's columns. */
function pgRows(sql: string): unknown[][] {
  return conn.query(sql).rows.map((row) => Object.values(row));
}

function liteRows(sql: string): unknown[][] {
  return lite.prepare(sql).raw(true).all() as unknown[][];
}

const SUPERSESSIONS = 'SELECT * FROM supersession_readings ORDER BY old_result_id';
const TIDY = 'SELECT * FROM tidy_results ORDER BY result_id, sample_id';

beforeAll(async () => {
  db = await freshDatabase('readings');
  conn = new SyncConnection(db.url);
  migratePg(conn, PG_MIGRATIONS.slice(0, 1));
  conn.transaction(() => conn.query(ROWS));
  before.results = pgRows(`SELECT ${OLD_RESULT_COLUMNS} FROM results ORDER BY id`);
  before.supersessions = pgRows(SUPERSESSIONS);
  before.tidy = pgRows(TIDY);
  applied = migratePg(conn, PG_MIGRATIONS.slice(0, 2));

  lite = new Database(':memory:');
  for (const [name, fn] of Object.entries(MIGRATION_FUNCTIONS)) lite.function(name, { deterministic: true }, fn);
  for (const migration of MIGRATIONS.slice(0, 8)) lite.exec(migration.sql);
  lite.exec(ROWS);
  lite.pragma('foreign_keys = OFF');
  lite.exec(MIGRATIONS[8]!.sql);
  lite.pragma('foreign_keys = ON');
});

afterAll(async () => {
  conn?.close();
  lite?.close();
  await db?.drop();
});

describe('PostgreSQL migration 2: the readings', () => {
  it('applies to a version-1 store', () => {
    expect(applied).toEqual([2]);
    expect(pgSchemaVersion(conn)).toBe(2);
  });

  it('keeps every value of every result, read back through results_read', () => {
    expect(before.results).toHaveLength(8);
    expect(pgRows(`SELECT ${OLD_RESULT_COLUMNS} FROM results_read ORDER BY id`)).toEqual(before.results);
  });

  it('keeps the rows of supersession_readings (Ct and S/P links, NULL reading fields) and tidy_results', () => {
    expect(before.supersessions).toHaveLength(2);
    expect(before.tidy.length).toBeGreaterThan(0);
    expect(pgRows(SUPERSESSIONS)).toEqual(before.supersessions);
    expect(pgRows(TIDY)).toEqual(before.tidy);
  });

  it('numbers the readings by their first result, NULLs grouped together', () => {
    expect(pgRows('SELECT * FROM readings ORDER BY id')).toEqual(
      EXPECTED_READINGS.map((values, i) => [i + 1, ...values]),
    );
    expect(pgRows('SELECT id, reading FROM results ORDER BY id')).toEqual([
      [10, 1],
      [11, 2],
      [12, 3],
      [13, 2],
      [14, 4],
      [15, 5],
      [16, 6],
      [17, 1],
    ]);
  });

  it('leaves results and readings as the SQLite store migration 9 does, row for row', () => {
    for (const table of ['readings', 'results'])
      expect(pgRows(`SELECT * FROM ${table} ORDER BY id`), table).toEqual(
        liteRows(`SELECT * FROM ${table} ORDER BY id`),
      );
    expect(pgRows(SUPERSESSIONS)).toEqual(liteRows(SUPERSESSIONS));
    expect(pgRows(TIDY)).toEqual(liteRows(TIDY));
  });

  it('hands out the next reading id after the ones it numbered', () => {
    conn.query('BEGIN');
    try {
      const made = conn.query<{ id: number }>(
        `INSERT INTO readings (lab_assay, measure, class, call_differs, positive_below, suspect_below, cycle_limit)
         VALUES ('PRRSV', 'ct', 'invalid', 0, 35, 38, 40) RETURNING id`,
      ).rows;
      expect(made).toEqual([{ id: EXPECTED_READINGS.length + 1 }]);
    } finally {
      conn.query('ROLLBACK');
    }
  });

  it('refuses a result with both a Ct and an S/P, or without a reading', () => {
    for (const [values, code] of [
      ['(18, 1, 10, 1, 30, 1.2, 1)', '23514'],
      ['(18, 1, 10, 1, 30, NULL, NULL)', '23502'],
      ['(18, 1, 10, 1, 30, NULL, 99)', '23503'],
    ] as const) {
      expect(() =>
        conn.query(
          `INSERT INTO results (id, file_id, line, sample, ct, sp, reading, lab_id, assay_id, ct_raw, reason, content_key)
           VALUES ${values.slice(0, -1)}, 'l', 'a', 'x', 1, 99)`,
        ),
      ).toThrow(expect.objectContaining({ code }));
    }
  });
});
