/**
 * The PostgreSQL writer against the SQLite store, its reference implementation: the same files
 * through the same ingest code (ingestFile) into a SQLite store and into a fresh PostgreSQL
 * database must give equal receipts and, table by table, equal digests (storeDigests: every row
 * in key order, ids included), and each reader the same answers to what a build asks of a site's
 * change log and of its ropes from a day. Then what only a shared server has: a file stored twice, a
 * rollback, and writers racing (writerChild.ts holds a file's transaction open in another process).
 */
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import type { Config } from '../../../src/config/types.js';
import {
  FileAlreadyStoredError,
  type RopeHorizon,
  type SampleChoice,
  type StoreBackend,
} from '../../../src/domain/store.js';
import { ingestFile, type Receipt } from '../../../src/ingest/ingestFile.js';
import { ingestRules } from '../../../src/ingest/rowRules.js';
import { formatSampleId } from '../../../src/plan/sampleId.js';
import type { PlannedRope } from '../../../src/domain/records.js';
import { parseStoreLocation } from '../../../src/store/location.js';
import { openStoreSide, storeDigests, type CopiedTableReport } from '../../../src/store/pg/copyStore.js';
import { PgStoreReader } from '../../../src/store/pg/reader.js';
import { openPgStore } from '../../../src/store/pg/store.js';
import { SyncConnection } from '../../../src/store/pg/syncConnection.js';
import { SqliteReader } from '../../../src/store/reader.js';
import { Store } from '../../../src/store/store.js';
import { freshDatabase, type TestDatabase } from '../../helpers/pgServer.js';
import { runCli } from '../../helpers/runCli.js';

const HERE = path.dirname(fileURLToPath(import.meta.url));
const CORPUS = path.resolve(HERE, '../../fixtures/exports');
const NOW = new Date('2026-12-01T12:00:00Z');
/** The header of the corpus lab's exports (test/fixtures/exports/nvdl_*.csv). */
const HEADER =
  'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status';

let dir: string;
const databases: TestDatabase[] = [];

async function database(label: string): Promise<TestDatabase> {
  const made = await freshDatabase(label);
  databases.push(made);
  return made;
}

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-pgwriter-'));
}, 60_000);

afterAll(async () => {
  for (const made of databases) await made.drop();
  if (dir !== undefined) fs.rmSync(dir, { recursive: true, force: true });
});

function digestsOf(location: string): CopiedTableReport[] {
  const side = openStoreSide(parseStoreLocation(location), 'source');
  try {
    return storeDigests(side);
  } finally {
    side.close();
  }
}

/** Ingests the files in order into the store; their receipts. */
async function ingestAll(files: readonly string[], config: Config, store: StoreBackend): Promise<Receipt[]> {
  const receipts: Receipt[] = [];
  for (const file of files) receipts.push(await ingestFile(file, { config, store, now: () => NOW }));
  return receipts;
}

/**
 * Both readers give the same change log after every version of each site, the same placed plans,
 * and the same ropes and report keys from each day a rope of the site hangs on (and from before
 * and after them all). Returns how many non-empty answers were compared, so a test can tell that
 * its store held what it is about.
 */
