/**
 * End to end through processFile with real files in temp folders: store, outbox, receipts,
 * archive and rejected folders. Files are written with the demo scenario's exporters; expected
 * counts are by hand from the rows written.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { catchUpOutputs, staleSites } from '../../src/outputs.js';
import { treeHashes, workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const ROPES = [
  { sampleId: 'HC-0803-F1-01', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
  { sampleId: 'HC-0803-F1-02', barnId: 'F1', penId: 'A4', hungOn: '2026-08-03' },
  { sampleId: 'HC-0803-F1-03', barnId: 'F1', penId: 'B7', hungOn: '2026-08-03' },
  { sampleId: 'HC-0803-F3-01', barnId: 'F3', penId: 'N2', hungOn: '2026-08-04' },
];
const results = () =>
  northfieldExport(
    [
      { sampleId: 'HC-0803-F1-01', assay: 'PRRSV', ct: 28.4, collectedOn: '2026-08-03' },
      { sampleId: 'HC-0803-F1-02', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' },
      { sampleId: 'HC-0803-F1-03', assay: 'PRRSV', ct: 37.1, collectedOn: '2026-08-03' },
      // HC-0803-F3-01 never came back.
    ],
    '2026-08-06',
    1,
  );
const sheet = (ws: TestWorkspace) => ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, ROPES);
const summaryPath = (ws: TestWorkspace) => path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-03', 'summary.json');
const readSummary = (ws: TestWorkspace) => JSON.parse(fs.readFileSync(summaryPath(ws), 'utf8'));
const roundFolders = (dir: string) =>
  fs
    .readdirSync(dir)
    .filter((name) => /^r\d{2,}-/.test(name))
    .sort();
const siteOutputs = (ws: TestWorkspace) => treeHashes(ws.paths.outbox, ['receipts']);

describe('pipeline end to end', () => {
  it('turns a rope sheet and a results export into a round summary with the right counts', async () => {
    const ws = workspace();
    const a = await ws.drop('hollow-creek_ropes.csv', sheet(ws));
    const b = await ws.drop('nvdl_results_2026-08-06.csv', results());
    expect(a.receipt).toMatchObject({ status: 'accepted', kind: 'ropes', rows: { accepted: 4 } });
    expect(b.receipt).toMatchObject({
      status: 'accepted',
      kind: 'results',
      lab: 'northfield',
      rows: { accepted: 3 },
      sites: ['hollow-creek'],
    });
    expect(fs.existsSync(path.join(ws.paths.inbox, 'archive', 'nvdl_results_2026-08-06.csv'))).toBe(true);
    expect(fs.existsSync(path.join(ws.paths.inbox, 'nvdl_results_2026-08-06.csv'))).toBe(false);
    expect(fs.existsSync(summaryPath(ws).replace('.json', '.csv'))).toBe(true);
    const summary = readSummary(ws);
    expect(summary.round).toMatchObject({
      number: 1,
      id: 'r01-2026-08-03',
      startOn: '2026-08-03',
      endOn: '2026-08-04',
    });
    const f1 = summary.barns.find((barn: { barnId: string }) => barn.barnId === 'F1');
    // By hand: 3 ropes in F1, all back; Ct 28.4 < 36 positive, 37.1 in [36, 40) suspect, one negative.
    expect(f1).toMatchObject({ pensInUse: 38, ropesHung: 3, ropesReturned: 3, missingSampleIds: [] });
    expect(f1.assays.find((assay: { assayId: string }) => assay.assayId === 'PRRSV')).toMatchObject({
      positive: 1,
      suspect: 1,
      negative: 1,
      invalid: 0,
      positivePens: ['A1'],
      suspectPens: ['B7'],
    });
    const f3 = summary.barns.find((barn: { barnId: string }) => barn.barnId === 'F3');
    expect(f3).toMatchObject({ ropesHung: 1, ropesReturned: 0, missingSampleIds: ['HC-0803-F3-01'] });
    expect(
      fs.existsSync(
        path.join(
          ws.paths.outbox,
          'receipts',
          `nvdl_results_2026-08-06.csv.${b.receipt.sha256.slice(0, 8)}.receipt.json`,
        ),
      ),
    ).toBe(true);
  });

  it('keeps results that arrive before their rope sheet as unresolved and places them when the sheet arrives', async () => {
    const ws = workspace();
    const early = await ws.drop('nvdl_results_2026-08-06.csv', results());
    expect(early.receipt.status).toBe('accepted');
    expect(early.receipt.unresolvedSampleIds).toEqual(['HC-0803-F1-01', 'HC-0803-F1-02', 'HC-0803-F1-03']);
    expect(early.receipt.sites).toEqual([]);
    expect(ws.ws().store.unresolvedSampleIds()).toHaveLength(3);
    expect(fs.existsSync(summaryPath(ws))).toBe(false);
    const late = await ws.drop('hollow-creek_ropes.csv', sheet(ws));
    expect(late.receipt.resolvedSampleIds).toEqual(['HC-0803-F1-01', 'HC-0803-F1-02', 'HC-0803-F1-03']);
    expect(ws.ws().store.unresolvedSampleIds()).toEqual([]);
    expect(readSummary(ws).barns.find((barn: { barnId: string }) => barn.barnId === 'F1')).toMatchObject({
      ropesReturned: 3,
    });
  });

  it('moves a malformed file to inbox/rejected with a reason and harms nothing else', async () => {
    const ws = workspace();
    await ws.drop('hollow-creek_ropes.csv', sheet(ws));
    await ws.drop('nvdl_results_2026-08-06.csv', results());
    const countsBefore = ws.ws().store.counts();
    const outputsBefore = siteOutputs(ws);
    const { receipt, movedTo } = await ws.drop(
      'nvdl_invoice.csv',
      'Invoice,Client,Samples,Amount\nINV-2291,Someone,36,412.00\n',
    );
    expect(receipt).toMatchObject({ status: 'rejected', reason: { code: 'unknown-format' } });
    expect(movedTo).toBe(path.join(ws.paths.inbox, 'rejected', 'nvdl_invoice.csv'));
    expect(fs.readFileSync(`${movedTo}.reason.txt`, 'utf8')).toContain('unknown-format');
    expect(ws.ws().store.counts()).toEqual({
      ...countsBefore,
      files: countsBefore.files + 1,
      rejectedFiles: countsBefore.rejectedFiles + 1,
    });
    expect(siteOutputs(ws)).toEqual(outputsBefore);
  });

  it('changes nothing when the same file is dropped twice: outputs byte-identical', async () => {
    const ws = workspace();
    await ws.drop('hollow-creek_ropes.csv', sheet(ws));
    await ws.drop('nvdl_results_2026-08-06.csv', results());
    const outputsBefore = siteOutputs(ws);
    const countsBefore = ws.ws().store.counts();
    const again = await ws.drop('nvdl_results_2026-08-06.csv', results());
    expect(again.receipt.status).toBe('duplicate');
    // The archive already holds that name: the second copy is kept beside it, not over it.
    expect(path.basename(again.movedTo)).toBe(`nvdl_results_2026-08-06.${again.receipt.sha256.slice(0, 8)}.csv`);
    expect(ws.ws().store.counts()).toEqual(countsBefore);
    expect(siteOutputs(ws)).toEqual(outputsBefore);
  });

  it('stores no row of a file whose quoting breaks halfway, even after earlier batches were written', async () => {
    const ws = workspace();
    const header =
      'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status';
    const lines = [header];
    // 5000 rows: more than two batches of 2000 (BATCH_ROWS) before the break at line 4500.
    for (let i = 1; i <= 5000; i++) {
      const sample = `LAB-${String(i).padStart(5, '0')}`;
      lines.push(
        i === 4499
          ? `NV26-1,"${sample},PRRSV NA/EU RT-PCR,Undetermined,Negative,PASS,2026-08-03,2026-08-06,Final`
          : `NV26-1,${sample},PRRSV NA/EU RT-PCR,Undetermined,Negative,PASS,2026-08-03,2026-08-06,Final`,
      );
    }
    const { receipt, movedTo } = await ws.drop('nvdl_big.csv', lines.join('\n') + '\n');
    expect(receipt.status).toBe('rejected');
    // The quote opens on line 4500 (row 4499 plus the header line); the parser only notices at the end.
    expect(receipt.reason).toMatchObject({ code: 'malformed-csv', line: 4500 });
    expect(receipt.rows.accepted).toBe(0);
    expect(path.dirname(movedTo)).toBe(path.join(ws.paths.inbox, 'rejected'));
    expect(ws.ws().store.counts()).toMatchObject({ files: 1, rejectedFiles: 1, results: 0, rejectedRows: 0 });
  });

  it('stores no row of a file with invalid UTF-8 after the first 64 KB and names the line', async () => {
    const ws = workspace();
    const header =
      'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status';
    const rows: Buffer[] = [Buffer.from(header + '\n')];
    let size = 0;
    let badLine = 0;
    for (let i = 1; i <= 4000; i++) {
      let row = Buffer.from(
        `NV26-1,LAB-${String(i).padStart(5, '0')},PRRSV NA/EU RT-PCR,Undetermined,Negative,PASS,2026-08-03,2026-08-06,Final\n`,
      );
      if (i === 3000) {
        // 0xFF is never valid in UTF-8 (RFC 3629); placed well past the 64 KB sniffed block.
        row = Buffer.concat([row.subarray(0, 10), Buffer.from([0xff]), row.subarray(10)]);
        badLine = i + 1;
        expect(size).toBeGreaterThan(64 * 1024);
      }
      size += row.length;
      rows.push(row);
    }
    const { receipt } = await ws.drop('nvdl_bad_bytes.csv', Buffer.concat(rows));
    expect(receipt).toMatchObject({ status: 'rejected', reason: { code: 'invalid-encoding', line: badLine } });
    expect(ws.ws().store.counts()).toMatchObject({ results: 0, rejectedFiles: 1 });
  });

  it('renumbers a site’s round folders when a late sheet brings an earlier round, and removes the stale folder', async () => {
    const ws = workspace();
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    await ws.drop(
      'ropes_0817.csv',
      ropeSheet(site, [{ sampleId: 'L1', barnId: 'F1', penId: 'A2', hungOn: '2026-08-17' }]),
    );
    const siteDir = path.join(ws.paths.outbox, 'hollow-creek');
    expect(roundFolders(siteDir)).toEqual(['r01-2026-08-17']);
    await ws.drop(
      'ropes_0803.csv',
      ropeSheet(site, [{ sampleId: 'E1', barnId: 'F1', penId: 'A2', hungOn: '2026-08-03' }]),
    );
    expect(roundFolders(siteDir)).toEqual(['r01-2026-08-03', 'r02-2026-08-17']);
  });

  it('stores and archives the file when its outputs cannot be written, keeps the old outputs whole, and the next run rebuilds them', async () => {
    const ws = workspace();
    await ws.drop('hollow-creek_ropes.csv', sheet(ws));
    const before = readSummary(ws);
    // A folder where the rope list should go: renaming the new next-round.csv over it fails (EISDIR, rename(2)).
    const nextRound = path.join(ws.paths.outbox, 'hollow-creek', 'next-round.csv');
    fs.rmSync(nextRound);
    fs.mkdirSync(nextRound);
    fs.writeFileSync(path.join(nextRound, 'keep.txt'), 'not ours\n');

    const outcome = await ws.drop('nvdl_results_2026-08-06.csv', results());
    expect(outcome.receipt).toMatchObject({ status: 'accepted', rows: { accepted: 3 } });
    expect(outcome.outputError?.message).toContain('hollow-creek');
    expect(outcome.movedTo).toBe(path.join(ws.paths.inbox, 'archive', 'nvdl_results_2026-08-06.csv'));
    expect(ws.ws().store.counts()).toMatchObject({ results: 3 });
    // Nothing of the new set was swapped in: the summary is the one from before, and no temp file is left.
    expect(readSummary(ws)).toEqual(before);
    expect(
      fs
        .readdirSync(path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-03'))
        .filter((name) => name.endsWith('.tmp')),
    ).toEqual([]);
    expect(staleSites(ws.ws())).toEqual(['hollow-creek']);

    fs.rmSync(nextRound, { recursive: true });
    expect(catchUpOutputs(ws.ws())).toEqual(['hollow-creek']);
    expect(staleSites(ws.ws())).toEqual([]);
    const f1 = readSummary(ws).barns.find((barn: { barnId: string }) => barn.barnId === 'F1');
    expect(f1.assays.find((assay: { assayId: string }) => assay.assayId === 'PRRSV')).toMatchObject({
      positive: 1,
      positivePens: ['A1'],
    });
  });

  it('counts outputs built under another configuration as behind, and only sites that hold data', async () => {
    const ws = workspace();
    await ws.drop('hollow-creek_ropes.csv', sheet(ws));
    expect(staleSites(ws.ws())).toEqual([]);
    ws.closeStore();
    // A changed cutoff changes what the outputs say: the site with data is rebuilt, the empty one is not.
    const assays = path.join(ws.paths.configDir, 'assays.yaml');
    fs.appendFileSync(assays, '# cutoffs reviewed\n');
    expect(staleSites(ws.ws())).toEqual(['hollow-creek']);
    expect(catchUpOutputs(ws.ws())).toEqual(['hollow-creek']);
    expect(staleSites(ws.ws())).toEqual([]);
  });
});
