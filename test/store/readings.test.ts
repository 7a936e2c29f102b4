/**
 * How a result was read, kept once per reading (src/store/readings.ts, SQLite store migration 9):
 * the cache that finds each row's reading asks the store once per distinct reading and gives
 * every row the id of its own values, whatever the order rows come in; a version-8 store migrates
 * with every result, id and value as it was (read through results_read), its readings numbered in
 * the order their first result was stored, and the views reading the same rows.
 */
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { ResultRow } from '../../src/domain/records.js';
import { MIGRATION_FUNCTIONS, MIGRATIONS } from '../../src/store/migrations.js';
import { prepareRowStatements } from '../../src/store/rowStatements.js';
import { ReadingIds, readingValues, type ReadingValue } from '../../src/store/readings.js';
import { sqliteStore } from '../helpers/storeSql.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

/** A row whose reading fields come from `pick` (the rest fixed: they are not the reading's). */
function rowReadAs(pick: {
  labAssay: string;
  resultClass: ResultRow['resultClass'];
  labCall: string | null;
  statusWord: string | null;
  loadBand: string | null;
  callDiffers: boolean;
  sp: boolean;
}): ResultRow {
  return {
    line: 2,
    labId: 'northfield',
    sampleId: 'S1',
    assayId: pick.labAssay,
    labAssay: pick.labAssay,
    measure: pick.sp ? 'sp-ratio' : 'ct',
    ct: null,
    sp: null,
    ctRaw: '',
    labCall: pick.labCall,
    accession: null,
    collectedOn: null,
    reportedOn: null,
    reportStatus: pick.statusWord === null ? null : 'Final',
    control: null,
    resultClass: pick.resultClass,
    reason: 'r',
    loadBand: pick.loadBand,
    positiveBelow: pick.sp ? null : 36,
    suspectBelow: pick.sp ? null : 40,
    cycleLimit: pick.sp ? null : 40,
    positiveAtOrAbove: pick.sp ? 0.4 : null,
    suspectAtOrAbove: null,
    markedReissue: false,
    statusKind: pick.statusWord === null ? null : 'final',
    statusWord: pick.statusWord,
    labCallClass: null,
    callDiffers: pick.callDiffers,
    sampleIdAsWritten: null,
    contentKey: 1,
    encodedRope: undefined,
  };
}

const rowArbitrary = fc
  .record({
    labAssay: fc.constantFrom('PRRSV RT-PCR', 'IAV RT-PCR', 'PRRSV ELISA'),
    resultClass: fc.constantFrom('positive' as const, 'negative' as const, 'invalid' as const),
    labCall: fc.constantFrom(null, 'Positive', 'Negative'),
    statusWord: fc.constantFrom(null, 'final'),
    loadBand: fc.constantFrom(null, 'high'),
    callDiffers: fc.boolean(),
    sp: fc.boolean(),
  })
  .map(rowReadAs);

describe('the readings cache', () => {
  it('gives each row the id of its own values and asks the store once per distinct reading, in any order', () => {
    fc.assert(
      fc.property(fc.array(rowArbitrary, { maxLength: 200 }), fc.nat(200), (rows, forgetAt) => {
        // The store: ids in the order readings are first met.
        const stored = new Map<string, number>();
        let asked = 0;
        const readings = new ReadingIds((values: readonly ReadingValue[]) => {
          asked++;
          const key = JSON.stringify(values);
          let id = stored.get(key);
          if (id === undefined) stored.set(key, (id = stored.size + 1));
          return id;
        });
        let askedBeforeForget = 0;
        rows.forEach((row, index) => {
          if (index === forgetAt) {
            askedBeforeForget = asked;
            readings.forget();
          }
          // Each row given as a fresh object: the cache may not rely on a row being the same object.
          expect(readings.idOf({ ...row })).toBe(stored.get(JSON.stringify(readingValues(row))));
        });
        const distinct = (part: ResultRow[]) => new Set(part.map((row) => JSON.stringify(readingValues(row)))).size;
        if (forgetAt < rows.length)
          expect([askedBeforeForget, asked - askedBeforeForget]).toEqual([
            distinct(rows.slice(0, forgetAt)),
            distinct(rows.slice(forgetAt)),
          ]);
        else expect(asked).toBe(distinct(rows));
      }),
    );
  });

  it('writes an S/P reading with 0 in the Ct cutoff columns and its call difference as 0 or 1', () => {
    const values = readingValues(
      rowReadAs({
        labAssay: 'PRRSV ELISA',
        resultClass: 'negative',
        labCall: null,
        statusWord: null,
        loadBand: null,
        callDiffers: true,
        sp: true,
      }),
    );
    expect(values).toEqual([
      'PRRSV ELISA',
      'sp-ratio',
      'negative',
      null,
      null,
      1,
      null,
      null,
      null,
      null,
      null,
      0,
      0,
      0,
      0.4,
      null,
    ]);
  });
});