function expectSameReads(sqliteFile: string, url: string): { logged: number; placed: number; narrowed: number } {
  const db = new Database(sqliteFile, { readonly: true });
  const conn = new SyncConnection(url);
  const seen = { logged: 0, placed: 0, narrowed: 0 };
  try {
    const lite = new SqliteReader(db, () => false);
    const pg = new PgStoreReader(conn);
    const sites = (db.prepare('SELECT site_id FROM site_versions ORDER BY site_id').pluck().all() as string[]).sort();
    expect(sites.length).toBeGreaterThan(0);
    for (const site of sites) {
      const version = lite.siteVersion(site);
      expect(pg.siteVersion(site), site).toBe(version);
      for (let after = -1; after <= version + 1; after++) {
        const since = lite.siteChangesSince(site, after);
        expect(pg.siteChangesSince(site, after), `${site} after ${after}`).toEqual(since);
        if (since.commits > 0) seen.logged += 1;
      }
      const placed = lite.plannedPlaced(site);
      expect(pg.plannedPlaced(site), site).toEqual(placed);
      seen.placed += placed.length;
      const everyRope = lite.ropes(site);
      const days = [...new Set(everyRope.map((rope) => rope.hungOn))].sort();
      for (const day of ['2000-01-01', ...days, '2100-01-01']) {
        const ropes = lite.ropes(site, day);
        expect(pg.ropes(site, day), `${site} from ${day}`).toEqual(ropes);
        expect(pg.reportKeys(site, day), `${site} from ${day}`).toEqual(lite.reportKeys(site, day));
        if (ropes.length > 0 && ropes.length < everyRope.length) seen.narrowed += 1;
      }
      // A build whose outputs show the site's middle version: it reads from the day logged since.
      const horizon: RopeHorizon = (head, changesSince) =>
        changesSince(Math.floor(head.version / 2)).fromDay ?? undefined;
      const some: SampleChoice = (outline) => outline.ropes.slice(-3).map((rope) => rope.sampleId);
      expect(pg.siteInputsChosen(site, some, horizon), site).toEqual(lite.siteInputsChosen(site, some, horizon));
    }
    const storeDays = [...new Set(lite.ropes().map((rope) => rope.hungOn))].sort();
    for (const day of [storeDays[0], storeDays[Math.floor(storeDays.length / 2)], storeDays.at(-1)])
      expect(pg.ropes(undefined, day), `every site from ${day}`).toEqual(lite.ropes(undefined, day));
  } finally {
    db.close();
    conn.close();
  }
  return seen;
}

/** The same files into SQLite and PostgreSQL: both stores' receipts and digests. */
async function bothStores(
  label: string,
  files: readonly string[],
  config: Config,
): Promise<{
  sqlite: Receipt[];
  pg: Receipt[];
  sqliteDigests: CopiedTableReport[];
  pgDigests: CopiedTableReport[];
  sqliteFile: string;
  url: string;
}> {
  const sqliteFile = path.join(dir, `${label}.db`);
  const sqliteStore = new Store(sqliteFile);
  const sqlite = await ingestAll(files, config, sqliteStore).finally(() => sqliteStore.close());
  const db = await database(label);
  const pgStore = openPgStore(db.url);
  const pg = await ingestAll(files, config, pgStore).finally(() => pgStore.close());
  return { sqlite, pg, sqliteDigests: digestsOf(sqliteFile), pgDigests: digestsOf(db.url), sqliteFile, url: db.url };
}

describe('PostgreSQL writer: the same files give the SQLite store`s rows (the reference implementation)', () => {
  it('stores the demo scenario`s drops with equal receipts and equal digests of every table', async () => {
    const demoDir = path.join(dir, 'demo');
    fs.mkdirSync(demoDir);
    const demo = await runCli(['demo'], { cwd: demoDir });
    expect(demo.code, demo.stderr).toBe(0);
    // The drops in the order the demo stored them (its files table), from the archive and the rejected folder.
    const demoDb = new Database(path.join(demoDir, 'data', 'ropewatch.db'), { readonly: true });
    const names = (demoDb.prepare('SELECT name FROM files ORDER BY id').all() as { name: string }[]).map((r) => r.name);
    demoDb.close();
    const files = names.map((name) =>
      ['archive', 'rejected']
        .map((folder) => path.join(demoDir, 'inbox', folder, name))
        .find((file) => fs.existsSync(file)),
    );
    expect(files.every((file) => file !== undefined)).toBe(true);
    const config = loadConfig(path.join(demoDir, 'config'));
    const result = await bothStores('demo', files as string[], config);
    expect(result.sqlite.map((r) => r.status)).toContain('accepted');
    expect(result.pg).toEqual(result.sqlite);
    expect(result.pgDigests).toEqual(result.sqliteDigests);
    expect(result.sqliteDigests.find((t) => t.table === 'results')?.rows).toBeGreaterThan(100);
    expect(result.sqliteDigests.find((t) => t.table === 'site_changes')?.rows).toBeGreaterThan(4);
    const seen = expectSameReads(result.sqliteFile, result.url);
    expect(seen.logged).toBeGreaterThan(4);
    expect(seen.narrowed).toBeGreaterThan(4);
  }, 600_000);

  it('stores the hostile-input corpus with equal receipts and equal digests of every table', async () => {
    const files = fs
      .readdirSync(CORPUS, { withFileTypes: true })
      .filter((entry) => entry.isFile() && !entry.name.endsWith('.expected.json') && !entry.name.endsWith('.ts'))
      .map((entry) => path.join(CORPUS, entry.name))
      .sort();
    const config = loadConfig(path.join(CORPUS, 'config'));
    const result = await bothStores('corpus', files, config);
    expect(new Set(result.sqlite.map((r) => r.status))).toEqual(new Set(['accepted', 'rejected']));
    expect(result.pg).toEqual(result.sqlite);
    expect(result.pgDigests).toEqual(result.sqliteDigests);
    expect(expectSameReads(result.sqliteFile, result.url).logged).toBeGreaterThan(0);
  }, 300_000);
});

