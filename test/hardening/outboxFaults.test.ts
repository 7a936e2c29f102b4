/**
 * Outputs that cannot be written: an outbox that cannot be created (its parent is a regular file,
 * so mkdir fails with ENOTDIR; chmod is no test here because the suite runs as root, where mode
 * bits do not stop writes) and a full disk (the output's temp file is a symlink to /dev/full,
 * where every write fails with ENOSPC: Linux null(4) / full(4) man page).
 *
 * Documented outcome (src/pipeline.ts, src/outputs.ts): outputs are written after the file's
 * commit, from committed data only. A write failure leaves the file stored and archived: exit 1,
 * a message naming the cause, the outputs as they were (no half-written set), and the store
 * knows the site's outputs are behind, so the next run rebuilds them.
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
  return ['--config', ws.paths.configDir, '--db', ws.paths.db, '--inbox', ws.paths.inbox, '--outbox', outbox];
}

/** A workspace that has stored one rope sheet and one result file (so the store is not empty). */
async function storedWorkspace(): Promise<{ ws: TestWorkspace; second: string }> {
  const ws = makeWorkspace();
  workspaces.push(ws);
  const site = ws.config().siteById.get('HOLLOW-CREEK')!;
  const sheet = path.join(ws.paths.inbox, 'ropes_1.csv');
  fs.writeFileSync(sheet, ropeSheet(site, [{ sampleId: 'T1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' }]));
  const results = path.join(ws.paths.inbox, 'nvdl_1.csv');
  fs.writeFileSync(
    results,
    northfieldExport([{ sampleId: 'T1', assay: 'PRRSV', ct: 31.2, collectedOn: '2026-08-03' }], '2026-08-06', 1),
  );
  const first = await runCli(['ingest', sheet, results, ...ws.cliFlags]);
  expect(first.code, first.stderr).toBe(0);
  // The second drop touches the same site and round, so its outputs must be rewritten.
  const second = path.join(ws.paths.inbox, 'ropes_2.csv');
  fs.writeFileSync(second, ropeSheet(site, [{ sampleId: 'T2', barnId: 'F1', penId: 'A3', hungOn: '2026-08-03' }]));
  return { ws, second };
}

describe('an outbox that cannot be written', () => {
  it('exits 1 with ENOTDIR when the outbox lies under a regular file; the file is stored and archived, and the next run writes its outputs', async () => {
    const { ws, second } = await storedWorkspace();
    const before = lookIntoStore(ws.paths.db);
    const plainFile = path.join(ws.root, 'not-a-folder.txt');
    fs.writeFileSync(plainFile, 'a file where a folder should be\n');

    const run = await runCli(['ingest', second, ...flagsWithOutbox(ws, path.join(plainFile, 'outbox'))]);
    expect(run.code).toBe(1);
    expect(run.stderr).toContain('could not be written');
    expect(run.stderr).toContain('ENOTDIR');
    expect(run.stderr).toContain('rebuilt on the next run');
    expect(lookIntoStore(ws.paths.db).ropes).toBe(before.ropes + 1);
    expect(fs.existsSync(second)).toBe(false);
    expect(fs.existsSync(path.join(ws.paths.inbox, 'archive', 'ropes_2.csv'))).toBe(true);

    // The real outbox still shows the first drop only; any run on it brings it up to date.
    const summary = path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-03', 'summary.json');
    const ropesIn = () =>
      (JSON.parse(fs.readFileSync(summary, 'utf8')) as { barns: { ropesHung: number }[] }).barns.reduce(
        (sum, barn) => sum + barn.ropesHung,
        0,
      );
    expect(ropesIn()).toBe(1);
    const third = path.join(ws.paths.inbox, 'ropes_3.csv');
    fs.writeFileSync(
      third,
      ropeSheet(ws.config().siteById.get('TAMSIN-RIDGE')!, [
        {
          sampleId: 'T9',
          barnId: ws.config().siteById.get('TAMSIN-RIDGE')!.barns[0]!.id,
          penId: ws.config().siteById.get('TAMSIN-RIDGE')!.barns[0]!.pens[0]!.id,
          hungOn: '2026-08-03',
        },
      ]),
    );
    const next = await runCli(['ingest', third, ...ws.cliFlags]);
    expect(next.code, next.stderr).toBe(0);
    expect(next.stderr).toContain('hollow-creek were behind the store');
    expect(ropesIn()).toBe(2);
  });

  it('exits 1 with ENOSPC when the disk is full; the file is stored, the earlier outputs stay whole, no temp file is left', async () => {
    const { ws, second } = await storedWorkspace();
    const before = lookIntoStore(ws.paths.db);
    const siteDir = path.join(ws.paths.outbox, 'hollow-creek');
    const roundDirs = fs.readdirSync(siteDir).filter((entry) => /^r\d+-/.test(entry));
    expect(roundDirs).toEqual(['r01-2026-08-03']);
    // src/report/files.ts writes `.<name>.<pid>.<counter>.tmp` and renames it over <name>; the
    // first output of the site is its first round's summary.json. Every temp name this process
    // can use for it becomes a symlink to /dev/full, so the write itself fails with ENOSPC.
    const roundDir = path.join(siteDir, roundDirs[0]!);
    const summaryBefore = fs.readFileSync(path.join(roundDir, 'summary.json'));
    for (let counter = 0; counter < 5000; counter++)
      fs.symlinkSync('/dev/full', path.join(roundDir, `.summary.json.${process.pid}.${counter}.tmp`));

    const run = await runCli(['ingest', second, ...ws.cliFlags]);
    expect(run.code).toBe(1);
    expect(run.stderr).toContain('could not be written');
    expect(run.stderr).toContain('ENOSPC');
    expect(lookIntoStore(ws.paths.db).ropes).toBe(before.ropes + 1);
    expect(fs.existsSync(path.join(ws.paths.inbox, 'archive', 'ropes_2.csv'))).toBe(true);
    // The summary that was there before is not replaced, and the staged files of the failed set are gone.
    expect(fs.readFileSync(path.join(roundDir, 'summary.json'))).toEqual(summaryBefore);
    for (const entry of fs.readdirSync(siteDir, { recursive: true, encoding: 'utf8' })) {
      if (entry.endsWith('.tmp')) expect(fs.lstatSync(path.join(siteDir, entry)).isSymbolicLink(), entry).toBe(true);
    }
  });
});
