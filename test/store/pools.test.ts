/**
 * Pooled ropes in the store (migration 6): the pool a rope was tested in, the pool a planned rope
 * goes into, stores of version 5 still readable (their ropes tested on their own), and a planned
 * pooled rope counted as hung when its pool's result arrives. SQLite: ALTER TABLE ADD COLUMN
 * with a REFERENCES clause and a NULL default (sqlite.org/lang_altertable.html).
 */
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { northfieldExport } from '../../src/demo/scenario.js';
import { MIGRATION_FUNCTIONS, MIGRATIONS } from '../../src/store/migrations.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { sqliteStore } from '../helpers/storeSql.js';
import { sqliteOnly } from '../helpers/testStore.js';

const workspace = workspacesPerTest();

describe('pooled ropes in the store', () => {
  sqliteOnly(() => {
    it('migrates a version-5 store: its ropes read as tested on their own', () => {
      const ws = workspace();
      fs.mkdirSync(path.dirname(ws.paths.dbFile), { recursive: true });
      const v5 = new Database(ws.paths.dbFile);
      for (const [name, fn] of Object.entries(MIGRATION_FUNCTIONS)) v5.function(name, { deterministic: true }, fn);
      for (const migration of MIGRATIONS.slice(0, 5)) v5.exec(migration.sql);
      v5.pragma('user_version = 5');
      v5.prepare(
        "INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (1, 'ropes.csv', 'a', 'ropes', '2026-08-04T00:00:00Z', 'accepted', 1)",
      ).run();
      v5.prepare("INSERT INTO samples (id, sample_id) VALUES (1, 'S1')").run();
      v5.prepare(
        "INSERT INTO ropes (sample, site_id, barn_id, pen_id, hung_on, source, file_id, line) VALUES (1, 'hollow-creek', 'F1', 'A1', '2026-08-03', 'sheet', 1, 2)",
      ).run();
      v5.close();
      const store = sqliteStore(ws.ws().store);
      expect(store.db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
      expect(store.db.pragma('integrity_check', { simple: true })).toBe('ok');
      expect(store.ropes()).toEqual([expect.objectContaining({ sampleId: 'S1', penId: 'A1', poolId: null })]);
      expect(store.db.pragma('foreign_key_check')).toEqual([]);
    });
  });

  it('counts a planned pooled rope as hung when its pool reports, and no rope twice when a sheet names the pool', async () => {
    const ws = workspace();
    const store = ws.ws().store;
    const planned = (sampleId: string, penId: string) => ({
      sampleId,
      siteId: 'hollow-creek',
      barnId: 'F1',
      penId,
      side: 'A',
      reason: 'routine',
      dueOn: '2026-08-03',
      plannedAt: '2026-08-01T00:00:00Z',
      afterRound: 0,
      poolId: 'HCF01-901J',
    });
    store.replacePlan('hollow-creek', 0, [planned('HCF01-001H', 'A1'), planned('HCF01-002F', 'A2')]);
    expect(store.plannedRopes('hollow-creek').map((rope) => rope.poolId)).toEqual(['HCF01-901J', 'HCF01-901J']);
    const lab = await ws.drop(
      'nvdl_results_2026-08-06.csv',
      northfieldExport(
        [{ sampleId: 'HCF01-901J', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' }],
        '2026-08-06',
        1,
      ),
    );
    // The pool ID is the plan's: no unresolved sample, and the site is rebuilt.
    expect(lab.receipt).toMatchObject({ unresolvedSampleIds: [], sites: ['hollow-creek'] });
    // The plan after round 1, made once the result arrived, is not the one this is about.
    expect(store.plannedWithoutResults('hollow-creek').filter((rope) => rope.afterRound === 0)).toEqual([]);
    expect(store.ropes('hollow-creek').map((rope) => [rope.sampleId, rope.penId, rope.hungOn, rope.poolId])).toEqual([
      ['HCF01-001H', 'A1', '2026-08-03', 'HCF01-901J'],
      ['HCF01-002F', 'A2', '2026-08-03', 'HCF01-901J'],
    ]);
    // The farm hung its own tubes in those pens and says so on a sheet naming the pool: the sheet's ropes hold it.
    await ws.drop(
      'hollow-creek_ropes.csv',
      'sample_id,site,barn,pen,hung_on,pool\nFARM-1,hollow-creek,F1,A1,2026-08-03,HCF01-901J\nFARM-2,hollow-creek,F1,A2,2026-08-03,HCF01-901J\n',
    );
    expect(store.ropes('hollow-creek').map((rope) => rope.sampleId)).toEqual(['FARM-1', 'FARM-2']);
  });

  it("names a pool's replaced report among the site's replaced reports, as the receipt names it", async () => {
    // A later report of the same sample, assay and lab replaces the earlier one (common practice,
    // no source); a pool's result is reported under the pool ID, so the replaced report is the pool's.
    const ws = workspace();
    const store = ws.ws().store;
    await ws.drop(
      'hollow-creek_ropes.csv',
      'sample_id,site,barn,pen,hung_on,pool\nFARM-1,hollow-creek,F1,A1,2026-08-03,HCF01-901J\nFARM-2,hollow-creek,F1,A2,2026-08-03,HCF01-901J\n',
    );
    const pool = { sampleId: 'HCF01-901J', assay: 'PRRSV' as const, collectedOn: '2026-08-03' };
    await ws.drop('nvdl_results_2026-08-06.csv', northfieldExport([{ ...pool, ct: null }], '2026-08-06', 1));
    const later = await ws.drop(
      'nvdl_results_2026-08-08.csv',
      northfieldExport([{ ...pool, ct: 31.2 }], '2026-08-08', 2),
    );
    expect(later.receipt.supersessions).toEqual([
      expect.objectContaining({ sampleId: 'HCF01-901J', kind: 'later-report', thisFileCurrent: true }),
    ]);
    expect(store.replacedReports('hollow-creek')).toEqual([
      expect.objectContaining({
        sampleId: 'HCF01-901J',
        kind: 'later-report',
        replaced: expect.objectContaining({ reportedOn: '2026-08-06' }),
        inPlace: expect.objectContaining({ reportedOn: '2026-08-08', ct: 31.2 }),
      }),
    ]);
  });
});