describe('PostgreSQL writer: a plan, a refused mistyped ID and its correction, as the SQLite store stores them', () => {
  it('gives equal receipts and digests when a file is read again for the row a confirmed correction covers', async () => {
    const config = loadConfig(path.join(CORPUS, 'config'));
    const ids = [11, 12, 13].map((sequence) => formatSampleId({ siteCode: 'HCF', round: 3, sequence }));
    const meant = ids[1]!;
    const written = meant.replace('-012', '-013');
    const plan: PlannedRope[] = ids.map((sampleId, index) => ({
      sampleId,
      siteId: 'hollow-creek',
      barnId: 'F1',
      penId: `A${index + 1}`,
      side: 'A',
      reason: 'routine',
      dueOn: '2026-08-31',
      plannedAt: '2026-08-20',
      afterRound: 2,
    }));
    const line = (sample: string, ct: string, call: string) =>
      `NV26-1,${sample},PRRSV NA/EU RT-PCR,${ct},${call},PASS,2026-08-31,2026-09-02,Final`;
    const file = path.join(dir, 'nvdl_results_2026-09-02.csv');
    fs.writeFileSync(
      file,
      `${[HEADER, line(ids[0]!, 'Undetermined', 'Negative'), line(written, '27.40', 'Positive'), line(ids[2]!, 'Undetermined', 'Negative')].join('\n')}\n`,
    );
    const corrected: Config = {
      ...config,
      corrections: [{ written, meant, file: 'nvdl_results_2026-09-02.csv', line: 3, note: undefined }],
    };
    // As test/ingest/mistypedId.test.ts walks it: the plan, the file (line 3 refused), the same
    // bytes once a person confirmed the ID meant (read again: the row goes in, nothing twice).
    const walk = async (store: StoreBackend): Promise<Receipt[]> => {
      store.replacePlan('hollow-creek', 2, plan);
      const first = await ingestFile(file, { config, store, now: () => NOW });
      const again = await ingestFile(file, { config: corrected, store, now: () => NOW });
      store.markOutputsBuilt('outbox', 'hollow-creek', store.siteVersion('hollow-creek'), 'digest');
      store.setMeta('walked', 'yes');
      return [first, again];
    };
    const sqliteFile = path.join(dir, 'corrected.db');
    const sqliteStore = new Store(sqliteFile);
    const expected = await walk(sqliteStore).finally(() => sqliteStore.close());
    const db = await database('corrected');
    const pgStore = openPgStore(db.url);
    const got = await walk(pgStore).finally(() => pgStore.close());
    expect(expected.map((r) => [r.status, r.rows.accepted, r.rows.rejected])).toEqual([
      ['accepted', 2, 1],
      ['accepted', 1, 0],
    ]);
    expect(got).toEqual(expected);
    expect(digestsOf(db.url)).toEqual(digestsOf(sqliteFile));
    expectSameReads(sqliteFile, db.url);
  }, 120_000);
});

