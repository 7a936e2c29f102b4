/**
 * The CLI in-process (test/helpers/runCli.ts) against temp workspaces: exit codes (0 ok, 1 an
 * input refused, 2 usage; src/cli/io.ts EXIT), status --json, report --site, and the demo's
 * determinism (two runs, byte-identical outbox).
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { runCli } from '../helpers/runCli.js';
import { treeHashes, workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

function writeInbox(ws: TestWorkspace, name: string, bytes: Buffer | string): string {
  const file = path.join(ws.paths.inbox, name);
  fs.writeFileSync(file, bytes);
  return file;
}

const sheetFor = (ws: TestWorkspace) =>
  ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, [
    { sampleId: 'C1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
    { sampleId: 'C2', barnId: 'F1', penId: 'A2', hungOn: '2026-08-03' },
  ]);
const resultsFile = () =>
  northfieldExport(
    [
      { sampleId: 'C1', assay: 'PRRSV', ct: 30, collectedOn: '2026-08-03' },
      { sampleId: 'C2', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' },
      { sampleId: 'UNKNOWN-1', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' },
    ],
    '2026-08-06',
    1,
  );

describe('ropewatch CLI exit codes', () => {
  it('exits 0 when every input is accepted and archives the files', async () => {
    const ws = workspace();
    const files = [writeInbox(ws, 'ropes.csv', sheetFor(ws)), writeInbox(ws, 'nvdl_r.csv', resultsFile())];
    const run = await runCli(['ingest', ...files, ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout).toContain('accepted nvdl_r.csv');
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'archive')).sort()).toEqual(['nvdl_r.csv', 'ropes.csv']);
    expect(fs.existsSync(path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-03', 'summary.json'))).toBe(true);
  });

  it('exits 1 when an input was rejected, and still processes the others', async () => {
    const ws = workspace();
    const good = writeInbox(ws, 'ropes.csv', sheetFor(ws));
    const bad = writeInbox(ws, 'nvdl_invoice.csv', 'Invoice,Client\nINV-1,Someone\n');
    const run = await runCli(['ingest', bad, good, ...ws.cliFlags, '--json']);
    expect(run.code).toBe(1);
    const receipts = JSON.parse(run.stdout);
    expect(receipts.map((receipt: { status: string }) => receipt.status)).toEqual(['rejected', 'accepted']);
    expect(fs.existsSync(path.join(ws.paths.inbox, 'rejected', 'nvdl_invoice.csv.reason.txt'))).toBe(true);
  });

  it('exits 1 when a row inside an accepted file was refused', async () => {
    const ws = workspace();
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    const file = writeInbox(
      ws,
      'ropes.csv',
      ropeSheet(site, [
        { sampleId: 'C1', barnId: 'F1', penId: 'Z99', hungOn: '2026-08-03' },
        { sampleId: 'C2', barnId: 'F1', penId: 'A2', hungOn: '2026-08-03' },
      ]),
    );
    const run = await runCli(['ingest', file, ...ws.cliFlags]);
    expect(run.code).toBe(1);
  });

  it('exits 2 on an unknown option, a missing file, or a missing config folder', async () => {
    const ws = workspace();
    expect((await runCli(['status', '--no-such-option', ...ws.cliFlags])).code).toBe(2);
    expect((await runCli(['ingest', path.join(ws.root, 'nope.csv'), ...ws.cliFlags])).code).toBe(2);
    const missing = await runCli(['status', '--config', path.join(ws.root, 'no-config'), '--db', ws.paths.dbFile]);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toContain('configuration');
  });
});

describe('ropewatch status and report', () => {
  it('prints the store counts, unresolved samples and sites as JSON', async () => {
    const ws = workspace();
    const files = [writeInbox(ws, 'ropes.csv', sheetFor(ws)), writeInbox(ws, 'nvdl_r.csv', resultsFile())];
    expect((await runCli(['ingest', ...files, ...ws.cliFlags])).code).toBe(0);
    const run = await runCli(['status', '--json', ...ws.cliFlags]);
    expect(run.code).toBe(0);
    const status = JSON.parse(run.stdout);
    expect(status).toMatchObject({
      files: 2,
      rejectedFiles: 0,
      results: 3,
      currentResults: 3,
      ropes: 2,
      rejectedRows: 0,
      unresolvedSampleCount: 1,
      unresolvedSamples: ['UNKNOWN-1'],
    });
    const text = await runCli(['status', ...ws.cliFlags]);
    expect(text.stdout).toContain('unresolved samples (no rope sheet yet): UNKNOWN-1\n');
    expect(status.sites.find((site: { site: string }) => site.site === 'hollow-creek')).toMatchObject({
      rounds: 1,
      lastRound: { number: 1, id: 'r01-2026-08-03' },
    });
    expect(status.sites.find((site: { site: string }) => site.site === 'tamsin-ridge')).toMatchObject({
      rounds: 0,
      lastRound: null,
    });
  });

  it('prints at most 20 unresolved samples as text, with how many there are; --json lists all', async () => {
    const ws = workspace();
    const rows = Array.from({ length: 25 }, (_, i) => ({
      sampleId: `LOOSE-${String(i).padStart(2, '0')}`,
      assay: 'PRRSV' as const,
      ct: null,
      collectedOn: '2026-08-03',
    }));
    expect(
      (
        await runCli([
          'ingest',
          writeInbox(ws, 'nvdl_loose.csv', northfieldExport(rows, '2026-08-06', 1)),
          ...ws.cliFlags,
        ])
      ).code,
    ).toBe(0);
    const text = await runCli(['status', ...ws.cliFlags]);
    expect(text.stdout).toContain('unresolved samples (no rope sheet yet): 25: LOOSE-00, LOOSE-01,');
    expect(text.stdout).toContain('LOOSE-19 and 5 more (--json lists them all)');
    expect(text.stdout).not.toContain('LOOSE-20');
    const json = JSON.parse((await runCli(['status', '--json', ...ws.cliFlags])).stdout);
    expect(json.unresolvedSamples).toHaveLength(25);
  });

  it('regenerates one site’s outputs with report --site and refuses an unknown site with exit 2', async () => {
    const ws = workspace();
    const files = [writeInbox(ws, 'ropes.csv', sheetFor(ws)), writeInbox(ws, 'nvdl_r.csv', resultsFile())];
    expect((await runCli(['ingest', ...files, ...ws.cliFlags])).code).toBe(0);
    const summary = path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-03', 'summary.json');
    const before = fs.readFileSync(summary);
    fs.rmSync(path.join(ws.paths.outbox, 'hollow-creek'), { recursive: true });
    const run = await runCli(['report', '--site', 'hollow-creek', ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout).toContain('wrote hollow-creek: 1 round(s)');
    expect(fs.readFileSync(summary)).toEqual(before);
    expect((await runCli(['report', '--site', 'nowhere', ...ws.cliFlags])).code).toBe(2);
    expect((await runCli(['report', '--round', '1', ...ws.cliFlags])).code).toBe(2);
  });
});

describe('ropewatch demo', () => {
  it('gives byte-identical outputs when run twice into the same temp folders', async () => {
    const ws = workspace();
    const first = await runCli(['demo', ...ws.cliFlags]);
    expect(first.code, first.stderr).toBe(0);
    const hashesFirst = treeHashes(ws.paths.outbox);
    expect(Object.keys(hashesFirst).some((file) => file.startsWith('hollow-creek/r07-2026-10-26/'))).toBe(true);
    expect(Object.keys(hashesFirst).some((file) => file.startsWith('tamsin-ridge/'))).toBe(true);
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'rejected')).length).toBeGreaterThan(0);
    const second = await runCli(['demo', ...ws.cliFlags]);
    expect(second.code, second.stderr).toBe(0);
    expect(treeHashes(ws.paths.outbox)).toEqual(hashesFirst);
    // The demo wrote its config into the --config folder it was given.
    expect(fs.existsSync(path.join(ws.paths.configDir, 'sites.yaml'))).toBe(true);
  });
});
