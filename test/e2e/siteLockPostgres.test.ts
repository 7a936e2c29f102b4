/**
 * Two machines sharing one PostgreSQL store share no outbox, so no lock file: the store's lock on
 * a site keeps a second build of the same site waiting until the first lets it go. A session
 * holds the site's advisory lock (PostgreSQL 17 documentation, "Advisory Locks": a session-level
 * lock is held until released, and another session asking for it waits); `report` from another
 * process, into another outbox, must wait on it, then build.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { SyncConnection } from '../../src/store/pg/syncConnection.js';
import { lockSitesPg } from '../../src/store/pg/tidyFacts.js';
import { spawnCli } from '../helpers/hardening.js';
import { freshDatabase, type TestDatabase } from '../helpers/pgServer.js';
import { runCli } from '../helpers/runCli.js';
import { makeWorkspace, type TestWorkspace } from '../helpers/workspace.js';

let pg: TestDatabase;
let first: TestWorkspace;
let second: TestWorkspace;

const flags = (ws: TestWorkspace) => [
  '--config',
  ws.paths.configDir,
  '--db',
  pg.url,
  '--inbox',
  ws.paths.inbox,
  '--outbox',
  ws.paths.outbox,
];

beforeAll(async () => {
  pg = await freshDatabase('sitelock');
  first = makeWorkspace();
  second = makeWorkspace();
  const site = first.config().siteById.get('HOLLOW-CREEK')!;
  const texts: [string, string | Buffer][] = [
    ['ropes.csv', ropeSheet(site, [{ sampleId: 'C1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' }])],
    [
      'nvdl_r.csv',
      northfieldExport([{ sampleId: 'C1', assay: 'PRRSV', ct: 30, collectedOn: '2026-08-03' }], '2026-08-06', 1),
    ],
  ];
  const files = texts.map(([name, text]) => {
    const file = path.join(first.paths.inbox, name);
    fs.writeFileSync(file, text);
    return file;
  });
  const ingest = await runCli(['ingest', ...flags(first), ...files]);
  expect(ingest.code, ingest.stderr).toBe(0);
}, 120_000);

afterAll(async () => {
  first?.cleanup();
  second?.cleanup();
  await pg?.drop();
});

describe("the store's lock on a site, on PostgreSQL", () => {
  it('keeps a build of the site from another process waiting until the holder lets go, then lets it build', async () => {
    const holder = new SyncConnection(pg.url);
    const watcher = new SyncConnection(pg.url);
    try {
      const release = lockSitesPg(holder, ['hollow-creek']);
      const report = spawnCli(['report', '--site', 'hollow-creek', '--jobs', '1', ...flags(second)]);
      let ended = false;
      void report.done.then(() => (ended = true));
      // The other process is seen waiting for an advisory lock the holder has.
      const waiting = () =>
        watcher.query<{ n: number }>(
          `SELECT count(*)::int AS n FROM pg_locks
              WHERE locktype = 'advisory' AND NOT granted
                AND database = (SELECT oid FROM pg_database WHERE datname = current_database())`,
        ).rows[0]!.n;
      const deadline = Date.now() + 60_000;
      while (waiting() === 0 && !ended) {
        if (Date.now() > deadline) throw new Error('no process waited for the site lock');
        await new Promise((resolve) => setTimeout(resolve, 100));
      }
      expect(ended).toBe(false);
      expect(fs.existsSync(path.join(second.paths.outbox, 'hollow-creek'))).toBe(true);
      expect(fs.readdirSync(path.join(second.paths.outbox, 'hollow-creek')).filter((f) => f.startsWith('r'))).toEqual(
        [],
      );
      release();
      const result = await report.done;
      expect(result.code, result.stderr).toBe(0);
      const rounds = fs.readdirSync(path.join(second.paths.outbox, 'hollow-creek')).filter((f) => /^r\d{2}-/.test(f));
      expect(rounds.length).toBeGreaterThan(0);
      expect(fs.existsSync(path.join(second.paths.outbox, 'hollow-creek', rounds[0]!, 'summary.csv'))).toBe(true);
      expect(waiting()).toBe(0);
    } finally {
      watcher.close();
      holder.close();
    }
  }, 120_000);
});