describe('PostgreSQL writer and reader: the change log and the ropes from a day, with pools and plans, as the SQLite store gives them', () => {
  it('logs the same days and reads the same ropes, report keys and placed plans', async () => {
    const config = loadConfig(path.join(CORPUS, 'config'));
    const sampleId = (sequence: number) => formatSampleId({ siteCode: 'HCF', round: 3, sequence });
    const planPool = sampleId(90);
    const plan = (id: string, penId: string, poolId?: string): PlannedRope => ({
      sampleId: id,
      siteId: 'hollow-creek',
      barnId: 'F1',
      penId,
      side: 'A',
      reason: 'routine',
      dueOn: '2026-08-31',
      plannedAt: '2026-08-20',
      afterRound: 2,
      ...(poolId === undefined ? {} : { poolId }),
    });
    // Two ropes planned into one pool, one a sheet hangs later (placed, no result), one left waiting.
    const planned = [plan(sampleId(11), 'A5', planPool), plan(sampleId(12), 'A6', planPool), plan(sampleId(13), 'A7')];
    const placedLater = plan(sampleId(14), 'A8');
    const sheetPool = 'HCF01-901J';
    const write = (name: string, text: string) => {
      const file = path.join(dir, name);
      fs.writeFileSync(file, text);
      return file;
    };
    const sheet = (rows: readonly string[]) => `sample_id,site,barn,pen,hung_on,pool\n${rows.join('\n')}\n`;
    const result = (sample: string, collectedOn: string) =>
      `NV26-7,${sample},PRRSV NA/EU RT-PCR,Undetermined,Negative,PASS,${collectedOn},2026-09-02,Final`;
    const files = [
      write(
        'hollow-creek_ropes_2026-08-25.csv',
        sheet([
          'FARM-1,hollow-creek,F1,A1,2026-08-03,',
          `FARM-2,hollow-creek,F1,A2,2026-08-10,${sheetPool}`,
          `FARM-3,hollow-creek,F1,A3,2026-08-17,${sheetPool}`,
          'FARM-4,hollow-creek,F1,A4,2026-08-24,',
        ]),
      ),
      write('nvdl_results_2026-08-27.csv', `${[HEADER, result('FARM-4', '2026-08-24')].join('\n')}\n`),
      write('nvdl_results_2026-08-28.csv', `${[HEADER, result(sheetPool, '2026-08-24')].join('\n')}\n`),
      write('nvdl_results_2026-08-30.csv', `${[HEADER, result(planPool, '2026-08-29')].join('\n')}\n`),
      write('hollow-creek_ropes_2026-09-06.csv', sheet([`${placedLater.sampleId},hollow-creek,F1,A8,2026-09-05,`])),
    ];
    const walk = async (store: StoreBackend): Promise<Receipt[]> => {
      store.replacePlan('hollow-creek', 2, [...planned, placedLater]);
      return ingestAll(files, config, store);
    };
    const sqliteFile = path.join(dir, 'changes.db');
    const sqliteStore = new Store(sqliteFile);
    const expected = await walk(sqliteStore).finally(() => sqliteStore.close());
    const db = await database('changes');
    const pgStore = openPgStore(db.url);
    const got = await walk(pgStore).finally(() => pgStore.close());
    expect(expected.map((r) => [r.status, r.rows.rejected])).toEqual(files.map(() => ['accepted', 0]));
    expect(got).toEqual(expected);
    expect(digestsOf(db.url)).toEqual(digestsOf(sqliteFile));
    const seen = expectSameReads(sqliteFile, db.url);
    expect(seen).toMatchObject({ logged: expect.any(Number), placed: 1 });
    expect(seen.narrowed).toBeGreaterThan(2);
    // What the log holds: the sheet's earliest day, the reported rope's, the sheet pool's earliest
    // rope, the planned pool's collection day (before its due day), and for the sheet hanging a
    // planned rope the earlier of its due day and the day it was hung.
    const lite = new Database(sqliteFile, { readonly: true });
    try {
      expect(lite.prepare('SELECT from_day FROM site_changes ORDER BY version').pluck().all()).toEqual([
        '2026-08-03',
        '2026-08-24',
        '2026-08-10',
        '2026-08-29',
        '2026-08-31',
      ]);
    } finally {
      lite.close();
    }
  }, 120_000);

  it('logs a site named twice under two versions, in the order given, as the SQLite writer bumps once per change', async () => {
    const changes = [
      { siteId: 'tamsin-ridge', fromDay: '2026-08-10' },
      { siteId: 'hollow-creek', fromDay: null },
      { siteId: 'tamsin-ridge', fromDay: '2026-08-03' },
    ];
    const bump = (store: StoreBackend, sha256: string) => {
      const fileId = store.beginFile(
        {
          name: `${sha256}.csv`,
          sha256,
          kind: 'results',
          labId: 'northfield',
          receivedAt: NOW.toISOString(),
          encodingNote: 'utf-8',
          byteLength: 1,
        },
        ingestRules,
      );
      store.finishFile(fileId, { accepted: 0, rejected: 0, duplicate: 0 });
      store.bumpSiteVersions(changes);
      store.commit();
    };
    const sqliteFile = path.join(dir, 'twice.db');
    const sqliteStore = new Store(sqliteFile);
    const db = await database('bumped-twice');
    const pgStore = openPgStore(db.url);
    try {
      for (const store of [sqliteStore, pgStore]) {
        bump(store, 'first');
        bump(store, 'second');
      }
      expect(pgStore.siteVersion('tamsin-ridge')).toBe(4);
    } finally {
      sqliteStore.close();
      pgStore.close();
    }
    const logged = (location: string) => digestsOf(location).find((t) => t.table === 'site_changes');
    expect(logged(sqliteFile)?.rows).toBe(6);
    expect(logged(db.url)).toEqual(logged(sqliteFile));
  }, 120_000);
});

