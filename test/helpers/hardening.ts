/**
 * Helpers for the hardening tests and the ingest/recompute benchmarks: generated lab exports
 * (valid rows mixed with junk rows), a many-site configuration with sample-pattern IDs, the CLI
 * as a child process, and read-only looks into a store file.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { NORTHFIELD_HEADER } from '../../src/demo/scenario.js';
import { isPostgresLocation, parseStoreLocation } from '../../src/store/location.js';
import { openStore } from '../../src/store/openStore.js';
import { SyncConnection } from '../../src/store/pg/syncConnection.js';
import { testStoreLocation } from './testStore.js';
import { compiledBin } from './compiledCli.js';

export const REPO_ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');

export { NORTHFIELD_HEADER };
export const NORTHFIELD_ASSAYS = { PRRSV: 'PRRSV NA/EU RT-PCR', IAV: 'Influenza A Matrix RT-PCR' } as const;

function csvCell(value: string): string {
  return /[",;\n\r]/.test(value) ? `"${value.replace(/"/g, '""')}"` : value;
}

/** One Northfield data line (no newline) for an unresolved lab sample ID. */
export function northfieldLine(
  caseNo: string,
  sampleId: string,
  assay: keyof typeof NORTHFIELD_ASSAYS,
  ct: string,
  collectedOn = '2026-08-03',
  reportedOn = '2026-08-06',
): string {
  return [
    caseNo,
    sampleId,
    NORTHFIELD_ASSAYS[assay],
    ct,
    ct === '' || ct === 'Undetermined' ? 'Negative' : 'Positive',
    'PASS',
    collectedOn,
    reportedOn,
    'Final',
  ]
    .map(csvCell)
    .join(',');
}

/**
 * A Northfield export of `rows` result rows for sample IDs no rope sheet names (they are stored
 * as unresolved results, which keeps the outputs step trivial: the file touches no site).
 * Every row is distinct (its own sample ID), so `rows` rows are stored.
 */
export function bigNorthfieldExport(rows: number, prefix = 'LAB'): Buffer {
  const lines = [NORTHFIELD_HEADER.join(',')];
  for (let i = 0; i < rows; i++) {
    const sample = `${prefix}-${String(Math.floor(i / 2)).padStart(7, '0')}`;
    const ct = i % 7 === 0 ? (20 + (i % 150) / 10).toFixed(1) : 'Undetermined';
    lines.push(
      northfieldLine(`NV26-${String(Math.floor(i / 2)).padStart(7, '0')}`, sample, i % 2 === 0 ? 'PRRSV' : 'IAV', ct),
    );
  }
  return Buffer.from(lines.join('\n') + '\n', 'utf8');
}

export interface CliResult {
  code: number | null;
  signal: NodeJS.Signals | null;
  stdout: string;
  stderr: string;
}

