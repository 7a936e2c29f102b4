import type { RopeHorizon, SiteOutline } from '../../../src/domain/store.js';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openStoreSide, storeDigests, type CopiedTableReport } from '../../../src/store/pg/copyStore.js';
import { parseStoreLocation } from '../../../src/store/location.js';
import { PgStoreReader } from '../../../src/store/pg/reader.js';
import { SqliteReader } from '../../../src/store/reader.js';
import { SyncConnection } from '../../../src/store/pg/syncConnection.js';
import { Store } from '../../../src/store/store.js';
import { spawnCli } from '../../helpers/hardening.js';
import { freshDatabase, type TestDatabase } from '../../helpers/pgServer.js';
import { runCli } from '../../helpers/runCli.js';

let dir: string;
let demoStore: string;
let pgTarget: TestDatabase;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-storecopy-'));
  const demo = await runCli(['demo'], { cwd: dir });
  expect(demo.code, demo.stderr).toBe(0);
  demoStore = path.join(dir, 'data', 'ropewatch.db');
  addAwkwardRefusals(demoStore);
  pgTarget = await freshDatabase('copy');
}, 300_000);

afterAll(async () => {
  await pgTarget?.drop();
  if (dir !== undefined) fs.rmSync(dir, { recursive: true, force: true });
});

/**
 * The demo refuses no row and keeps no file's bytes: a refused file is added by hand, with every
 * byte value, and refused rows whose text holds what COPY's text format escapes (tab, newline,
 * carriage return, backslash, a literal \\N) beside an empty text and a NULL.
 */
function addAwkwardRefusals(file: string): void {
  const db = new Database(file);
  try {
    const bytes = Buffer.from(Array.from({ length: 256 }, (_, i) => i));
    const fileId = db
      .prepare(
        `INSERT INTO files (name, sha256, kind, received_at, status, reason_code, reason, byte_length, bytes)
         VALUES ('odd\tname.csv', 'added-by-the-test', 'unknown', '2026-12-01T12:00:00Z', 'rejected', 'encoding', 'bad bytes', 256, ?)`,
      )
      .run(bytes).lastInsertRowid;
    const insert = db.prepare(
      'INSERT INTO rejected_rows (file_id, line, field, code, value, message) VALUES (?, ?, ?, ?, ?, ?)',
    );
    insert.run(
      fileId,
      1,
      'sample',
      'bad-id',
      'tab\there\nnew line\r\\back\\N',
      'a message with "quotes", a comma; and ünïcødé',
    );
    insert.run(fileId, 2, null, 'empty', '', '\\.');
    insert.run(fileId, 3, 'ct', 'missing', null, 'line 3');
  } finally {
    db.close();
  }
}

function digestsOf(location: string): CopiedTableReport[] {
  const side = openStoreSide(parseStoreLocation(location), 'source');
  try {
    return storeDigests(side);
  } finally {
    side.close();
  }
}

function siteIds(file: string): string[] {
  const db = new Database(file, { readonly: true });
  try {
    return (db.prepare('SELECT DISTINCT site_id FROM ropes ORDER BY site_id').all() as { site_id: string }[]).map(
      (r) => r.site_id,
    );
  } finally {
    db.close();
  }
}