// ---- One server, several writers ----------------------------------------------------------------

const CORPUS_CONFIG = path.join(CORPUS, 'config');
/** How long the second writer holds its transaction open: long enough for this one to run into it on a loaded machine. */
const HOLD_MS = 6000;

/** A results export (the corpus lab's layout) of pattern-coded ropes in pens `from`..`to` of barn N1. */
function export_(name: string, from: number, to: number, caseNo: string, ct: string, reportedOn: string): string {
  const lines = [HEADER];
  for (let pen = from; pen <= to; pen++) {
    const id = `TR-N1-${String(pen).padStart(2, '0')}-20260805`;
    lines.push(`${caseNo},${id},PRRSV NA/EU RT-PCR,${ct},Positive,PASS,2026-08-05,${reportedOn},Final`);
  }
  const file = path.join(dir, name);
  fs.writeFileSync(file, `${lines.join('\n')}\n`);
  return file;
}

/** The second writer (writerChild.ts), once it holds its file's transaction open: its receipt when it ends. */
async function holdingWriter(url: string, file: string, holdMs: number): Promise<{ ended: Promise<Receipt> }> {
  const child = spawn(
    process.execPath,
    ['--import', 'tsx', path.join(HERE, 'writerChild.ts'), url, CORPUS_CONFIG, file, String(holdMs), NOW.toISOString()],
    { stdio: ['ignore', 'pipe', 'pipe'] },
  );
  let stdout = '';
  let stderr = '';
  child.stderr.on('data', (d) => (stderr += d));
  const ended = new Promise<Receipt>((resolve, reject) =>
    child.on('close', (code) => {
      const last = stdout.trim().split('\n').at(-1) ?? '';
      if (code === 0) resolve(JSON.parse(last) as Receipt);
      else reject(new Error(`writerChild exited ${code}: ${stderr}`));
    }),
  );
  await new Promise<void>((resolve, reject) => {
    child.stdout.on('data', (d) => {
      stdout += d;
      if (stdout.includes('holding\n')) resolve();
    });
    ended.catch(reject);
  });
  // Wrapped: an async function returning the promise itself would wait for it.
  return { ended };
}

