/**
 * The command line's entry, in-process: --version, help and no arguments, `report --json`, the
 * timestamps of `watch`, and what declaring the commands loads.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';
import { stampLines } from '../../src/cli/stampLines.js';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { compiledBin } from '../helpers/compiledCli.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const REPO_ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
const PACKAGE = JSON.parse(fs.readFileSync(path.join(REPO_ROOT, 'package.json'), 'utf8')) as { version: string };
const workspace = workspacesPerTest();

describe('ropewatch --version, --help and no arguments', () => {
  it('prints "ropewatch <version of package.json>" and exits 0', async () => {
    // GNU Coding Standards 4.8.1 (--version): the first line gives the program's name and version.
    for (const flag of ['--version', '-V']) {
      const run = await runCli([flag]);
      expect(run.code).toBe(0);
      expect(run.stdout).toBe(`ropewatch ${PACKAGE.version}\n`);
      expect(run.stderr).toBe('');
    }
    expect(PACKAGE.version).toBe('0.1.0');
  });

  it('prints the help on stdout with exit 0 when asked, and on stderr with exit 2 when no command is given', async () => {
    // GNU Coding Standards 4.8.2 (--help: standard output, then exit successfully); a missing
    // command is a usage error: exit 2 (README, exit codes), like a command group named alone.
    const asked = await runCli(['--help']);
    expect(asked.code).toBe(0);
    expect(asked.stdout).toMatch(/^Usage: ropewatch \[options\] \[command\]/);
    expect(asked.stdout).toContain('-V, --version');
    expect((await runCli(['help'])).code).toBe(0);
    const none = await runCli([]);
    expect(none.code).toBe(2);
    expect(none.stdout).toBe('');
    expect(none.stderr).toBe(asked.stdout);
    const group = await runCli(['calc']);
    expect(group.code).toBe(2);
    expect(group.stderr).toMatch(/^Usage: ropewatch calc/);
  });
});

describe('ropewatch report --json', () => {
  const sheetFor = (ws: TestWorkspace) =>
    ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, [
      { sampleId: 'C1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
      { sampleId: 'C2', barnId: 'F1', penId: 'A2', hungOn: '2026-08-03' },
    ]);
  const results = () =>
    northfieldExport(
      [
        { sampleId: 'C1', assay: 'PRRSV', ct: 30, collectedOn: '2026-08-03' },
        { sampleId: 'C2', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' },
      ],
      '2026-08-06',
      1,
    );

  /** Every file under dir, relative to base, walked independently of the command. */
  function walk(dir: string, base: string): string[] {
    return fs.readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
      const full = path.join(dir, entry.name);
      return entry.isDirectory() ? walk(full, base) : [path.relative(base, full).split(path.sep).join('/')];
    });
  }

  it('lists per site the rounds and every file of its folder, relative to the outbox', async () => {
    const ws = workspace();
    const files = ['ropes.csv', 'nvdl_r.csv'].map((name, index) => {
      const file = path.join(ws.paths.inbox, name);
      fs.writeFileSync(file, index === 0 ? sheetFor(ws) : results());
      return file;
    });
    expect((await runCli(['ingest', ...files, ...ws.cliFlags])).code).toBe(0);
    const run = await runCli(['report', '--json', ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(0);
    const report = JSON.parse(run.stdout) as {
      outbox: string;
      index: string | null;
      sites: { site: string; rounds: { number: number; id: string; startOn: string }[]; files: string[] }[];
    };
    expect(report.outbox).toBe(ws.paths.outbox);
    expect(report.index).toBe('index.html');
    expect(report.sites.map((site) => site.site)).toEqual(ws.config().sites.map((site) => site.id));
    const hollow = report.sites.find((site) => site.site === 'hollow-creek')!;
    // One rope sheet hung on 2026-08-03: one round, named by its number and first day.
    expect(hollow.rounds).toEqual([{ number: 1, id: 'r01-2026-08-03', startOn: '2026-08-03' }]);
    expect(hollow.files).toContain('hollow-creek/r01-2026-08-03/summary.json');
    expect(hollow.files).toEqual(walk(path.join(ws.paths.outbox, 'hollow-creek'), ws.paths.outbox).sort());

    const one = JSON.parse(
      (await runCli(['report', '--site', 'hollow-creek', '--json', ...ws.cliFlags])).stdout,
    ) as typeof report;
    expect(one.sites.map((site) => site.site)).toEqual(['hollow-creek']);
    expect(one.sites[0]!.files).toEqual(hollow.files);
  });

  it('prints one line per site without --json', async () => {
    const ws = workspace();
    const run = await runCli(['report', ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout.trim().split('\n')).toEqual(ws.config().sites.map((site) => `wrote ${site.id}: 0 round(s)`));
  });
});

describe('the log of ropewatch watch', () => {
  it('begins every line with the time from the injected clock, and says "stopped" once', async () => {
    const ws = workspace();
    fs.writeFileSync(
      path.join(ws.paths.inbox, 'ropes.csv'),
      ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, [
        { sampleId: 'C1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
      ]),
    );
    let stop!: () => void;
    const stopSignal = new Promise<void>((resolve) => (stop = resolve));
    let stdout = '';
    let tick = 0;
    // A clock one second further at each reading: the stamps show it was read, not new Date().
    const now = () => new Date(Date.UTC(2026, 11, 1, 12, 0, tick++));
    const run = await runCli(['watch', '--stable-ms', '50', ...ws.cliFlags], {
      now,
      stopSignal,
      stdout: (text) => {
        stdout += text;
        if (text.includes('accepted ropes.csv')) stop();
      },
    });
    expect(run.code, run.stderr).toBe(0);
    const lines = stdout.trimEnd().split('\n');
    expect(lines.length).toBeGreaterThan(3);
    // ISO 8601 extended format in UTC, as Date.prototype.toISOString writes it (ECMA-262 21.4.1.32).
    for (const line of lines) expect(line).toMatch(/^2026-12-01T12:\d{2}:\d{2}\.000Z \S/);
    expect(lines.filter((line) => / accepted ropes\.csv/.test(line))).toHaveLength(1);
    expect(lines.filter((line) => / stopped$/.test(line))).toHaveLength(1);
    expect(lines.at(-1)).toMatch(/ stopped$/);
    const stamps = lines.map((line) => line.slice(0, 24));
    expect([...stamps].sort()).toEqual(stamps);
    expect(new Set(stamps).size).toBeGreaterThan(1);
  });

  it('stamps each line of a chunk, and a line written in pieces once', () => {
    let out = '';
    let seconds = 0;
    const io = stampLines({
      stdout: (text) => (out += text),
      stderr: () => {},
      cwd: '/',
      now: () => new Date(Date.UTC(2026, 0, 2, 3, 4, seconds++)),
      env: {},
    });
    io.stdout('one\ntwo\n');
    io.stdout('thr');
    io.stdout('');
    io.stdout('ee\nfour');
    io.stdout('\n');
    expect(out).toBe(
      // Hand-written: the first chunk read the clock at 03:04:00, the third at 03:04:02.
      [
        '2026-01-02T03:04:00.000Z one',
        '2026-01-02T03:04:00.000Z two',
        '2026-01-02T03:04:01.000Z three',
        '2026-01-02T03:04:02.000Z four',
        '',
      ].join('\n'),
    );
  });
});

describe('what declaring the commands loads', () => {
  /**
   * The modules node loads before running dist/cli/bin.js: its static imports, followed through
   * (ECMA-262 16.2: an `import` declaration is loaded and evaluated before the importing module;
   * `import()` only when the call runs). Relative ones as paths under dist/, packages by name.
   */
  function staticGraph(entry: string): { modules: string[]; packages: string[] } {
    const modules = new Set<string>();
    const packages = new Set<string>();
    const visit = (file: string): void => {
      if (modules.has(file)) return;
      modules.add(file);
      const source = ts.createSourceFile(
        file,
        fs.readFileSync(file, 'utf8'),
        ts.ScriptTarget.ES2022,
        false,
        ts.ScriptKind.JS,
      );
      for (const statement of source.statements) {
        const from =
          ts.isImportDeclaration(statement) || ts.isExportDeclaration(statement)
            ? statement.moduleSpecifier
            : undefined;
        if (from === undefined || !ts.isStringLiteral(from)) continue;
        if (from.text.startsWith('.')) visit(path.resolve(path.dirname(file), from.text));
        else if (!from.text.startsWith('node:')) packages.add(from.text);
      }
    };
    visit(entry);
    const dist = path.dirname(path.dirname(entry));
    return { modules: [...modules].map((file) => path.relative(dist, file)).sort(), packages: [...packages].sort() };
  }

  it('is commander and the small modules of src/cli: no pipeline, store, configuration or schema library', () => {
    const graph = staticGraph(compiledBin());
    expect(graph.packages).toEqual(['commander']);
    expect(graph.modules).not.toContain('outputs.js');
    expect(graph.modules).not.toContain('pipeline.js');
    expect(graph.modules).not.toContain('workspace.js');
    expect(graph.modules.filter((file) => /^(config|store|ingest|report|analysis|watch|demo)\//.test(file))).toEqual(
      [],
    );
    // Every command's declaration is in the walk (one file each under cli/commands/), so the
    // checks above cover all of them.
    const commandsDir = path.join(path.dirname(compiledBin()), 'commands');
    const commandFiles = fs
      .readdirSync(commandsDir, { recursive: true, encoding: 'utf8' })
      .filter((file) => file.endsWith('.js'))
      .map((file) => `cli/commands/${file.split(path.sep).join('/')}`);
    expect(commandFiles).toEqual(expect.arrayContaining(['cli/commands/index.js', 'cli/commands/calc/detect.js']));
    expect(graph.modules).toEqual(expect.arrayContaining(commandFiles));
    // The walk does see what a command imports when it runs.
    expect(staticGraph(path.join(path.dirname(compiledBin()), 'commandModules.js')).packages).toEqual(
      expect.arrayContaining(['better-sqlite3', 'chokidar', 'yaml', 'zod']),
    );
  });
});
