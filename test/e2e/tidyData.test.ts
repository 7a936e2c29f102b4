/**
 * The demo's data for analysts: the tidy tables (one row per observation, totals equal to the
 * summaries'), the store's views and the README's R and Python snippets, every JSON output
 * against its shipped JSON Schema, and `ropewatch export`. The demo runs once for the file.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { CLASS_SEVERITY, type ResultClass } from '../../src/interpret/classify.js';
import { numberText } from '../../src/report/jsonText.js';
import { TIDY_TABLES } from '../../src/report/tidy/tidyTables.js';
import { TIDY_VIEWS } from '../../src/store/tidyFacts.js';
import { runCli } from '../helpers/runCli.js';
import { readmeSection, readmeSnippet } from '../helpers/readme.js';
import { sqliteOnly, testBackend } from '../helpers/testStore.js';
import { makeWorkspace, type TestWorkspace } from '../helpers/workspace.js';

const SITES = ['hollow-creek', 'tamsin-ridge'];
const REPO = path.resolve(path.dirname(new URL(import.meta.url).pathname), '..', '..');

let ws: TestWorkspace;
beforeAll(async () => {
  ws = makeWorkspace();
  const run = await runCli(['demo', ...ws.cliFlags]);
  expect(run.code, run.stderr).toBe(0);
}, 600_000);
afterAll(() => ws?.cleanup());

type Row = Record<string, string>;
const readCsv = (file: string): Row[] => parse(fs.readFileSync(file, 'utf8'), { columns: true }) as Row[];
const siteFile = (site: string, name: string) => path.join(ws.paths.outbox, site, name);

interface SummaryJson {
  round: { number: number; id: string };
  barns: {
    barnId: string;
    ropesHung: number;
    ropesReturned: number;
    assays: { assayId: string; tested: number; positive: number; suspect: number; negative: number; invalid: number }[];
  }[];
}
function summaries(site: string): SummaryJson[] {
  const dir = path.join(ws.paths.outbox, site);
  return fs
    .readdirSync(dir)
    .filter((name) => /^r\d+-/.test(name))
    .map((name) => JSON.parse(fs.readFileSync(path.join(dir, name, 'summary.json'), 'utf8')) as SummaryJson);
}

describe('the tidy tables of the demo', () => {
  it('have one row per observation: no two rows share a key, and no cell holds a list', () => {
    // Wickham 2014, "Tidy Data": each observation one row, each value one cell.
    const prose = new Set(['action', 'detail', 'value_as_written', 'lab_call', 'key']);
    for (const site of SITES) {
      for (const table of TIDY_TABLES) {
        const rows = readCsv(siteFile(site, table.file));
        expect(rows.length, `${site} ${table.file}`).toBeGreaterThan(0);
        expect(Object.keys(rows[0]!)).toEqual(table.columns.map((column) => column.name));
        const keys = rows.map((row) => table.key.map((name) => row[name]).join('|'));
        expect(new Set(keys).size, `${site} ${table.file} keys`).toBe(rows.length);
        for (const row of rows)
          for (const [name, cell] of Object.entries(row))
            if (!prose.has(name)) expect(cell, `${site} ${table.file} ${name}`).not.toMatch(/[\s,;]/);
      }
    }
  });

  it('count in rounds.csv what the round summaries count per barn and assay', () => {
    for (const site of SITES) {
      const rows = readCsv(siteFile(site, 'rounds.csv'));
      let compared = 0;
      for (const summary of summaries(site)) {
        for (const barn of summary.barns) {
          for (const assay of barn.assays) {
            const row = rows.find(
              (entry) =>
                entry.round === String(summary.round.number) &&
                entry.barn === barn.barnId &&
                entry.assay === assay.assayId,
            );
            expect(row, `${site} r${summary.round.number} ${barn.barnId} ${assay.assayId}`).toBeDefined();
            for (const name of ['tested', 'positive', 'suspect', 'negative', 'invalid'] as const)
              expect(row![name], `${site} r${summary.round.number} ${barn.barnId} ${assay.assayId} ${name}`).toBe(
                String(assay[name]),
              );
            expect(row!.ropes_hung).toBe(String(barn.ropesHung));
            expect(row!.ropes_returned).toBe(String(barn.ropesReturned));
            compared++;
          }
        }
      }
      expect(compared).toBe(rows.filter((row) => row.assay !== '').length);
    }
  });

  it("give in results.csv, pen by pen, the classes the summaries count (the worst current result of each pen's ropes)", () => {
    // The round model's rule (README, summary.csv `class`): a pen stands for the worst of its
    // ropes' results; a positive pool's pens read suspect. Recounted here from the result rows.
    for (const site of SITES) {
      const rows = readCsv(siteFile(site, 'results.csv')).filter((row) => row.superseded_by === '');
      const worst = new Map<string, ResultClass>();
      for (const row of rows) {
        const own = row.class as ResultClass;
        const reading: ResultClass = row.pool !== '' && own === 'positive' ? 'suspect' : own;
        const key = `${row.round}|${row.barn}|${row.assay}|${row.pen}`;
        const before = worst.get(key);
        if (before === undefined || CLASS_SEVERITY[reading] > CLASS_SEVERITY[before]) worst.set(key, reading);
      }
      for (const summary of summaries(site)) {
        for (const barn of summary.barns) {
          for (const assay of barn.assays) {
            const prefix = `${summary.round.number}|${barn.barnId}|${assay.assayId}|`;
            const counts: Record<ResultClass, number> = { positive: 0, suspect: 0, negative: 0, invalid: 0 };
            for (const [key, value] of worst) if (key.startsWith(prefix)) counts[value]++;
            const label = `${site} r${summary.round.number} ${barn.barnId} ${assay.assayId}`;
            expect(counts, label).toEqual({
              positive: assay.positive,
              suspect: assay.suspect,
              negative: assay.negative,
              invalid: assay.invalid,
            });
          }
        }
      }
    }
  });

  it('list in alerts.csv every alert of alerts.json, once', () => {
    for (const site of SITES) {
      const rows = readCsv(siteFile(site, 'alerts.csv'));
      const json = JSON.parse(fs.readFileSync(siteFile(site, 'alerts.json'), 'utf8')) as {
        alerts: { key: string; kind: string }[];
      };
      expect(rows.map((row) => row.key).sort()).toEqual(json.alerts.map((alert) => alert.key).sort());
    }
  });
});

describe("the store's views", () => {
  it("have the tidy tables' columns, in order, and give the rows the files hold", () => {
    const sql = ws.sql();
    for (const table of TIDY_TABLES) {
      const view = TIDY_VIEWS[table.name];
      // A view's columns in order: SQLite's table_info (sqlite.org/pragma.html), PostgreSQL's
      // information_schema.columns by ordinal_position (PostgreSQL 17 documentation, 35.17).
      const columns = (
        testBackend() === 'sqlite'
          ? sql.all<{ name: string }>(`SELECT name FROM pragma_table_info('${view}') ORDER BY cid`)
          : sql.all<{ name: string }>(
              `SELECT column_name AS name FROM information_schema.columns WHERE table_name = '${view}' ORDER BY ordinal_position`,
            )
      ).map((column) => column.name);
      expect(columns).toEqual(table.columns.map((column) => column.name));
      for (const site of SITES) {
        const { n } = sql.get<{ n: number }>(`SELECT COUNT(*) AS n FROM ${view} WHERE site = ?`, site)!;
        expect(n, `${site} ${table.name}`).toBe(readCsv(siteFile(site, table.file)).length);
      }
    }
  });

  const snippet = (language: string): string =>
    readmeSnippet(
      readmeSection('### SQLite', readmeSection('## Reading the store from R or Python')),
      language,
    ).replaceAll('data/ropewatch.db', ws.paths.dbFile);
  const expected = () => ({
    results: readCsv(siteFile('hollow-creek', 'results.csv')).filter((row) => row.superseded_by === '').length,
    rounds: readCsv(siteFile('hollow-creek', 'rounds.csv')).length,
  });

  // The README's SQLite snippets; its PostgreSQL ones run in test/store/pg/analystViews.test.ts.
  sqliteOnly(() => {
    it("run the README snippets' SQL against the demo store and get the tables' rows", () => {
      const db = new Database(ws.paths.dbFile, { readonly: true });
      try {
        for (const language of ['r', 'python']) {
          const queries = [...snippet(language).matchAll(/"(SELECT [^"]+)"/g)].map((match) => match[1]!);
          expect(queries).toHaveLength(2);
          expect(db.prepare(queries[0]!).all('hollow-creek')).toHaveLength(expected().results);
          expect(db.prepare(queries[1]!).all('hollow-creek')).toHaveLength(expected().rounds);
        }
      } finally {
        db.close();
      }
    });

    it('run the Python snippet (sqlite3 + pandas) where python3 and pandas are installed', () => {
      const probe = spawnSync('python3', ['-c', 'import pandas'], { encoding: 'utf8' });
      if (probe.status !== 0) return; // no interpreter or no pandas here: the SQL above was run instead
      const code = `${snippet('python')}\nprint("ROWS", len(results), len(rounds))\n`;
      const run = spawnSync('python3', ['-c', code], { encoding: 'utf8' });
      expect(run.status, run.stderr).toBe(0);
      expect(run.stdout).toContain(`ROWS ${expected().results} ${expected().rounds}`);
    });

    it('run the R snippet (DBI + RSQLite) where Rscript and those packages are installed', () => {
      const probe = spawnSync('Rscript', ['-e', 'library(DBI); library(RSQLite)'], { encoding: 'utf8' });
      if (probe.status !== 0) return; // no interpreter or packages here: the SQL above was run instead
      const code = `${snippet('r').replace('dbDisconnect(con)', '')}\ncat("ROWS", nrow(results), nrow(rounds), "\\n")\ndbDisconnect(con)\n`;
      const run = spawnSync('Rscript', ['-e', code], { encoding: 'utf8' });
      expect(run.status, run.stderr).toBe(0);
      expect(run.stdout).toContain(`ROWS ${expected().results} ${expected().rounds}`);
    });
  });
});

describe('JSON outputs against the shipped JSON Schemas', () => {
  const schemaFor = (tag: string) => {
    const name = tag.replace(/^ropewatch\.([a-z0-9-]+)\/(\d+)$/, '$1.v$2.schema.json');
    return z.fromJSONSchema(JSON.parse(fs.readFileSync(path.join(REPO, 'schemas', name), 'utf8')));
  };
  const jsonFiles = (): string[] =>
    fs
      .readdirSync(ws.paths.outbox, { recursive: true, withFileTypes: true })
      // Hidden files (.built-rounds.json) are ropewatch's own bookkeeping, not outputs for readers.
      .filter((entry) => entry.isFile() && /\.jsonl?$/.test(entry.name) && !entry.name.startsWith('.'))
      .map((entry) => path.join(entry.parentPath, entry.name));
  const tagOf = (file: string, value: { schema?: string }): string =>
    file.endsWith('.jsonl')
      ? 'ropewatch.alert-feed-line/1'
      : file.includes(`${path.sep}receipts${path.sep}`)
        ? 'ropewatch.receipt/1'
        : value.schema!;

  it('validates every JSON file and every alerts.jsonl line of the demo against the schema its tag names', () => {
    // The schema files are read back through zod's JSON Schema reader (z.fromJSONSchema), so the
    // check goes through the shipped JSON, not through the definitions that generated it.
    const seen = new Set<string>();
    for (const file of jsonFiles()) {
      const text = fs.readFileSync(file, 'utf8');
      const values = file.endsWith('.jsonl')
        ? text
            .trim()
            .split('\n')
            .map((line) => JSON.parse(line))
        : [JSON.parse(text)];
      for (const value of values) {
        const tag = tagOf(file, value);
        seen.add(tag);
        const result = schemaFor(tag).safeParse(value);
        expect(
          result.success,
          `${path.relative(ws.paths.outbox, file)}: ${JSON.stringify(result.error?.issues.slice(0, 3))}`,
        ).toBe(true);
      }
    }
    expect([...seen].sort()).toEqual([
      'ropewatch.alert-feed-line/1',
      'ropewatch.clusters/1',
      'ropewatch.next-round/1',
      'ropewatch.receipt/1',
      'ropewatch.round-summary/2',
      'ropewatch.site-alerts/1',
      'ropewatch.site-digest/1',
    ]);
  });

  it('refuses a copy with a wrong type, a missing field or a field it does not know', () => {
    const file = siteFile(
      'hollow-creek',
      path.join(
        fs.readdirSync(path.join(ws.paths.outbox, 'hollow-creek')).find((name) => name.startsWith('r03'))!,
        'summary.json',
      ),
    );
    const summary = JSON.parse(fs.readFileSync(file, 'utf8')) as Record<string, Record<string, unknown>>;
    const schema = schemaFor('ropewatch.round-summary/2');
    expect(schema.safeParse(summary).success).toBe(true);
    expect(schema.safeParse({ ...summary, round: { ...summary.round, number: 'three' } }).success).toBe(false);
    const { program: _dropped, ...withoutProgram } = summary;
    expect(schema.safeParse(withoutProgram).success).toBe(false);
    expect(schema.safeParse({ ...summary, surprise: 1 }).success).toBe(false);
  });

  it('finds no float noise in any JSON output (no run of nine 9s or 0s after the point)', () => {
    for (const file of jsonFiles()) expect(fs.readFileSync(file, 'utf8'), file).not.toMatch(/\.\d*(9{9}|0{9})\d/);
  });
});

describe('ropewatch export', () => {
  it('writes the tables the outbox holds into --out, byte for byte', async () => {
    const out = path.join(ws.root, 'export-csv');
    const run = await runCli(['export', '--site', 'hollow-creek', '--out', out, ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(0);
    for (const table of TIDY_TABLES)
      expect(fs.readFileSync(path.join(out, `${table.name}.csv`), 'utf8')).toBe(
        fs.readFileSync(siteFile('hollow-creek', table.file), 'utf8'),
      );
  });

  it('prints the three tables as one JSON document valid against its schema, each number as its CSV cell', async () => {
    const run = await runCli(['export', '--site', 'HCF', '--format', 'json', ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(0);
    const document = JSON.parse(run.stdout) as Record<string, unknown>;
    const schema = z.fromJSONSchema(
      JSON.parse(fs.readFileSync(path.join(REPO, 'schemas', 'tidy-export.v1.schema.json'), 'utf8')),
    );
    expect(schema.safeParse(document).success).toBe(true);
    for (const table of TIDY_TABLES) {
      const csv = readCsv(siteFile('hollow-creek', table.file));
      const rows = document[table.name] as Record<string, string | number | boolean | null>[];
      expect(rows).toHaveLength(csv.length);
      rows.forEach((row, index) => {
        for (const column of table.columns) {
          const value = row[column.name];
          const text = value === null ? '' : typeof value === 'number' ? numberText(value) : String(value);
          expect(text, `${table.name} row ${index + 2} ${column.name}`).toBe(
            csv[index]![column.name]!.replace(/^'/, ''),
          );
        }
      });
    }
  });

  it('keeps the rounds that began within --from and --to, and writes one table as CSV on standard output', async () => {
    const all = readCsv(siteFile('hollow-creek', 'rounds.csv'));
    const starts = [...new Set(all.map((row) => row.round_start!))].sort();
    const [from, to] = [starts[2]!, starts[4]!];
    const run = await runCli([
      'export',
      '--site',
      'hollow-creek',
      '--table',
      'rounds',
      '--from',
      from,
      '--to',
      to,
      ...ws.cliFlags,
    ]);
    expect(run.code, run.stderr).toBe(0);
    const rows = parse(run.stdout, { columns: true }) as Row[];
    expect(rows.length).toBe(all.filter((row) => row.round_start! >= from && row.round_start! <= to).length);
    expect(new Set(rows.map((row) => row.round_start))).toEqual(new Set(starts.slice(2, 5)));
  });

  it('refuses with exit 2: CSV of three tables on standard output, a bad date, an unknown site or format', async () => {
    // README, exit codes: 2 for a usage error.
    for (const argv of [
      ['--site', 'hollow-creek'],
      ['--site', 'hollow-creek', '--table', 'rounds', '--from', '2026-13-01'],
      ['--site', 'hollow-creek', '--table', 'rounds', '--from', '2026-10-01', '--to', '2026-09-01'],
      ['--site', 'nowhere', '--format', 'json'],
      ['--site', 'hollow-creek', '--format', 'xml'],
      ['--site', 'hollow-creek', '--table', 'pens'],
    ]) {
      const run = await runCli(['export', ...argv, ...ws.cliFlags]);
      expect(run.code, argv.join(' ')).toBe(2);
      expect(run.stdout).toBe('');
    }
  });
});
