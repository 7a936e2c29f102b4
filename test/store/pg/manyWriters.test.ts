/**
 * Many writers on one PostgreSQL store: four `ropewatch ingest` processes and two `ropewatch
 * watch` processes, each on an inbox of its own, all on one database and one shared outbox, with
 * every file dropped into two of the six inboxes at once (so two processes race for each file) and
 * two files that touch two sites each. Afterwards every file is stored once, every row once, no
 * process hung (a deadlock would hold the run until its timeout), and the outbox equals what one
 * process makes of the same files on a SQLite store.
 *
 * What decides the races, in PostgreSQL's own terms (PostgreSQL 17 documentation): INSERT ... ON
 * CONFLICT DO NOTHING on the files' hash (a second inserter of the same key waits for the first
 * transaction, then inserts nothing), unique natural keys on the rows, and advisory locks on the
 * sites a retried file or a site's outputs need (13.3.5 Advisory Locks).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  type CliResult,
  generatedSite,
  lookIntoStore,
  NORTHFIELD_HEADER,
  northfieldLine,
  patternSampleId,
  spawnCli,
  writeManySiteConfig,
} from '../../helpers/hardening.js';
import { freshDatabase, type TestDatabase } from '../../helpers/pgServer.js';
import { treeHashes } from '../../helpers/workspace.js';

const SITES = 6;
const SHAPE = { sites: SITES, barnsPerSite: 2, pensPerRow: 6 };
const ROUND_DAYS = ['20260803', '20260817', '20260831'] as const;
const INGESTERS = 4;
const WATCHERS = 2;

let root: string;
let database: TestDatabase;
let configDir: string;

beforeAll(async () => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-manywriters-'));
  configDir = path.join(root, 'config');
  writeManySiteConfig(configDir, SHAPE);
  database = await freshDatabase('many');
});

afterAll(async () => {
  await database?.drop();
  if (root !== undefined) fs.rmSync(root, { recursive: true, force: true });
});

const iso = (day: string) => `${day.slice(0, 4)}-${day.slice(4, 6)}-${day.slice(6)}`;

/** One lab export: both assays for every pen of both barns of each site given, on one round's day. */
function export_(sites: readonly number[], round: number): string {
  const day = ROUND_DAYS[round]!;
  const lines = [NORTHFIELD_HEADER.join(',')];
  let row = 0;
  for (const site of sites) {
    for (let barn = 1; barn <= SHAPE.barnsPerSite; barn++) {
      for (let pen = 1; pen <= 2 * SHAPE.pensPerRow; pen++) {
        const sample = patternSampleId(site, barn, pen, day);
        // A few positives, placed by the site, barn, pen and round so rounds differ.
        const positive = (site * 5 + barn * 3 + pen * 7 + round * 11) % 9 === 0;
        for (const assay of ['PRRSV', 'IAV'] as const) {
          const ct = positive && assay === 'PRRSV' ? (26 + ((pen + round) % 8)).toFixed(1) : 'Undetermined';
          lines.push(northfieldLine(`NV-${sites.join('')}-${round}-${row++}`, sample, assay, ct, iso(day)));
        }
      }
    }
  }
  return `${lines.join('\n')}\n`;
}

/** The files of the run: two rounds of every site alone, then a third round of sites in pairs. */
function files(): { name: string; text: string; rows: number }[] {
  const out: { name: string; text: string; rows: number }[] = [];
  for (let round = 0; round < 2; round++)
    for (let site = 0; site < SITES; site++) out.push(file(`nvdl_s${site}_r${round + 1}.csv`, export_([site], round)));
  for (let pair = 0; pair < SITES / 2; pair++)
    out.push(file(`nvdl_pair${pair}_r3.csv`, export_([2 * pair, 2 * pair + 1], 2)));
  return out;
}

function file(name: string, text: string) {
  return { name, text, rows: text.trimEnd().split('\n').length - 1 };
}

const flagsFor = (db: string, inbox: string, outbox: string) => [
  '--config',
  configDir,
  '--db',
  db,
  '--inbox',
  inbox,
  '--outbox',
  outbox,
];