describe('ropewatch store copy', () => {
  it("copies the demo's store to PostgreSQL and back with identical tables and identical inputs per site", async () => {
    const there = await runCli(['store', 'copy', '--from', demoStore, '--to', pgTarget.url]);
    expect(there.code, there.stderr).toBe(0);
    expect(there.stdout).toMatch(/counts and digests agree/);
    expect(there.stdout).not.toContain(new URL(pgTarget.url).password);
    const back = path.join(dir, 'back.db');
    const again = await runCli(['store', 'copy', '--from', pgTarget.url, '--to', back]);
    expect(again.code, again.stderr).toBe(0);

    const original = digestsOf(demoStore);
    // The demo's store holds rows in the tables that matter (common practice, no source: a
    // round trip of empty tables proves nothing).
    const rows = Object.fromEntries(original.map((t) => [t.table, t.rows]));
    for (const table of original) expect(rows[table.table], table.table).toBeGreaterThan(0);
    expect(digestsOf(pgTarget.url)).toEqual(original);
    expect(digestsOf(back)).toEqual(original);

    const sites = siteIds(demoStore);
    expect(sites.length).toBeGreaterThan(0);
    const a = new Store(demoStore, { create: false });
    const b = new Store(back, { create: false });
    try {
      for (const site of sites) expect(b.siteInputs(site), site).toEqual(a.siteInputs(site));
    } finally {
      a.close();
      b.close();
    }
  });

  it('leaves the next ids of a PostgreSQL copy after the largest copied', () => {
    const conn = new SyncConnection(pgTarget.url);
    try {
      conn.query('BEGIN');
      const max = conn.query<{ m: number }>('SELECT max(id) AS m FROM samples').rows[0]?.m ?? 0;
      const next = conn.query<{ id: number }>("INSERT INTO samples (sample_id) VALUES ('not-in-the-demo') RETURNING id")
        .rows[0]?.id;
      expect(next).toBe(max + 1);
      const lastReading = conn.query<{ m: number }>('SELECT max(id) AS m FROM readings').rows[0]?.m ?? 0;
      const nextReading = conn.query<{ id: number }>(
        `INSERT INTO readings (lab_assay, measure, class, call_differs, positive_below, suspect_below, cycle_limit)
         VALUES ('not-in-the-demo', 'ct', 'invalid', 0, 35, 38, 40) RETURNING id`,
      ).rows[0]?.id;
      expect(lastReading).toBeGreaterThan(0);
      expect(nextReading).toBe(lastReading + 1);
    } finally {
      conn.query('ROLLBACK');
      conn.close();
    }
  });

  it('refuses a target that holds rows and leaves it as it was', async () => {
    const before = digestsOf(pgTarget.url);
    const run = await runCli(['store', 'copy', '--from', demoStore, '--to', pgTarget.url]);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(
      /is not empty \(table meta holds \d+ rows\)|is not empty \(table files holds \d+ rows\)/,
    );
    expect(digestsOf(pgTarget.url)).toEqual(before);
  });

  it('tells two stores apart when one row differs', () => {
    const changed = path.join(dir, 'changed.db');
    fs.copyFileSync(demoStore, changed);
    const db = new Database(changed);
    db.prepare('UPDATE results SET ct_raw = ct_raw || ? WHERE id = (SELECT max(id) FROM results)').run(' ');
    db.close();
    const a = digestsOf(demoStore);
    const b = digestsOf(changed);
    expect(b.find((t) => t.table === 'results')?.sha256).not.toBe(a.find((t) => t.table === 'results')?.sha256);
    expect(b.filter((t) => t.table !== 'results')).toEqual(a.filter((t) => t.table !== 'results'));
  });

  it('names the store it cannot reach, without its password', async () => {
    const url = new URL(pgTarget.url);
    url.username = 'nobody_here';
    url.password = 'not-shown-anywhere';
    const run = await runCli(['store', 'copy', '--from', demoStore, '--to', url.toString()]);
    expect(run.code).toBe(2);
    expect(run.stderr).toContain(`store postgres://nobody_here:***@${url.host}`);
    expect(run.stderr).toMatch(/PostgreSQL 28P01|PostgreSQL 28000/);
    expect(run.stderr).not.toContain('not-shown-anywhere');
  });

  it('refuses to copy a store onto itself', async () => {
    const run = await runCli(['store', 'copy', '--from', demoStore, '--to', demoStore]);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/same store/);
  });

  it('runs from the compiled program, whose connection worker loads the compiled module', async () => {
    const target = await freshDatabase('compiled');
    try {
      const run = await spawnCli(['store', 'copy', '--from', demoStore, '--to', target.url]).done;
      expect(run.code, run.stderr).toBe(0);
      expect(digestsOf(target.url)).toEqual(digestsOf(demoStore));
    } finally {
      await target.drop();
    }
  });
});

