/**
 * Outputs that cannot be written: an outbox that cannot be created (its parent is a regular file,
 * so mkdir fails with ENOTDIR; chmod is no test here because the suite runs as root, where mode
 * bits do not stop writes) and a full disk (the output's temp file is a symlink to /dev/full,
 * where every write fails with ENOSPC: Linux null(4) / full(4) man page).
 *
 * Documented outcome (src/ingest/ingestFile.ts IngestDeps.regenerate, src/pipeline.ts): outputs
 * are rewritten inside the file's transaction, so a write failure rolls the file back: exit 1,
 * a message naming the cause, the store holds exactly what it held before, the file stays in
 * the inbox for the next run.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { lookIntoStore } from '../helpers/hardening.js';
import { runCli } from '../helpers/runCli.js';
import { makeWorkspace, type TestWorkspace } from '../helpers/workspace.js';

let workspaces: TestWorkspace[] = [];
afterEach(() => {
  for (const ws of workspaces) ws.cleanup();
  workspaces = [];
});

function flagsWithOutbox(ws: TestWorkspace, outbox: string): string[] {
  return ['--config', ws.paths.configDir, '--db', ws.paths.dbFile, '--inbox', ws.paths.inbox, '--outbox', outbox];
}

/** A workspace that has stored one rope sheet and one result file (so the store is not empty). */
async function storedWorkspace(): Promise<{ ws: TestWorkspace; second: string }> {
  const ws = makeWorkspace();
  workspaces.push(ws);
  const site = ws.config().siteById.get('HOLLOW-CREEK')!;
  const sheet = path.join(ws.paths.inbox, 'ropes_1.csv');
  fs.writeFileSync(sheet, ropeSheet(site, [{ sampleId: 'T1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' }]));
  const results = path.join(ws.paths.inbox, 'nvdl_1.csv');
  fs.writeFileSync(results, northfieldExport([{ sampleId: 'T1', assay: 'PRRSV', ct: 31.2, collectedOn: '2026-08-03' }], '2026-08-06', 1));
  const first = await runCli(['ingest', sheet, results, ...ws.cliFlags]);
  expect(first.code, first.stderr).toBe(0);
  // The second drop touches the same site and round, so its outputs must be rewritten.
  const second = path.join(ws.paths.inbox, 'ropes_2.csv');
  fs.writeFileSync(second, ropeSheet(site, [{ sampleId: 'T2', barnId: 'F1', penId: 'A3', hungOn: '2026-08-03' }]));
  return { ws, second };
}

describe('an outbox that cannot be written', () => {
  it('exits 1 with ENOTDIR when the outbox lies under a regular file, leaves the store unchanged and the file in the inbox', async () => {
    const { ws, second } = await storedWorkspace();
    const before = lookIntoStore(ws.paths.dbFile);
    const plainFile = path.join(ws.root, 'not-a-folder.txt');
    fs.writeFileSync(plainFile, 'a file where a folder should be\n');

    const run = await runCli(['ingest', second, ...flagsWithOutbox(ws, path.join(plainFile, 'outbox'))]);
    expect(run.code).toBe(1);
    expect(run.stderr).toContain('outputs could not be written');
    expect(run.stderr).toContain('ENOTDIR');
    expect(run.stderr).toContain('the file stays in the inbox');
    expect(lookIntoStore(ws.paths.dbFile)).toEqual(before);
    expect(fs.existsSync(second)).toBe(true);
    expect(fs.existsSync(path.join(ws.paths.inbox, 'archive', 'ropes_2.csv'))).toBe(false);

    // Once the outbox is writable again, the same file goes through.
    const retry = await runCli(['ingest', second, ...ws.cliFlags]);
    expect(retry.code, retry.stderr).toBe(0);
    expect(lookIntoStore(ws.paths.dbFile).ropes).toBe(before.ropes + 1);
  });

  it('exits 1 with ENOSPC when the disk is full, leaves the store unchanged and the file in the inbox', async () => {
    const { ws, second } = await storedWorkspace();
    const before = lookIntoStore(ws.paths.dbFile);
    const siteDir = path.join(ws.paths.outbox, 'hollow-creek');
    const roundDirs = fs.readdirSync(siteDir).filter((entry) => /^r\d+-/.test(entry));
    expect(roundDirs).toEqual(['r01-2026-08-03']);
    // src/report/files.ts writes `.<name>.<pid>.<counter>.tmp` and renames it over <name>; the
    // first output of the site is its first round's summary.json. Every temp name this process
    // can use for it becomes a symlink to /dev/full, so the write itself fails with ENOSPC.
    const roundDir = path.join(siteDir, roundDirs[0]!);
    for (let counter = 0; counter < 5000; counter++) fs.symlinkSync('/dev/full', path.join(roundDir, `.summary.json.${process.pid}.${counter}.tmp`));

    const run = await runCli(['ingest', second, ...ws.cliFlags]);
    expect(run.code).toBe(1);
    expect(run.stderr).toContain('outputs could not be written');
    expect(run.stderr).toContain('ENOSPC');
    expect(lookIntoStore(ws.paths.dbFile)).toEqual(before);
    expect(fs.existsSync(second)).toBe(true);
    expect(fs.existsSync(path.join(ws.paths.inbox, 'archive', 'ropes_2.csv'))).toBe(false);
    // The summary that was there before is not replaced by a half-written one.
    expect(JSON.parse(fs.readFileSync(path.join(roundDir, 'summary.json'), 'utf8'))).toBeTypeOf('object');
  });
});
