/**
 * The store: idempotency by content hash and natural key, reissues as supersession rows, rope
 * conflicts, migrations and pragmas. Files are made with the demo scenario's exporters
 * (src/demo/scenario.ts) and run through the real pipeline in a temp workspace; the expected
 * counts are by hand from the rows written. PRAGMA meanings: SQLite documentation (journal_mode,
 * user_version, synchronous: FULL = 2).
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { foldToken } from '../../src/util/fold.js';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { MIGRATIONS } from '../../src/store/migrations.js';
import { Store } from '../../src/store/store.js';
import { ingestRules } from '../../src/ingest/rowRules.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { sqliteStore } from '../helpers/storeSql.js';
import { openTestStore, sqliteOnly } from '../helpers/testStore.js';

const workspace = workspacesPerTest();

const prrsv = (sampleId: string, ct: number | null, extra: { controlFailed?: boolean; status?: string } = {}) => ({
  sampleId,
  assay: 'PRRSV' as const,
  ct,
  collectedOn: '2026-08-03',
  ...extra,
});

describe('Store idempotency', () => {
  it('stores nothing twice when the same file arrives twice', async () => {
    const ws = workspace();
    const bytes = northfieldExport([prrsv('S1', 30.1), prrsv('S2', null)], '2026-08-06', 1);
    const first = await ws.drop('nvdl_a.csv', bytes);
    expect(first.receipt).toMatchObject({ status: 'accepted', rows: { accepted: 2, rejected: 0, duplicate: 0 } });
    const before = ws.ws().store.counts();
    const second = await ws.drop('nvdl_a.csv', bytes);
    expect(second.receipt.status).toBe('duplicate');
    expect(ws.ws().store.counts()).toEqual(before);
    expect(before).toMatchObject({ files: 1, results: 2 });
  });

  it('does not double-count the same rows arriving in two different files', async () => {
    const ws = workspace();
    const bytes = northfieldExport([prrsv('S1', 30.1), prrsv('S2', null)], '2026-08-06', 1);
    await ws.drop('nvdl_a.csv', bytes);
    // Different bytes (an extra blank line), same rows.
    const again = await ws.drop('nvdl_b.csv', Buffer.concat([bytes, Buffer.from('\n')]));
    expect(again.receipt).toMatchObject({ status: 'accepted', rows: { accepted: 0, duplicate: 2, superseded: 0 } });
    expect(ws.ws().store.counts()).toMatchObject({ files: 2, results: 2, currentResults: 2 });
  });
});

describe('Store supersession', () => {
  it('keeps both rows of a reissue and links them with a reason; current results show only the new one', async () => {
    const ws = workspace();
    await ws.drop('nvdl_a.csv', northfieldExport([prrsv('S1', null, { controlFailed: true })], '2026-08-06', 1));
    const reissue = await ws.drop(
      'nvdl_b.csv',
      northfieldExport([prrsv('S1', 27.4, { status: 'Corrected' })], '2026-08-07', 1),
    );
    expect(reissue.receipt.rows).toMatchObject({ accepted: 1, superseded: 1 });
    const store = ws.ws().store;
    expect(store.counts()).toMatchObject({ results: 2, currentResults: 1 });
    const [link] = store.supersessions();
    expect(link!.reason).toContain('reissued');
    const current = store.currentResults();
    expect(current.map((result) => [result.sampleId, result.resultClass, result.ct])).toEqual([
      ['S1', 'positive', 27.4],
    ]);
    expect(link!.newResultId).toBe(current[0]!.id);
  });

  it('keeps the later-dated report current when an earlier-dated one arrives after it unmarked', async () => {
    const ws = workspace();
    await ws.drop('nvdl_a.csv', northfieldExport([prrsv('S1', 29.0)], '2026-08-09', 1));
    await ws.drop('nvdl_b.csv', northfieldExport([prrsv('S1', 33.0)], '2026-08-06', 1));
    const current = ws.ws().store.currentResults();
    expect(current.map((result) => result.ct)).toEqual([29.0]);
    expect(ws.ws().store.counts()).toMatchObject({ results: 2, currentResults: 1 });
  });
});

describe('Store rope conflicts', () => {
  it('refuses a second sample in the same pen on the same day and names its line', async () => {
    const ws = workspace();
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    const sheet = ropeSheet(site, [
      { sampleId: 'R1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
      { sampleId: 'R2', barnId: 'F1', penId: 'A2', hungOn: '2026-08-03' },
      { sampleId: 'R3', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
    ]);
    const { receipt } = await ws.drop('ropes.csv', sheet);
    expect(receipt.rows).toMatchObject({ accepted: 2, rejected: 1 });
    // Line 1 is the header, so R3 is on line 4.
    expect(receipt.rejectedRows).toMatchObject([{ line: 4, code: 'pen-twice-same-day', field: 'pen' }]);
    expect(ws.ws().store.counts()).toMatchObject({ ropes: 2, rejectedRows: 1 });
  });

  it('refuses a sample ID reused in another pen, in the same sheet or a later one, and accepts an exact repeat', async () => {
    const ws = workspace();
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    const first = await ws.drop(
      'ropes1.csv',
      ropeSheet(site, [
        { sampleId: 'R1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
        { sampleId: 'R1', barnId: 'F1', penId: 'A3', hungOn: '2026-08-03' },
      ]),
    );
    expect(first.receipt.rejectedRows).toMatchObject([{ line: 3, code: 'sample-id-reused', field: 'sample_id' }]);
    const second = await ws.drop(
      'ropes2.csv',
      ropeSheet(site, [
        { sampleId: 'R1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
        { sampleId: 'R1', barnId: 'F2', penId: '05', hungOn: '2026-08-17' },
      ]),
    );
    expect(second.receipt.rows).toMatchObject({ accepted: 0, duplicate: 1, rejected: 1 });
    expect(second.receipt.rejectedRows).toMatchObject([{ line: 3, code: 'sample-id-reused' }]);
    expect(
      ws
        .ws()
        .store.ropes()
        .map((rope) => [rope.sampleId, rope.barnId, rope.penId]),
    ).toEqual([['R1', 'F1', 'A1']]);
  });
});

describe('Store schema', () => {
  sqliteOnly(() => {
    it('migrates to the latest user_version, opens in WAL with synchronous FULL and foreign keys, and reopens without migrating again', () => {
      const ws = workspace();
      const store = new Store(ws.paths.dbFile);
      expect(store.db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
      expect(store.db.pragma('journal_mode', { simple: true })).toBe('wal');
      expect(store.db.pragma('synchronous', { simple: true })).toBe(2);
      expect(store.db.pragma('foreign_keys', { simple: true })).toBe(1);
      store.setMeta('marker', 'kept');
      store.close();
      const again = new Store(ws.paths.dbFile);
      expect(again.getMeta('marker')).toBe('kept');
      expect(again.db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
      again.close();
      // An independent connection sees the same schema version (not a property of this connection).
      const raw = new Database(ws.paths.dbFile, { readonly: true });
      expect(raw.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
      raw.close();
    });

    // SQLite documentation, PRAGMA page_size: only an empty database takes a new page size, and
    // a database in WAL mode keeps its size (sqlite.org/pragma.html#pragma_page_size).
    it('creates a new store with 16 KB pages and opens a store made with 4 KB pages as it is, rows kept', () => {
      const ws = workspace();
      const fresh = new Store(ws.paths.dbFile);
      expect(fresh.db.pragma('page_size', { simple: true })).toBe(16_384);
      fresh.close();
      const older = path.join(path.dirname(ws.paths.dbFile), 'older.db');
      const made = new Database(older);
      made.pragma('page_size = 4096');
      made.pragma('journal_mode = WAL');
      made.close();
      const opened = new Store(older);
      opened.setMeta('marker', 'kept');
      opened.close();
      const raw = new Database(older, { readonly: true });
      expect(raw.pragma('page_size', { simple: true })).toBe(4096);
      expect(raw.prepare("SELECT value FROM meta WHERE key = 'marker'").pluck().get()).toBe('kept');
      expect(raw.pragma('integrity_check', { simple: true })).toBe('ok');
      raw.close();
    });
  });

  it('refuses to store rows outside a file transaction and leaves nothing after a rollback', () => {
    const store = openTestStore();
    expect(() => store.insertRopes(1, [])).toThrow(/beginFile/);
    const id = store.beginFile(
      {
        name: 'x.csv',
        sha256: 'ab',
        kind: 'ropes',
        labId: null,
        receivedAt: '2026-08-03T00:00:00Z',
        encodingNote: '',
        byteLength: 1,
      },
      ingestRules,
    );
    store.insertRopes(id, [
      {
        line: 2,
        sampleId: 'R1',
        siteId: 'hollow-creek',
        barnId: 'F1',
        penId: 'A1',
        hungOn: '2026-08-03',
        note: null,
        sampleIdAsWritten: null,
        warning: undefined,
      },
    ]);
    store.rollback();
    expect(store.counts()).toMatchObject({ files: 0, ropes: 0 });
    store.close();
  });

  sqliteOnly(() => {
    it('migrates a version-1 store (text natural keys, text sample columns): rows keep their ids and places, and a re-sent row is still a duplicate', async () => {
      // Learn what today's pipeline stores for one export, then write the same rows into a store
      // laid out as version 1 was, its natural key spelled as version 1 spelled it:
      // "<sample>|<assay>|<lab>|" + the first 24 hex digits of SHA-1 over the reported fields.
      const reference = workspace();
      const sheet = ropeSheet(reference.config().siteById.get('HOLLOW-CREEK')!, [
        { sampleId: 'R1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
      ]);
      const exported = northfieldExport([prrsv('R1', 30.1), prrsv('U9', null)], '2026-08-06', 1);
      await reference.drop('ropes.csv', sheet);
      await reference.drop('nvdl_a.csv', exported);
      type Stored = {
        id: number;
        fileId: number;
        line: number;
        sampleId: string;
        labId: string;
        assayId: string;
        labAssay: string;
        ct: number | null;
        ctRaw: string;
        labCall: string | null;
        accession: string | null;
        collectedOn: string | null;
        reportedOn: string | null;
        reportStatus: string | null;
        control: string | null;
        resultClass: string;
        reason: string;
        loadBand: string | null;
        positiveBelow: number;
        suspectBelow: number;
        cycleLimit: number;
        contentKey: number;
      };
      const stored = sqliteStore(reference.ws().store)
        .db.prepare(
          `SELECT r.id, r.file_id AS fileId, r.line, s.sample_id AS sampleId, r.lab_id AS labId, r.assay_id AS assayId, r.lab_assay AS labAssay, r.ct, r.ct_raw AS ctRaw,
                  r.lab_call AS labCall, r.accession, r.collected_on AS collectedOn, r.reported_on AS reportedOn, r.report_status AS reportStatus, r.control,
                  r.class AS resultClass, x.text AS reason, r.load_band AS loadBand, r.positive_below AS positiveBelow, r.suspect_below AS suspectBelow, r.cycle_limit AS cycleLimit,
                  r.content_key AS contentKey
           FROM results_read r JOIN samples s ON s.id = r.sample JOIN reasons x ON x.id = r.reason ORDER BY r.id`,
        )
        .all() as Stored[];
      expect(stored).toHaveLength(2);

      const legacy = workspace();
      fs.mkdirSync(path.dirname(legacy.paths.dbFile), { recursive: true });
      const v1 = new Database(legacy.paths.dbFile);
      v1.exec(MIGRATIONS[0]!.sql);
      v1.pragma('user_version = 1');
      v1.prepare(
        "INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (1, 'ropes.csv', 'a1', 'ropes', '2026-08-03T00:00:00Z', 'accepted', 1)",
      ).run();
      v1.prepare(
        "INSERT INTO files (id, name, sha256, kind, lab_id, received_at, status, byte_length) VALUES (2, 'nvdl_a.csv', 'b2', 'results', 'northfield', '2026-08-06T00:00:00Z', 'accepted', 1)",
      ).run();
      v1.prepare(
        "INSERT INTO ropes (id, sample_id, site_id, barn_id, pen_id, hung_on, source, file_id, line) VALUES (7, 'R1', 'hollow-creek', 'F1', 'A1', '2026-08-03', 'sheet', 1, 2)",
      ).run();
      const insert = v1.prepare(
        `INSERT INTO results (id, file_id, line, lab_id, sample_id, assay_id, lab_assay, ct, ct_raw, lab_call, accession, collected_on, reported_on, report_status, control,
           class, reason, load_band, positive_below, suspect_below, cycle_limit, natural_key)
         VALUES (@id, 2, @line, @labId, @sampleId, @assayId, @labAssay, @ct, @ctRaw, @labCall, @accession, @collectedOn, @reportedOn, @reportStatus, @control,
           @resultClass, @reason, @loadBand, @positiveBelow, @suspectBelow, @cycleLimit, @naturalKey)`,
      );
      for (const row of stored) {
        const reported = [
          foldToken(row.labAssay),
          row.ctRaw,
          row.labCall ?? '',
          row.accession ?? '',
          row.reportedOn ?? '',
          row.reportStatus ?? '',
          row.control ?? '',
        ].join('\u001f');
        const naturalKey = `${row.sampleId}|${row.assayId}|${row.labId}|${createHash('sha1').update(reported).digest('hex').slice(0, 24)}`;
        const { contentKey: _unused, fileId: _file, ...columns } = row;
        insert.run({ ...columns, id: row.id + 100, naturalKey });
      }
      v1.close();

      const migrated = sqliteStore(legacy.ws().store);
      expect(migrated.db.pragma('user_version', { simple: true })).toBe(MIGRATIONS.length);
      expect(migrated.db.pragma('foreign_key_check')).toEqual([]);
      expect(migrated.db.pragma('integrity_check', { simple: true })).toBe('ok');
      // Ids and places survive; the content key is the one today's mapping gives the same row.
      const keys = migrated.db
        .prepare(
          'SELECT r.id, s.sample_id AS sampleId, r.content_key AS contentKey FROM results r JOIN samples s ON s.id = r.sample ORDER BY r.id',
        )
        .all();
      expect(keys).toEqual(
        stored.map((row) => ({ id: row.id + 100, sampleId: row.sampleId, contentKey: row.contentKey })),
      );
      expect(migrated.ropes().map((rope) => [rope.sampleId, rope.barnId, rope.penId])).toEqual([['R1', 'F1', 'A1']]);
      expect(migrated.unresolvedSampleIds()).toEqual(['U9']);
      expect(migrated.currentResults().map((result) => [result.sampleId, result.reason])).toEqual(
        stored.map((row) => [row.sampleId, row.reason]),
      );
      // The same export dropped again (new bytes: one blank line more) adds nothing.
      const again = await legacy.drop('nvdl_b.csv', Buffer.concat([exported, Buffer.from('\n')]));
      expect(again.receipt.rows).toMatchObject({ accepted: 0, duplicate: 2, superseded: 0 });
      // A reissue of a migrated row still finds what it supersedes.
      const reissue = await legacy.drop(
        'nvdl_c.csv',
        northfieldExport([prrsv('R1', 28.0, { status: 'Corrected' })], '2026-08-07', 9),
      );
      expect(reissue.receipt.rows).toMatchObject({ accepted: 1, superseded: 1 });
      expect(migrated.supersessions()).toMatchObject([{ oldResultId: stored[0]!.id + 100 }]);
    });
  });
});