/** Files not yet moved to archive/ or rejected/. */
const waiting = (inbox: string) => fs.readdirSync(inbox).filter((name) => name.endsWith('.csv'));

async function until(condition: () => boolean, timeoutMs: number, what: string | (() => string)): Promise<void> {
  const started = Date.now();
  while (!condition()) {
    if (Date.now() - started > timeoutMs)
      throw new Error(`timed out waiting for ${typeof what === 'string' ? what : what()}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

/**
 * The outbox's files that say what the store holds, by their SHA-256 (receipts carry their times
 * and process; hidden files are bookkeeping). Two files depend on the order writers happened to
 * commit and deliver in, not on what is stored: results.csv names each result by its store id
 * (ids are handed out in commit order), so its rows are compared without result_id and with
 * superseded_by as whether a report was replaced; alerts.jsonl is the log of deliveries, each
 * line stamped when it was seen, in the order processes happened to deliver: it is checked on its
 * own (feedKeys) rather than compared.
 */
function outputs(outbox: string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [file, hash] of Object.entries(treeHashes(outbox, ['receipts']))) {
    if (file.split('/').some((part) => part.startsWith('.'))) continue;
    const text = () => fs.readFileSync(path.join(outbox, file), 'utf8');
    if (file.endsWith('/results.csv')) {
      const rows = parse(text(), { columns: true }) as Record<string, string>[];
      out[file] = JSON.stringify(
        rows.map(({ result_id: _id, superseded_by: replacedBy, ...row }) => ({ ...row, replaced: replacedBy !== '' })),
      );
    } else if (file !== 'alerts.jsonl') out[file] = hash;
  }
  return out;
}

/** The keys of the alerts the feed delivered, in order. */
const feedKeys = (outbox: string): string[] =>
  fs
    .readFileSync(path.join(outbox, 'alerts.jsonl'), 'utf8')
    .trimEnd()
    .split('\n')
    .map((line) => (JSON.parse(line) as { key: string }).key);

/** The keys of the alerts each site's alerts.json holds now. */
const currentAlertKeys = (outbox: string): string[] =>
  (fs.readdirSync(outbox, { withFileTypes: true }) as fs.Dirent[])
    .filter((entry) => entry.isDirectory() && fs.existsSync(path.join(outbox, entry.name, 'alerts.json')))
    .flatMap(
      (entry) =>
        (
          JSON.parse(fs.readFileSync(path.join(outbox, entry.name, 'alerts.json'), 'utf8')) as {
            alerts: { key: string }[];
          }
        ).alerts,
    )
    .map((alert) => alert.key);

describe('four ingest processes and two watchers on one PostgreSQL store', () => {
  it('store every file and every row once, without deadlock, and leave the outbox one process makes of the same files', async () => {
    const all = files();
    const inboxes = Array.from({ length: INGESTERS + WATCHERS }, (_, i) => path.join(root, `inbox-${i}`));
    for (const inbox of inboxes) fs.mkdirSync(inbox, { recursive: true });
    const outbox = path.join(root, 'outbox');
    // Each file into two inboxes: its own and one further along, so every pair of processes races.
    const placed = (k: number) => [k % inboxes.length, (k + 1 + (k % (inboxes.length - 1))) % inboxes.length];
    const drop = (which: (inbox: number) => boolean) => {
      all.forEach((entry, k) => {
        for (const inbox of placed(k))
          if (which(inbox)) fs.writeFileSync(path.join(inboxes[inbox]!, entry.name), entry.text);
      });
    };

    const watchers = inboxes.slice(INGESTERS).map((inbox) => {
      const run = spawnCli(['watch', '--stable-ms', '100', ...flagsFor(database.url, inbox, outbox)]);
      let out = '';
      run.child.stdout!.on('data', (chunk: Buffer) => (out += chunk.toString()));
      return { ...run, inbox, out: () => out };
    });
    await until(() => watchers.every((watcher) => watcher.out().includes('watching')), 60_000, 'the watchers to start');

    drop((inbox) => inbox < INGESTERS);
    const ingests = inboxes.slice(0, INGESTERS).map((inbox) => {
      const names = waiting(inbox).map((name) => path.join(inbox, name));
      return spawnCli(['ingest', ...names, ...flagsFor(database.url, inbox, outbox)]).done;
    });
    drop((inbox) => inbox >= INGESTERS);

    const ingested: CliResult[] = await Promise.all(ingests);
    for (const run of ingested) expect(run.code, run.stderr).toBe(0);
    await until(
      () => watchers.every((watcher) => waiting(watcher.inbox).length === 0),
      180_000,
      () =>
        `the watchers to take their files; still waiting: ${watchers.map((w) => waiting(w.inbox).join(' ')).join(' | ')}; said: ${watchers.map((w) => w.out()).join(' | ')}`,
    );
    // A watcher that has moved its last file may still be writing that file's outputs: wait for
    // the outbox to stay the same for two seconds.
    let last = JSON.stringify(outputs(outbox));
    let quietSince = Date.now();
    await until(
      () => {
        const now = JSON.stringify(outputs(outbox));
        if (now !== last) [last, quietSince] = [now, Date.now()];
        return Date.now() - quietSince > 2000;
      },
      120_000,
      'the outbox to settle',
    );
    for (const watcher of watchers) watcher.child.kill('SIGTERM');
    const stopped = await Promise.all(watchers.map((watcher) => watcher.done));
    for (const run of stopped) expect(run.code, run.stderr).toBe(0);
    for (const inbox of inboxes) expect(waiting(inbox), inbox).toEqual([]);

    // Each file was dropped twice: one process stored it, the other found it stored (or, when it
    // came second by a whole file, found it archived by the other and skipped it).
    const said = [...ingested.map((run) => run.stdout), ...watchers.map((watcher) => watcher.out())].join('\n');
    for (const entry of all) {
      const name = entry.name.replace('.', '\\.');
      expect(said.match(new RegExp(`accepted +${name}`, 'g')) ?? [], entry.name).toHaveLength(1);
      expect(said.match(new RegExp(`skipped +${name}`, 'g')) ?? [], entry.name).toHaveLength(1);
    }

    const look = lookIntoStore(database.url);
    expect(look.integrity).toBe('ok');
    // Every file once, accepted, with all its rows; no row twice.
    expect(look.files.map((f) => f.name).sort()).toEqual(all.map((f) => f.name).sort());
    for (const stored of look.files) expect(stored.status, stored.name).toBe('accepted');
    expect(look.resultsByFile).toEqual(Object.fromEntries(all.map((f) => [f.name, f.rows])));
    expect(look.results).toBe(all.reduce((sum, f) => sum + f.rows, 0));

    // One process, one SQLite store, the same files in one go, then its outputs.
    const single = path.join(root, 'single');
    const singleInbox = path.join(single, 'inbox');
    const singleOutbox = path.join(single, 'outbox');
    fs.mkdirSync(singleInbox, { recursive: true });
    for (const entry of all) fs.writeFileSync(path.join(singleInbox, entry.name), entry.text);
    const singleFlags = flagsFor(path.join(single, 'store.db'), singleInbox, singleOutbox);
    const one = await spawnCli(['ingest', ...all.map((entry) => path.join(singleInbox, entry.name)), ...singleFlags])
      .done;
    expect(one.code, one.stderr).toBe(0);
    expect(lookIntoStore(path.join(single, 'store.db')).results).toBe(look.results);

    const shared = outputs(outbox);
    // Every site has its three rounds' summaries (an empty outbox would compare equal to an empty one).
    for (let site = 0; site < SITES; site++) {
      const summaries = Object.keys(shared).filter(
        (name) => name.startsWith(`${generatedSite(site).id}/`) && name.endsWith('/summary.csv'),
      );
      expect(summaries, generatedSite(site).id).toHaveLength(ROUND_DAYS.length);
    }
    expect(shared).toEqual(outputs(singleOutbox));
    // Six processes delivered alerts into one feed: each alert once, and every alert standing now among them.
    const delivered = feedKeys(outbox);
    expect(new Set(delivered).size).toBe(delivered.length);
    const standing = currentAlertKeys(outbox);
    expect(standing.length).toBeGreaterThan(0);
    expect(delivered).toEqual(expect.arrayContaining(standing));
  }, 420_000);
});