/** The columns of results at version 8, in their order. */
const V8_COLUMNS =
  'id, file_id, line, sample, lab_id, assay_id, lab_assay, ct, ct_raw, lab_call, accession, collected_on, reported_on, report_status, control, class, reason, load_band, positive_below, suspect_below, cycle_limit, call_differs, content_key, status_kind, status_word, lab_call_class, sample_id_as_written, sp, positive_at_or_above, suspect_at_or_above, measure';

/**
 * A version-8 store: Ct rows that share a reading and rows that differ from it in one field
 * each (a NULL among them), an S/P row, and a supersession between two readings.
 */
function version8Store(file: string): void {
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const db = new Database(file);
  for (const [name, fn] of Object.entries(MIGRATION_FUNCTIONS)) db.function(name, { deterministic: true }, fn);
  for (const migration of MIGRATIONS.slice(0, 8)) db.exec(migration.sql);
  db.pragma('user_version = 8');
  db.exec(`
    INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (1, 'f.csv', 'a', 'results', '2026-08-04T00:00:00Z', 'accepted', 1);
    INSERT INTO samples (id, sample_id) VALUES (1, 'S1'), (2, 'S2'), (3, 'S3');
    INSERT INTO reasons (id, text) VALUES (1, 'Ct below cutoff'), (2, 'not detected');
    INSERT INTO results (${V8_COLUMNS}) VALUES
      (20, 1, 2, 1, 'northfield', 'PRRSV', 'PRRSV RT-PCR', NULL, 'Undetermined', 'Negative', 'NV-1', '2026-08-03', '2026-08-05', 'Prelim', 'PASS', 'negative', 2, NULL, 36, 40, 40, 0, 11, 'preliminary', 'Prelim', 'negative', NULL, NULL, NULL, NULL, 'ct'),
      (21, 1, 3, 2, 'northfield', 'PRRSV', 'PRRSV RT-PCR', NULL, 'Undetermined', 'Negative', 'NV-2', '2026-08-03', '2026-08-05', 'Prelim', 'PASS', 'negative', 2, NULL, 36, 40, 40, 0, 12, 'preliminary', 'Prelim', 'negative', NULL, NULL, NULL, NULL, 'ct'),
      (22, 1, 4, 3, 'northfield', 'PRRSV', 'PRRSV RT-PCR', NULL, 'Undetermined', NULL, 'NV-3', '2026-08-03', '2026-08-05', 'Prelim', 'PASS', 'negative', 2, NULL, 36, 40, 40, 0, 13, 'preliminary', 'Prelim', NULL, 'S-3', NULL, NULL, NULL, 'ct'),
      (23, 1, 5, 2, 'northfield', 'PRRSV-AB', 'PRRSV ELISA', NULL, '0.52', NULL, 'NV-4', '2026-08-03', '2026-08-05', NULL, NULL, 'positive', 1, NULL, 0, 0, 0, 0, 14, NULL, NULL, NULL, NULL, 0.52, 0.4, NULL, 'sp-ratio'),
      (24, 1, 6, 1, 'northfield', 'PRRSV', 'PRRSV RT-PCR', 31.2, '31.2', 'Positive', 'NV-1', '2026-08-03', '2026-08-09', 'Amended', 'PASS', 'positive', 1, 'high', 36, 40, 40, 1, 15, 'corrected', 'Amended', 'positive', NULL, NULL, NULL, NULL, 'ct'),
      (25, 1, 7, 3, 'northfield', 'PRRSV', 'PRRSV RT-PCR', NULL, 'Undetermined', 'Negative', 'NV-5', '2026-08-03', '2026-08-05', 'Prelim', 'PASS', 'negative', 2, NULL, 36, 40, 40, 0, 16, 'preliminary', 'Prelim', 'negative', NULL, NULL, NULL, NULL, 'ct');
    INSERT INTO supersessions (old_result_id, new_result_id, reason, kind) VALUES (20, 24, 'corrected', 'correction');
  `);
  db.close();
}

