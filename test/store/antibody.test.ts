/**
 * S/P results in the store (migration 5): the measure, the ratio and the S/P cutoffs stored with
 * each row, the Ct cutoff columns left at 0 (no Ct is 0), a CHECK that keeps the two kinds apart,
 * and stores of version 4 still readable, their rows read as Ct. Files are made with the demo
 * scenario's exporters and run through the real pipeline; the values are the ones written.
 * SQLite: ALTER TABLE ADD COLUMN with a CHECK constraint (sqlite.org/lang_altertable.html).
 */
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { MIGRATION_FUNCTIONS, MIGRATIONS } from '../../src/store/migrations.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { sqliteStore } from '../helpers/storeSql.js';
import { sqliteOnly } from '../helpers/testStore.js';

const workspace = workspacesPerTest();

/** A CHECK refusal in either store's words: SQLite "CHECK constraint failed", PostgreSQL "violates check constraint". */
const CHECK_REFUSED = /CHECK constraint|check constraint/;

describe('antibody results in the store', () => {
  it('stores the S/P, its measure and the lab S/P cutoff, and reads them back current', async () => {
    const ws = workspace();
    await ws.drop(
      'ropes.csv',
      ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, [
        { sampleId: 'R1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
      ]),
    );
    const bytes = northfieldExport(
      [
        { sampleId: 'R1', assay: 'PRRSV', ct: 30.1, collectedOn: '2026-08-03' },
        { sampleId: 'R1', assay: 'PRRSV-AB', sp: 0.21, collectedOn: '2026-08-03' },
      ],
      '2026-08-06',
      1,
    );
    const outcome = await ws.drop('nvdl_a.csv', bytes);
    expect(outcome.receipt.rows).toMatchObject({ accepted: 2, rejected: 0 });
    const current = ws.ws().store.currentResults();
    expect(current.find((result) => result.assayId === 'PRRSV-AB')).toMatchObject({
      measure: 'sp-ratio',
      sp: 0.21,
      ct: null,
      ctRaw: '0.21',
      resultClass: 'negative',
      positiveAtOrAbove: 0.4,
      suspectAtOrAbove: null,
      positiveBelow: null,
      suspectBelow: null,
      cycleLimit: null,
    });
    expect(current.find((result) => result.assayId === 'PRRSV')).toMatchObject({
      measure: 'ct',
      ct: 30.1,
      sp: null,
      positiveBelow: 36,
      cycleLimit: 40,
      positiveAtOrAbove: null,
    });
    // As stored: 0 in the Ct cutoff columns of the S/P row (migration 5).
    const raw = ws
      .sql()
      .get(
        "SELECT positive_below AS p, suspect_below AS s, cycle_limit AS c FROM results_read WHERE measure = 'sp-ratio'",
      );
    expect(raw).toEqual({ p: 0, s: 0, c: 0 });
  });

  it('refuses, by CHECK, a row that mixes the measures', () => {
    const ws = workspace();
    const sql = ws.sql();
    sql.run(
      "INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (1, 'x.csv', 'x', 'results', '2026-08-03T00:00:00Z', 'accepted', 1)",
    );
    sql.run("INSERT INTO samples (id, sample_id) VALUES (1, 'S1')");
    sql.run("INSERT INTO reasons (id, text) VALUES (1, 'test')");
    const insert = (
      measure: string,
      ct: number | null,
      sp: number | null,
      cutoffs: [number, number, number],
      spCutoff: number | null,
      key: number,
    ) => {
      // The reading keeps the cutoffs with their measure; the result keeps Ct and S/P apart.
      sql.run(
        `INSERT INTO readings (id, lab_assay, measure, class, call_differs, positive_below, suspect_below, cycle_limit, positive_at_or_above)
         VALUES (?, 'ELISA', ?, 'negative', 0, ?, ?, ?, ?)`,
        key,
        measure,
        ...cutoffs,
        spCutoff,
      );
      sql.run(
        `INSERT INTO results (file_id, line, sample, lab_id, assay_id, ct, ct_raw, reason, content_key, sp, reading)
         VALUES (1, 2, 1, 'northfield', 'PRRSV-AB', ?, '', 1, ?, ?, ?)`,
        ct,
        key,
        sp,
        key,
      );
    };
    expect(() => insert('sp-ratio', null, 0.21, [0, 0, 0], 0.4, 1)).not.toThrow();
    // An S/P row with a Ct, with Ct cutoffs, or without its S/P cutoff; a Ct row with an S/P.
    expect(() => insert('sp-ratio', 0.21, 0.21, [0, 0, 0], 0.4, 2)).toThrow(CHECK_REFUSED);
    expect(() => insert('sp-ratio', null, 0.21, [36, 40, 40], 0.4, 3)).toThrow(CHECK_REFUSED);
    expect(() => insert('sp-ratio', null, 0.21, [0, 0, 0], null, 4)).toThrow(CHECK_REFUSED);
    expect(() => insert('ct', 30, 0.21, [36, 40, 40], null, 5)).toThrow(CHECK_REFUSED);
    expect(() => insert('elisa', null, 0.21, [0, 0, 0], 0.4, 6)).toThrow(CHECK_REFUSED);
  });

  sqliteOnly(() => {
    it('migrates a version-4 store: its rows read as Ct with their cutoffs, and the supersession view gains the S/P', () => {
      const ws = workspace();
      fs.mkdirSync(path.dirname(ws.paths.dbFile), { recursive: true });
      const v4 = new Database(ws.paths.dbFile);
      for (const [name, fn] of Object.entries(MIGRATION_FUNCTIONS)) v4.function(name, { deterministic: true }, fn);
      for (const migration of MIGRATIONS.slice(0, 4)) v4.exec(migration.sql);
      v4.pragma('user_version = 4');
      v4.prepare(
        "INSERT INTO files (id, name, sha256, kind, lab_id, received_at, status, byte_length) VALUES (1, 'nvdl_a.csv', 'a', 'results', 'northfield', '2026-08-06T00:00:00Z', 'accepted', 1)",
      ).run();
      v4.prepare("INSERT INTO samples (id, sample_id) VALUES (1, 'S1')").run();
      v4.prepare("INSERT INTO reasons (id, text) VALUES (1, 'Ct 30.1 below the positive cutoff 36')").run();
      v4.prepare(
        `INSERT INTO results (id, file_id, line, sample, lab_id, assay_id, lab_assay, ct, ct_raw, class, reason, positive_below, suspect_below, cycle_limit, content_key)
         VALUES (9, 1, 2, 1, 'northfield', 'PRRSV', 'PRRSV NA/EU RT-PCR', 30.1, '30.10', 'positive', 1, 36, 40, 40, 77)`,
      ).run();
      v4.close();
      const store = sqliteStore(ws.ws().store);
      expect(store.db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
      expect(MIGRATIONS.length).toBeGreaterThanOrEqual(5);
      expect(store.db.pragma('integrity_check', { simple: true })).toBe('ok');
      expect(store.currentResults()).toEqual([
        expect.objectContaining({
          id: 9,
          measure: 'ct',
          ct: 30.1,
          sp: null,
          positiveBelow: 36,
          suspectBelow: 40,
          cycleLimit: 40,
          positiveAtOrAbove: null,
          suspectAtOrAbove: null,
        }),
      ]);
      const columns = (
        store.db.prepare("SELECT name FROM pragma_table_info('supersession_readings')").all() as { name: string }[]
      ).map((column) => column.name);
      expect(columns).toEqual(expect.arrayContaining(['old_ct', 'new_ct', 'measure', 'old_sp', 'new_sp']));
    });
  });
});