describe('the PostgreSQL reader on the copied demo store', () => {
  it('answers every read as the SQLite reader does, site by site', async () => {
    const target = await freshDatabase('reader');
    const copied = await runCli(['store', 'copy', '--from', demoStore, '--to', target.url]);
    expect(copied.code, copied.stderr).toBe(0);
    const conn = new SyncConnection(target.url);
    const lite = new Store(demoStore, { create: false });
    const liteDb = new Database(demoStore, { readonly: true });
    const liteReader = new SqliteReader(liteDb, () => false);
    try {
      const pg = new PgStoreReader(conn);
      const sites = siteIds(demoStore);
      for (const site of sites) {
        const inputs = pg.siteInputs(site);
        expect(inputs, site).toEqual(lite.siteInputs(site));
        expect(inputs.results.length, site).toBeGreaterThan(0);
        // The outline and the results of some samples only (a build that keeps earlier rounds' models).
        const some = (outline: SiteOutline) => outline.ropes.slice(-3).map((rope) => rope.sampleId);
        const chosen = pg.siteInputsChosen(site, some);
        expect(chosen, site).toEqual(lite.siteInputsChosen(site, some));
        expect(chosen.outline.reportKeys.size, site).toBeGreaterThan(0);
        expect(chosen.inputs.results.length, site).toBeLessThan(inputs.results.length);
        expect(pg.siteInputsChosen(site, () => undefined).inputs, site).toEqual(inputs);
        // A build whose outputs show the site's middle version reads the ropes from the day its
        // change log names since then.
        const horizon: RopeHorizon = (head, changesSince) =>
          changesSince(Math.floor(head.version / 2)).fromDay ?? undefined;
        const fromDay = pg.siteInputsChosen(site, some, horizon);
        expect(fromDay, site).toEqual(lite.siteInputsChosen(site, some, horizon));
        expect(fromDay.outline.ropesFrom, site).toBeDefined();
        expect(fromDay.outline.ropes.length, site).toBeLessThan(chosen.outline.ropes.length);
        for (let after = 0; after <= inputs.version; after++)
          expect(pg.siteChangesSince(site, after), `${site} after ${after}`).toEqual(
            liteReader.siteChangesSince(site, after),
          );
        expect(pg.plannedPlaced(site), site).toEqual(liteReader.plannedPlaced(site));
        for (const day of [...new Set(inputs.ropes.map((rope) => rope.hungOn))]) {
          expect(pg.ropes(site, day), `${site} from ${day}`).toEqual(liteReader.ropes(site, day));
          expect(pg.reportKeys(site, day), `${site} from ${day}`).toEqual(liteReader.reportKeys(site, day));
        }
        expect(pg.outputsBuilt(path.join(dir, 'outbox'), site)).toEqual(
          lite.outputsBuilt(path.join(dir, 'outbox'), site),
        );
      }
      expect(pg.ropes()).toEqual(lite.ropes());
      expect(pg.currentResults()).toEqual(lite.currentResults());
      expect(pg.plannedRopes()).toEqual(lite.plannedRopes());
      expect(pg.supersessions()).toEqual(lite.supersessions());
      expect(pg.unresolvedSampleIds()).toEqual(lite.unresolvedSampleIds());
      expect(pg.files()).toEqual(lite.files());
      expect(pg.counts()).toEqual(lite.counts());
      for (const file of lite.files()) {
        expect(pg.findFileByHash(file.sha256)).toEqual(lite.findFileByHash(file.sha256));
        expect(pg.rejectedRows(file.id)).toEqual(lite.rejectedRows(file.id));
        expect(pg.openRefusals(file.id)).toEqual(lite.openRefusals(file.id));
      }
      expect(pg.findFileByHash('no such hash')).toBeUndefined();
      expect(pg.getMeta('no such key')).toBeUndefined();
      const raw = new Database(demoStore, { readonly: true });
      const metaKeys = (raw.prepare('SELECT key FROM meta').all() as { key: string }[]).map((r) => r.key);
      raw.close();
      for (const key of metaKeys) expect(pg.getMeta(key), key).toEqual(lite.getMeta(key));
    } finally {
      lite.close();
      liteDb.close();
      conn.close();
      await target.drop();
    }
  });
});