/** The store with its beginFile calls recorded (their lockSites). */
function recordingBegins(store: StoreBackend): { store: StoreBackend; begins: (readonly string[] | undefined)[] } {
  const begins: (readonly string[] | undefined)[] = [];
  const recorded = new Proxy(store, {
    get(target, key, receiver) {
      const value = Reflect.get(target, key, receiver);
      if (key === 'beginFile')
        return (...args: Parameters<StoreBackend['beginFile']>) => {
          begins.push(args[2]?.lockSites);
          return target.beginFile(...args);
        };
      return typeof value === 'function' ? value.bind(target) : value;
    },
  });
  return { store: recorded, begins };
}

describe('PostgreSQL writer: files, rollbacks and writers racing on one server', () => {
  const config = () => loadConfig(CORPUS_CONFIG);

  beforeAll(async () => {
    // The ingest's modules loaded before a race: the first ingest of a test run loads them.
    await ingestFile(export_('warm.csv', 1, 1, 'NV26-0', '30.0', '2026-08-07'), {
      config: config(),
      store: new Store(':memory:'),
      now: () => NOW,
    });
  }, 60_000);

  it('tells a file stored before as a duplicate and stores nothing twice', async () => {
    const file = export_('twice.csv', 1, 4, 'NV26-1', '30.5', '2026-08-07');
    const db = await database('twice');
    const store = openPgStore(db.url);
    try {
      const first = await ingestFile(file, { config: config(), store, now: () => NOW });
      const second = await ingestFile(file, { config: config(), store, now: () => NOW });
      expect(first.status).toBe('accepted');
      expect(first.rows.accepted).toBe(4);
      // The SQLite store's behaviour (store.test.ts): the same bytes again are a duplicate.
      expect(second.status).toBe('duplicate');
      expect(store.counts()).toMatchObject({ files: 1, results: 4 });
      // beginFile itself refuses the bytes once stored (FileAlreadyStoredError), as the SQLite writer does.
      expect(() =>
        store.beginFile(
          {
            name: 'again.csv',
            sha256: first.sha256,
            kind: 'results',
            labId: first.lab,
            receivedAt: NOW.toISOString(),
            encodingNote: 'utf-8',
            byteLength: 1,
          },
          ingestRules,
        ),
      ).toThrow(FileAlreadyStoredError);
      expect(store.fileOpen).toBe(false);
    } finally {
      store.close();
    }
  }, 120_000);

  it('leaves nothing of a rolled-back file, and the next file takes the ids SQLite would give', async () => {
    const db = await database('rollback');
    const store = openPgStore(db.url);
    const referenceFile = path.join(dir, 'rollback.db');
    const reference = new Store(referenceFile);
    try {
      for (const target of [store, reference])
        await ingestFile(export_('before.csv', 1, 2, 'NV26-2', '30.5', '2026-08-07'), {
          config: config(),
          store: target,
          now: () => NOW,
        });
      const before = store.counts();
      const held = recordingBegins(store);
      const rolledBack = new Proxy(held.store, {
        get(target, key, receiver) {
          if (key === 'commit') return () => target.rollback();
          return Reflect.get(target, key, receiver);
        },
      });
      const rows = export_('rolled-back.csv', 3, 8, 'NV26-3', '29.5', '2026-08-08');
      await ingestFile(rows, { config: config(), store: rolledBack, now: () => NOW });
      expect(held.begins).toHaveLength(1);
      expect(store.counts()).toEqual(before);
      // The same file stored for good afterwards gets the ids of the SQLite store (the reference), which reuses a rolled-back file's ids.
      for (const target of [store, reference])
        await ingestFile(rows, { config: config(), store: target, now: () => NOW });
      expect(store.currentResults().map((r) => [r.sampleId, r.id])).toEqual(
        reference.currentResults().map((r) => [r.sampleId, r.id]),
      );
      expect(store.files().map((f) => [f.id, f.name])).toEqual(reference.files().map((f) => [f.id, f.name]));
      // The rolled-back file's new reading (another load band) gave its id back too.
      const readings = digestsOf(db.url).find((t) => t.table === 'readings');
      expect(readings?.rows).toBe(2);
      expect(readings).toEqual(digestsOf(referenceFile).find((t) => t.table === 'readings'));
      // Closed with a file open: the file is rolled back (as the SQLite store's close).
      const stored = store.counts();
      store.beginFile(
        {
          name: 'open.csv',
          sha256: 'open-at-close',
          kind: 'results',
          labId: 'northfield',
          receivedAt: NOW.toISOString(),
          encodingNote: 'utf-8',
          byteLength: 1,
        },
        ingestRules,
      );
      store.close();
      const reopened = openPgStore(db.url);
      try {
        expect(reopened.counts()).toEqual(stored);
        expect(reopened.findFileByHash('open-at-close')).toBeUndefined();
      } finally {
        reopened.close();
      }
    } finally {
      store.close();
      reference.close();
    }
  }, 120_000);

  it('lets one of two writers of the same bytes store them: the other waits, then gets a duplicate', async () => {
    const file = export_('raced.csv', 1, 6, 'NV26-4', '31.0', '2026-08-07');
    const db = await database('race');
    const store = openPgStore(db.url);
    const held = recordingBegins(store);
    try {
      const other = await holdingWriter(db.url, file, HOLD_MS);
      // PostgreSQL 17 documentation, INSERT ... ON CONFLICT: a conflicting row of a transaction in
      // progress is waited for; once it commits, DO NOTHING takes the existing row.
      const mine = await ingestFile(file, { config: config(), store: held.store, now: () => NOW });
      const theirs = await other.ended;
      expect(theirs.status).toBe('accepted');
      // This writer found nothing stored when it looked, claimed the file, and waited (beginFile).
      expect(held.begins).toHaveLength(1);
      expect(mine.status).toBe('duplicate');
      expect(store.counts()).toMatchObject({ files: 1, results: 6 });
    } finally {
      store.close();
    }
  }, 120_000);

  it('stores a file again, with its sites locked, when another writer stored its samples first: each row once, as SQLite stores the two in turn', async () => {
    const first = export_('first.csv', 1, 16, 'NV26-5', '31.0', '2026-08-07');
    const second = export_('second.csv', 9, 24, 'NV26-6', '27.0', '2026-08-09');
    const db = await database('conflict');
    const store = openPgStore(db.url);
    const held = recordingBegins(store);
    try {
      const other = await holdingWriter(db.url, first, HOLD_MS);
      const mine = await ingestFile(second, { config: config(), store: held.store, now: () => NOW });
      const theirs = await other.ended;
      // The first attempt met the other writer's samples (ON CONFLICT DO NOTHING took none of its
      // own): rolled back and stored again, locking the site (pg_advisory_xact_lock).
      expect(held.begins).toEqual([[], ['tamsin-ridge']]);
      expect([theirs.status, mine.status]).toEqual(['accepted', 'accepted']);
    } finally {
      store.close();
    }
    // The reference: the SQLite store given the two files in the order they committed.
    const sqliteFile = path.join(dir, 'conflict.db');
    const reference = new Store(sqliteFile);
    const expected: Receipt[] = [];
    try {
      for (const file of [first, second])
        expected.push(await ingestFile(file, { config: config(), store: reference, now: () => NOW }));
    } finally {
      reference.close();
    }
    expect(expected[1]!.rows.superseded).toBe(8);
    expect(digestsOf(db.url)).toEqual(digestsOf(sqliteFile));
  }, 120_000);
});
