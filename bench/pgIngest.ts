/**
 * PostgreSQL ingest benchmark: the ingest code (`ingestFile`: hash, sniff, read, map, store in one
 * transaction, commit; outputs left out) storing the bench's generated 1,000,000-row lab export
 * into an empty PostgreSQL database, against that engine's floor: `COPY ... FROM STDIN (FORMAT
 * csv)` of the same file into one table of text columns with a UNIQUE index on the lab's key
 * (sample ID, test, case number), one transaction. The SQLite ingest of the same file runs in the
 * same run, so the two stores are compared on one machine at one load.
 *
 * CPU time counts both sides of the connection: the client process (user + system, every thread)
 * and the server's processes (its postmaster and every process it started, with the children
 * it has reaped, from /proc/<pid>/stat, proc(5)), read before and after each run. A server named by
 * ROPEWATCH_TEST_PG_URL may sit on another machine: then the client's CPU alone is reported.
 *
 * Runs alternate (floor, PostgreSQL ingest, SQLite ingest) REPEATS times, each in a child process
 * and a database of its own; ratios are the median of the per-run ratios with their range.
 *
 *   npx tsx bench/pgIngest.ts            (or: npm run bench -- pg)
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import { writeManySiteConfig } from '../test/helpers/hardening.js';
import { startTestServer, withAdmin, withDatabase } from '../test/helpers/pgServerStart.js';
import { benchPaths, benchWorkspace, compiledIngest, SHAPE, writeBigExport } from './ingest.js';
import { spread } from './pairs.js';
import type { BenchRow } from './types.js';
import { parseStoreLocation } from '../src/store/location.js';

const HERE = path.dirname(fileURLToPath(import.meta.url));
const REPO = path.resolve(HERE, '..');
const REPEATS = 3;
const ROWS = 1_000_000;

type ChildMode = 'pg-floor' | 'pg-store' | 'sqlite-store';

interface ChildReport {
  mode: ChildMode;
  stored: number;
  ms: number;
  cpuMs: number;
}

function clientCpuMs(since: NodeJS.CpuUsage): number {
  const cpu = process.cpuUsage(since);
  return (cpu.user + cpu.system) / 1000;
}

/** The COPY floor: the file's rows into a keyed table of text columns, one transaction. */
async function copyFloor(file: string, url: string): Promise<Omit<ChildReport, 'mode'>> {
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    await client.query(
      'CREATE TABLE rows (case_no text, sample_id text, test text, ct text, call text, control text, collected text, reported text, status text)',
    );
    await client.query('CREATE UNIQUE INDEX rows_key ON rows (sample_id, test, case_no)');
    const cpu0 = process.cpuUsage();
    const started = performance.now();
    await client.query('BEGIN');
    const copy = client.query(copyFrom('COPY rows FROM STDIN WITH (FORMAT csv, HEADER true)'));
    await pipeline(fs.createReadStream(file), copy);
    await client.query('COMMIT');
    const ms = performance.now() - started;
    const cpuMs = clientCpuMs(cpu0);
    return { stored: Number(copy.rowCount), ms, cpuMs };
  } finally {
    await client.end();
  }
}

/** The ingest code into the store at `location` (a PostgreSQL URL or a SQLite file), outputs left out. */
async function ingestInto(file: string, dir: string, location: string): Promise<Omit<ChildReport, 'mode'>> {
  const { ingestFile, openWorkspace } = await compiledIngest();
  const { ws, target } = benchWorkspace(benchPaths(dir, parseStoreLocation(location)), file, openWorkspace);
  try {
    const cpu0 = process.cpuUsage();
    const started = performance.now();
    const receipt = await ingestFile(target, { config: ws.config, store: ws.store, now: ws.now });
    const ms = performance.now() - started;
    const cpuMs = clientCpuMs(cpu0);
    if (receipt.status !== 'accepted') throw new Error(`bench export refused: ${JSON.stringify(receipt.reason)}`);
    return { stored: ws.store.counts().results, ms, cpuMs };
  } finally {
    ws.close();
  }
}

async function runChild(mode: ChildMode, file: string, dir: string, location: string): Promise<void> {
  const report = mode === 'pg-floor' ? await copyFloor(file, location) : await ingestInto(file, dir, location);
  process.stdout.write(`${JSON.stringify({ mode, ...report } satisfies ChildReport)}\n`);
}