/** `node dist/cli/bin.js ...args` (the compiled program, as installed) from the repository root. */
export function spawnCli(args: readonly string[]): { child: ChildProcess; done: Promise<CliResult> } {
  const child = spawn(process.execPath, [compiledBin(), ...args], {
    cwd: REPO_ROOT,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let stdout = '';
  let stderr = '';
  child.stdout!.on('data', (chunk: Buffer) => (stdout += chunk.toString()));
  child.stderr!.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
  const done = new Promise<CliResult>((resolve, reject) => {
    child.on('error', reject);
    child.on('close', (code, signal) => resolve({ code, signal, stdout, stderr }));
  });
  return { child, done };
}

export interface StoreLook {
  integrity: string;
  files: { name: string; status: string; reasonCode: string | null; rowsAccepted: number; rowsRejected: number }[];
  /** Result rows per file name. */
  resultsByFile: Record<string, number>;
  results: number;
  ropes: number;
  rejectedRows: number;
}

const EMPTY_LOOK = { files: [], resultsByFile: {}, results: 0, ropes: 0, rejectedRows: 0 };

/** What a store holds, from plain queries any SQL engine answers alike. */
function storeContents(all: <Row>(sql: string) => Row[]): Omit<StoreLook, 'integrity'> {
  const files = all<StoreLook['files'][number]>(
    'SELECT name, status, reason_code AS "reasonCode", rows_accepted AS "rowsAccepted", rows_rejected AS "rowsRejected" FROM files ORDER BY id',
  );
  const resultsByFile: Record<string, number> = {};
  for (const row of all<{ name: string; n: number }>(
    'SELECT f.name AS name, COUNT(*) AS n FROM results r JOIN files f ON f.id = r.file_id GROUP BY f.name',
  ))
    resultsByFile[row.name] = row.n;
  const one = (sql: string) => all<{ n: number }>(sql)[0]!.n;
  return {
    files,
    resultsByFile,
    results: one('SELECT COUNT(*) AS n FROM results'),
    ropes: one('SELECT COUNT(*) AS n FROM ropes'),
    rejectedRows: one('SELECT COUNT(*) AS n FROM rejected_rows'),
  };
}

/**
 * Opens a SQLite store file read-only (no migrations, no lock held after), or connects to a
 * PostgreSQL store (a URL), and reports what it holds. `integrity` is 'ok' when SQLite's
 * structural and foreign-key checks find nothing; on PostgreSQL, which checks every declared key
 * on each write (PostgreSQL 17 documentation, 5.5.5), when no foreign key was left NOT VALID.
 */
export function lookIntoStore(location: string): StoreLook {
  if (isPostgresLocation(location)) {
    const conn = new SyncConnection(location);
    try {
      const all = <Row>(sql: string) => conn.query<Row>(sql).rows;
      if (all("SELECT 1 FROM pg_tables WHERE schemaname = 'public' AND tablename = 'files'").length === 0)
        return { integrity: 'ok', ...EMPTY_LOOK };
      const unchecked = all("SELECT conname FROM pg_constraint WHERE contype = 'f' AND NOT convalidated").length;
      return {
        integrity: unchecked === 0 ? 'ok' : `${unchecked} foreign key(s) not validated`,
        ...storeContents(all),
      };
    } finally {
      conn.close();
    }
  }
  if (!fs.existsSync(location)) return { integrity: 'ok', ...EMPTY_LOOK };
  const db = new Database(location, { readonly: true });
  try {
    const tables = new Set(
      (db.prepare("SELECT name FROM sqlite_master WHERE type = 'table'").all() as { name: string }[]).map(
        (row) => row.name,
      ),
    );
    // 'ok' only when both SQLite's structural check and its foreign-key check find nothing.
    const structure = (db.pragma('integrity_check', { simple: true }) as string) ?? 'unknown';
    const brokenReferences = (db.pragma('foreign_key_check') as unknown[]).length;
    const integrity =
      brokenReferences === 0 ? structure : `${structure}; ${brokenReferences} broken foreign key reference(s)`;
    if (!tables.has('files')) return { integrity, ...EMPTY_LOOK };
    return { integrity, ...storeContents(<Row>(sql: string) => db.prepare(sql).all() as Row[]) };
  } finally {
    db.close();
  }
}

export interface ManySiteOptions {
  sites: number;
  barnsPerSite: number;
  /** Pens per row; two rows per barn, numbered continuously (1..2*pensPerRow). */
  pensPerRow: number;
  /**
   * Permutations and simulated outbreaks of the spatial review; the tests' small figures (99 and
   * 100) by default, the program's own defaults with `programDefaults: true`.
   */
  programDefaults?: boolean;
}

/** Site id, code and sample-pattern prefix of the i-th generated site (0-based). */
export function generatedSite(index: number): { id: string; code: string; prefix: string } {
  const n = String(index + 1).padStart(3, '0');
  return { id: `site-${n}`, code: `G${n}S`, prefix: `G${n}` };
}

/**
 * A configuration folder of `sites` invented sites, each with `barnsPerSite` two-row barns, whose
 * tubes carry barn, pen and date in the sample ID (`G001-B2-17-20260803`), so a lab export needs
 * no rope sheet. One invented lab (a copy of the demo's Northfield profile) and the demo assays.
 */
export function writeManySiteConfig(dir: string, options: ManySiteOptions): void {
  fs.mkdirSync(path.join(dir, 'labs'), { recursive: true });
  fs.copyFileSync(path.join(REPO_ROOT, 'src', 'demo', 'config', 'assays.yaml'), path.join(dir, 'assays.yaml'));
  fs.copyFileSync(
    path.join(REPO_ROOT, 'src', 'demo', 'config', 'labs', 'northfield.yaml'),
    path.join(dir, 'labs', 'northfield.yaml'),
  );
  const lines = [
    '# Generated for the hardening tests and benchmarks: invented sites only.',
    'programDefaults:',
    '  designPrevalence: 0.1',
    '  targetConfidence: 0.95',
    '  ropeSensitivity: { default: 0.85, PRRSV-AB: 0.9 }',
    '  ropeSpecificity: 1',
    '  roundWindowDays: 3',
    '  intervalDays: 14',
    '  priorFreedom: 0.5',
    '  introductionPerInterval: 0.02',
    '  followUpRadius: 1.5',
    'analysis:',
    '  seed: 1',
    ...(options.programDefaults ? [] : ['  permutations: 99', '  spreadRealisations: 100']),
    'sites:',
  ];
  for (let s = 0; s < options.sites; s++) {
    const site = generatedSite(s);
    lines.push(`  - id: ${site.id}`, `    name: Generated site ${s + 1}`, `    code: ${site.code}`);
    lines.push(`    samplePattern: '^${site.prefix}-(?<barn>B\\d+)-(?<pen>\\d{1,3})-(?<date>\\d{8})$'`, '    barns:');
    for (let b = 0; b < options.barnsPerSite; b++) {
      lines.push(
        `      - id: B${b + 1}`,
        `        position: { x: 0, y: ${b * 6} }`,
        '        layout:',
        '          rows: 2',
        `          pensPerRow: ${options.pensPerRow}`,
        '          numbering: continuous',
      );
    }
  }
  fs.writeFileSync(path.join(dir, 'sites.yaml'), lines.join('\n') + '\n');
}

/** Sample ID a generated site's pattern maps to barn `barn` (1-based), pen `pen` (1-based), day `yyyymmdd`. */
export function patternSampleId(siteIndex: number, barn: number, pen: number, yyyymmdd: string): string {
  return `${generatedSite(siteIndex).prefix}-B${barn}-${pen}-${yyyymmdd}`;
}

/**
 * A workspace for tests that run the CLI as child processes: the demo config, an inbox, and a
 * store created and migrated up front, so a child's only write transaction is its file's.
 */
export function processWorkspace(root: string, name: string) {
  const dir = path.join(root, name);
  const paths = {
    config: path.join(dir, 'config'),
    // A SQLite file, or on the PostgreSQL run a new database (test/helpers/testStore.ts).
    db: testStoreLocation(path.join(dir, 'data', 'store.db'), name).location,
    inbox: path.join(dir, 'inbox'),
    outbox: path.join(dir, 'outbox'),
  };
  fs.cpSync(path.join(REPO_ROOT, 'src', 'demo', 'config'), paths.config, { recursive: true });
  fs.mkdirSync(paths.inbox, { recursive: true });
  openStore(parseStoreLocation(paths.db)).close();
  const flags = ['--config', paths.config, '--db', paths.db, '--inbox', paths.inbox, '--outbox', paths.outbox];
  return { dir, paths, flags };
}