const readAll = (db: Database.Database, sql: string) => db.prepare(sql).raw().all();

describe('store migration 9: readings', () => {
  it('migrates a version-8 store keeping every result, id, value, link and view row; readings in the order first stored', () => {
    const ws = workspace();
    version8Store(ws.paths.dbFile);
    const before = new Database(ws.paths.dbFile);
    const results = readAll(before, `SELECT ${V8_COLUMNS} FROM results ORDER BY id`);
    const links = readAll(before, 'SELECT * FROM supersession_readings');
    before.close();

    const { db } = sqliteStore(ws.ws().store);
    // Brought to the latest version; migration 10 after it starts an empty change log (a store
    // made before has none for its versions so far: its next build reads every rope).
    expect(db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
    expect(MIGRATIONS.length).toBeGreaterThanOrEqual(10);
    expect(db.prepare('SELECT count(*) FROM site_changes').pluck().get()).toBe(0);
    expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
    expect(db.pragma('foreign_key_check')).toEqual([]);
    expect(readAll(db, `SELECT ${V8_COLUMNS} FROM results_read ORDER BY id`)).toEqual(results);
    expect(readAll(db, 'SELECT * FROM supersession_readings')).toEqual(links);
    // Rows 20, 21 and 25 were read alike; 22 differs in its call (NULL), 23 is S/P, 24 corrected.
    expect(readAll(db, 'SELECT id, reading FROM results ORDER BY id')).toEqual([
      [20, 1],
      [21, 1],
      [22, 2],
      [23, 3],
      [24, 4],
      [25, 1],
    ]);
    expect(readAll(db, 'SELECT id, class, lab_call, measure FROM readings ORDER BY id')).toEqual([
      [1, 'negative', 'Negative', 'ct'],
      [2, 'negative', null, 'ct'],
      [3, 'positive', null, 'sp-ratio'],
      [4, 'positive', 'Positive', 'ct'],
    ]);
    // The results row keeps only its own values; the migration's look-up index is gone.
    expect((db.pragma('table_info(results)') as { name: string }[]).map((c) => c.name)).toEqual([
      'id',
      'file_id',
      'line',
      'sample',
      'lab_id',
      'assay_id',
      'ct',
      'ct_raw',
      'accession',
      'collected_on',
      'reported_on',
      'reason',
      'content_key',
      'sample_id_as_written',
      'sp',
      'reading',
    ]);
    expect(db.prepare("SELECT name FROM sqlite_master WHERE type = 'index' AND tbl_name = 'readings'").all()).toEqual(
      [],
    );
    // Ct and S/P stay apart on the row; the cutoffs stay with their measure on the reading.
    expect(() =>
      db.exec(
        "INSERT INTO results (file_id, line, sample, lab_id, assay_id, ct, ct_raw, reason, content_key, sp, reading) VALUES (1, 9, 1, 'northfield', 'PRRSV-AB', 30, '', 1, 99, 0.5, 3)",
      ),
    ).toThrow(/CHECK/);
    expect(() =>
      db.exec(
        "INSERT INTO readings (lab_assay, measure, class, call_differs, positive_below, suspect_below, cycle_limit, positive_at_or_above) VALUES ('PRRSV ELISA', 'sp-ratio', 'negative', 0, 36, 40, 40, 0.4)",
      ),
    ).toThrow(/CHECK/);
  });

  it('finds a stored reading by its values, NULLs included, and no other', () => {
    const ws = workspace();
    version8Store(ws.paths.dbFile);
    const { db } = sqliteStore(ws.ws().store);
    const { readingByValues } = prepareRowStatements(db);
    // The migrated reading of rows 20, 21 and 25 is found by its values (NULLs included).
    const read = db.prepare('SELECT * FROM readings WHERE id = 1').raw().get() as ReadingValue[];
    expect(readingByValues.get(read.slice(1))).toBe(1);
    const other = [...read.slice(1)];
    other[3] = 'Not detected';
    expect(readingByValues.get(other)).toBeUndefined();
  });
});