/** Clock ticks per second of /proc/<pid>/stat's times (getconf CLK_TCK; 100 on Linux). */
function clockTicks(): number {
  const run = spawnSync('getconf', ['CLK_TCK'], { encoding: 'utf8' });
  const ticks = Number(run.stdout?.trim());
  return Number.isFinite(ticks) && ticks > 0 ? ticks : 100;
}

/** Fields 3 onwards of /proc/<pid>/stat (after the command name), or undefined when the process is gone. */
function statFields(pid: string | number): string[] | undefined {
  try {
    const stat = fs.readFileSync(`/proc/${pid}/stat`, 'utf8');
    return stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  } catch {
    return undefined;
  }
}

/**
 * CPU time in ms of one PostgreSQL server: its postmaster and every process it started, each
 * utime + stime + cutime + cstime (fields 14 to 17 of /proc/<pid>/stat, proc(5)), so a backend
 * that has ended and been reaped still counts through the postmaster's cutime/cstime. Other
 * servers on the machine (a test run's) are left out.
 */
function serverCpuMs(ticks: number, postmaster: number): number {
  let total = 0;
  for (const entry of fs.readdirSync('/proc')) {
    if (!/^\d+$/.test(entry)) continue;
    const fields = statFields(entry);
    // Field 4 (ppid) is index 1 here, utime (field 14) index 11.
    if (fields === undefined || (Number(entry) !== postmaster && Number(fields[1]) !== postmaster)) continue;
    total += Number(fields[11]) + Number(fields[12]) + Number(fields[13]) + Number(fields[14]);
  }
  return (total * 1000) / ticks;
}

/** The server's postmaster: the parent of this connection's backend (pg_backend_pid). */
async function postmasterPid(url: string): Promise<number> {
  // Read while the connection is open: its backend ends with it.
  const postmaster = await withAdmin(url, async (client) => {
    const backend = await client.query<{ pid: number }>('SELECT pg_backend_pid() AS pid');
    return Number(statFields(backend.rows[0]!.pid)?.[1]);
  });
  if (!Number.isInteger(postmaster)) throw new Error("the bench could not find the PostgreSQL server's process");
  return postmaster;
}

/** Runs a child and returns its report with the server's CPU over its run added (when the server is here). */
function spawnChild(
  mode: ChildMode,
  file: string,
  dir: string,
  location: string,
  server: { local: boolean; ticks: number; postmaster: number },
): ChildReport & { serverCpuMs: number } {
  const before = server.local ? serverCpuMs(server.ticks, server.postmaster) : 0;
  const run = spawnSync(
    process.execPath,
    ['--import', 'tsx', fileURLToPath(import.meta.url), '--child', mode, file, dir, location],
    { cwd: REPO, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 },
  );
  if (run.status !== 0) throw new Error(`bench child ${mode} failed (${run.status}): ${run.stderr}`);
  const report = JSON.parse(run.stdout.trim().split('\n').at(-1)!) as ChildReport;
  // The server's share: everything its processes spent while the child ran (setup included, a
  // few ms against seconds of storing).
  const serverCpu = server.local ? serverCpuMs(server.ticks, server.postmaster) - before : 0;
  return { ...report, cpuMs: report.cpuMs + serverCpu, serverCpuMs: serverCpu };
}

const range = (r: { median: number; min: number; max: number }) =>
  `${r.median.toFixed(2)} (${r.min.toFixed(2)}-${r.max.toFixed(2)})`;
const seconds = (ms: number) => `${(ms / 1000).toFixed(1)} s`;

/**
 * The 1M-row export stored REPEATS times into PostgreSQL by the ingest code and by COPY, with the
 * SQLite ingest of the same file between them. Reports the PostgreSQL ingest's rows/s and CPU
 * against COPY's, and against the SQLite ingest's.
 */
