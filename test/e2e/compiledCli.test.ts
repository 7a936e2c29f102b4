/**
 * The compiled program (dist/cli/bin.js, the package's `bin`) as a child process: started through
 * a link as npm installs it, its version and help, the demo reading its configuration from
 * beside the compiled code, and a large file read on the parse worker thread from dist/.
 */
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { PARSE_IN_WORKER_FROM_BYTES } from '../../src/ingest/ingestFile.js';
import { compiledBin, REPO_ROOT } from '../helpers/compiledCli.js';
import { bigNorthfieldExport } from '../helpers/hardening.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const PACKAGE = JSON.parse(fs.readFileSync(path.join(REPO_ROOT, 'package.json'), 'utf8')) as {
  version: string;
  bin: Record<string, string>;
};
const workspace = workspacesPerTest();
const temps: string[] = [];
afterEach(() => {
  for (const dir of temps.splice(0)) fs.rmSync(dir, { recursive: true, force: true });
});

function tempDir(): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-compiled-'));
  temps.push(dir);
  return dir;
}

function run(
  command: string,
  args: readonly string[],
  cwd: string,
): Promise<{ code: number | null; stdout: string; stderr: string }> {
  const child = spawn(command, args, {
    cwd,
    stdio: ['ignore', 'pipe', 'pipe'],
    env: { ...process.env, PATH: `${path.dirname(process.execPath)}${path.delimiter}${process.env.PATH ?? ''}` },
  });
  let stdout = '';
  let stderr = '';
  child.stdout.on('data', (chunk: Buffer) => (stdout += chunk.toString()));
  child.stderr.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
  return new Promise((resolve, reject) => {
    child.on('error', reject);
    child.on('close', (code) => resolve({ code, stdout, stderr }));
  });
}

const ropewatch = (args: readonly string[], cwd: string) => run(process.execPath, [compiledBin(), ...args], cwd);

describe('the compiled ropewatch', () => {
  it('is the package’s bin, and runs through a link to it as npm installs it (node_modules/.bin/ropewatch)', async () => {
    expect(path.resolve(REPO_ROOT, PACKAGE.bin.ropewatch!)).toBe(compiledBin());
    const dir = tempDir();
    const link = path.join(dir, 'ropewatch');
    fs.symlinkSync(compiledBin(), link);
    // Started as a program: the kernel reads the "#!/usr/bin/env node" line.
    const version = await run(link, ['--version'], dir);
    expect(version).toEqual({ code: 0, stdout: `ropewatch ${PACKAGE.version}\n`, stderr: '' });
  });

  it('prints its help with exit 0, and with no arguments the help on stderr with exit 2', async () => {
    const dir = tempDir();
    const help = await ropewatch(['--help'], dir);
    expect(help.code).toBe(0);
    expect(help.stdout).toMatch(/^Usage: ropewatch /);
    const none = await ropewatch([], dir);
    expect(none.code).toBe(2);
    expect(none.stdout).toBe('');
    expect(none.stderr).toBe(help.stdout);
  });

  it('runs the demo with the configuration copied beside the compiled code, as the sources do', async () => {
    const dir = tempDir();
    const compiled = await ropewatch(['demo'], dir);
    expect(compiled.code, compiled.stderr).toBe(0);
    // The configuration it wrote is the demo's own, byte for byte.
    for (const rel of ['sites.yaml', 'assays.yaml', 'labs/northfield.yaml']) {
      expect(fs.readFileSync(path.join(dir, 'config', rel)), rel).toEqual(
        fs.readFileSync(path.join(REPO_ROOT, 'src', 'demo', 'config', rel)),
      );
    }
    expect(fs.existsSync(path.join(dir, 'outbox', 'index.html'))).toBe(true);
    // The same drops with the same outcomes as the TypeScript sources, run in-process (the
    // closing line names the folder each ran in).
    const other = tempDir();
    const sources = await runCli(['demo'], { cwd: other });
    expect(sources.code, sources.stderr).toBe(0);
    expect(compiled.stdout.replaceAll(dir, '<root>')).toBe(sources.stdout.replaceAll(other, '<root>'));
    expect(compiled.stdout).toMatch(/accepted/);
  }, 120_000);

  it('reads a file large enough for the parse worker thread, started from dist/', async () => {
    const ws = workspace();
    ws.closeStore();
    const file = path.join(ws.paths.inbox, 'nvdl_big.csv');
    let rows = 40_000;
    let bytes = bigNorthfieldExport(rows);
    while (bytes.length < PARSE_IN_WORKER_FROM_BYTES) bytes = bigNorthfieldExport((rows *= 2));
    fs.writeFileSync(file, bytes);
    const result = await ropewatch(['ingest', file, '--json', ...ws.cliFlags], ws.root);
    expect(result.code, result.stderr).toBe(0);
    const [receipt] = JSON.parse(result.stdout) as { status: string; rows: { accepted: number } }[];
    // Every row of the generated export is a distinct result (test/helpers/hardening.ts).
    expect(receipt).toMatchObject({ status: 'accepted', rows: { accepted: rows } });
  }, 120_000);
});
