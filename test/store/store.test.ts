/**
 * The store: idempotency by content hash and natural key, reissues as supersession rows, rope
 * conflicts, migrations and pragmas. Files are made with the demo scenario's exporters
 * (src/demo/scenario.ts) and run through the real pipeline in a temp workspace; the expected
 * counts are by hand from the rows written. PRAGMA meanings: SQLite documentation (journal_mode,
 * user_version, synchronous: FULL = 2).
 */
import { describe, expect, it } from 'vitest';
import Database from 'better-sqlite3';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { MIGRATIONS } from '../../src/store/migrations.js';
import { Store } from '../../src/store/store.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const prrsv = (sampleId: string, ct: number | null, extra: { controlFailed?: boolean; status?: string } = {}) => ({ sampleId, assay: 'PRRSV' as const, ct, collectedOn: '2026-08-03', ...extra });

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
    const reissue = await ws.drop('nvdl_b.csv', northfieldExport([prrsv('S1', 27.4, { status: 'Corrected' })], '2026-08-07', 1));
    expect(reissue.receipt.rows).toMatchObject({ accepted: 1, superseded: 1 });
    const store = ws.ws().store;
    expect(store.counts()).toMatchObject({ results: 2, currentResults: 1 });
    const [link] = store.supersessions();
    expect(link!.reason).toContain('reissued');
    const current = store.currentResults();
    expect(current.map((result) => [result.sampleId, result.resultClass, result.ct])).toEqual([['S1', 'positive', 27.4]]);
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
    expect(ws.ws().store.ropes().map((rope) => [rope.sampleId, rope.barnId, rope.penId])).toEqual([['R1', 'F1', 'A1']]);
  });
});

describe('Store schema', () => {
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

  it('refuses to store rows outside a file transaction and leaves nothing after a rollback', () => {
    const store = new Store(':memory:');
    expect(() => store.insertRopes(1, [])).toThrow(/beginFile/);
    const id = store.beginFile({ name: 'x.csv', sha256: 'ab', kind: 'ropes', labId: null, receivedAt: '2026-08-03T00:00:00Z', encodingNote: '', byteLength: 1 });
    store.insertRopes(id, [{ line: 2, sampleId: 'R1', siteId: 'hollow-creek', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03', note: null, warning: undefined }]);
    store.rollback();
    expect(store.counts()).toMatchObject({ files: 0, ropes: 0 });
    store.close();
  });
});