export async function benchPgIngest(options: { small?: boolean } = {}): Promise<BenchRow[]> {
  const rows = options.small ? 50_000 : ROWS;
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-bench-pg-'));
  const server = await startTestServer();
  try {
    const configDir = path.join(root, 'config');
    writeManySiteConfig(configDir, SHAPE);
    const file = path.join(root, `nvdl_bench_${rows}.csv`);
    writeBigExport(file, rows, SHAPE, 1);
    const local = server.embedded;
    const ticks = clockTicks();
    const postmaster = local ? await postmasterPid(server.url) : 0;
    let runs = 0;
    const run = async (mode: ChildMode) => {
      const dir = path.join(root, `run-${runs++}-${mode}`);
      fs.cpSync(configDir, path.join(dir, 'config'), { recursive: true });
      let location = path.join(dir, 'store.db');
      let database: string | undefined;
      if (mode !== 'sqlite-store') {
        database = `rw_bench_${process.pid}_${runs}`;
        await withAdmin(server.url, (client) => client.query(`CREATE DATABASE "${database}"`));
        location = withDatabase(server.url, database);
      }
      try {
        const report = spawnChild(mode, file, dir, location, { local, ticks, postmaster });
        process.stderr.write(`bench pg: ${JSON.stringify(report)}\n`);
        return report;
      } finally {
        fs.rmSync(dir, { recursive: true, force: true });
        if (database !== undefined)
          await withAdmin(server.url, (client) => client.query(`DROP DATABASE IF EXISTS "${database}" WITH (FORCE)`));
      }
    };
    const triples = [];
    for (let repeat = 0; repeat < REPEATS; repeat++)
      triples.push({ floor: await run('pg-floor'), pg: await run('pg-store'), sqlite: await run('sqlite-store') });
    const rate = (report: ChildReport) => report.stored / (report.ms / 1000);
    const rateVsFloor = spread(triples.map((t) => rate(t.pg) / rate(t.floor)));
    const cpuVsFloor = spread(triples.map((t) => t.pg.cpuMs / t.floor.cpuMs));
    const rateVsSqlite = spread(triples.map((t) => rate(t.pg) / rate(t.sqlite)));
    const cpuVsSqlite = spread(triples.map((t) => t.pg.cpuMs / t.sqlite.cpuMs));
    const mid = (values: number[]) => spread(values).median;
    const cpuNote = local
      ? 'CPU: client process and server processes'
      : 'CPU: client process only (the server is not on this machine)';
    const checksum = [...new Set(triples.map((t) => `${t.pg.stored}/${t.floor.stored}/${t.sqlite.stored}`))].join(', ');
    return [
      {
        name: `PostgreSQL ingest code, ${rows} rows, vs COPY of the same rows, median of ${REPEATS} alternating runs (rows/s)`,
        value: mid(triples.map((t) => rate(t.pg))),
        unit: 'rows/s',
        baseline: mid(triples.map((t) => rate(t.floor))),
        ratio: rateVsFloor.median,
        note: `checksum ${checksum} rows stored (PostgreSQL/COPY/SQLite); rows/s ratio ${range(rateVsFloor)}; wall ${triples.map((t) => `${seconds(t.pg.ms)} vs ${seconds(t.floor.ms)}`).join('; ')}`,
      },
      {
        name: `PostgreSQL ingest code, ${rows} rows: CPU time vs COPY's`,
        value: mid(triples.map((t) => t.pg.cpuMs)),
        unit: 'ms',
        baseline: mid(triples.map((t) => t.floor.cpuMs)),
        ratio: cpuVsFloor.median,
        note: `${cpuNote}; CPU ratio ${range(cpuVsFloor)}; of it the server's ${triples.map((t) => `${seconds(t.pg.serverCpuMs)} vs ${seconds(t.floor.serverCpuMs)}`).join('; ')}`,
      },
      {
        name: `PostgreSQL ingest code vs the SQLite ingest code, ${rows} rows, same run (rows/s)`,
        value: mid(triples.map((t) => rate(t.pg))),
        unit: 'rows/s',
        baseline: mid(triples.map((t) => rate(t.sqlite))),
        ratio: rateVsSqlite.median,
        note: `rows/s ratio ${range(rateVsSqlite)}; CPU ratio ${range(cpuVsSqlite)} (${cpuNote}); SQLite wall ${triples.map((t) => seconds(t.sqlite.ms)).join(', ')}`,
      },
    ];
  } finally {
    await server.stop();
    fs.rmSync(root, { recursive: true, force: true });
  }
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/'));
if (invokedDirectly) {
  const [flag, mode, file, dir, location] = process.argv.slice(2);
  if (flag === '--child') await runChild(mode as ChildMode, file!, dir!, location!);
  else
    process.stdout.write(
      `${JSON.stringify(await benchPgIngest({ small: process.argv.includes('--small') }), null, 2)}\n`,
    );
}
