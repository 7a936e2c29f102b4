/**
 * The bad inputs of the hardening issue, each through the CLI `ingest` command end to end: the
 * exit code (src/cli/io.ts EXIT: 1 when any file or row is refused), the receipt written to
 * outbox/receipts/ (its code, line and field), where the file went, and what the store holds.
 * Codes are the table in src/ingest/errors.ts; the outcome of each case is in its test name.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { PARSE_IN_WORKER_FROM_BYTES, type Receipt } from '../../src/ingest/ingestFile.js';
import { formatSampleId, mod37CheckCharacter } from '../../src/plan/sampleId.js';
import { lookIntoStore, NORTHFIELD_HEADER, northfieldLine } from '../helpers/hardening.js';
import { runCli } from '../helpers/runCli.js';
import { makeWorkspace, type TestWorkspace } from '../helpers/workspace.js';

let workspaces: TestWorkspace[] = [];
afterEach(() => {
  for (const ws of workspaces) ws.cleanup();
  workspaces = [];
});

function workspace(): TestWorkspace {
  const ws = makeWorkspace();
  workspaces.push(ws);
  return ws;
}

/** Drops one file into the inbox, runs `ropewatch ingest` on it and reads its receipt back. */
async function ingestOne(ws: TestWorkspace, name: string, bytes: Buffer | string) {
  const file = path.join(ws.paths.inbox, name);
  fs.writeFileSync(file, bytes);
  const run = await runCli(['ingest', file, ...ws.cliFlags]);
  const receiptsDir = path.join(ws.paths.outbox, 'receipts');
  const receiptFile = fs
    .readdirSync(receiptsDir)
    .find((entry) => entry.startsWith(`${name}.`) && entry.endsWith('.receipt.json'));
  expect(receiptFile, `receipt for ${name}`).toBeDefined();
  const receipt = JSON.parse(fs.readFileSync(path.join(receiptsDir, receiptFile!), 'utf8')) as Receipt;
  return { file, run, receipt, look: lookIntoStore(ws.paths.db) };
}

const lines = (...rows: string[]) => [NORTHFIELD_HEADER.join(','), ...rows].join('\n') + '\n';

function expectFileRefused(ws: TestWorkspace, outcome: Awaited<ReturnType<typeof ingestOne>>, code: string): void {
  expect(outcome.run.code, outcome.run.stderr).toBe(1);
  expect(outcome.receipt.status).toBe('rejected');
  expect(outcome.receipt.reason?.code).toBe(code);
  // Refused whole: no row stored, the file kept in the store (with its bytes) as rejected and
  // moved to inbox/rejected/ beside a .reason.txt.
  expect(outcome.look.results).toBe(0);
  expect(outcome.look.files).toEqual([expect.objectContaining({ status: 'rejected', reasonCode: code })]);
  const name = path.basename(outcome.file);
  expect(fs.existsSync(outcome.file)).toBe(false);
  expect(fs.existsSync(path.join(ws.paths.inbox, 'rejected', name))).toBe(true);
  expect(fs.readFileSync(path.join(ws.paths.inbox, 'rejected', `${name}.reason.txt`), 'utf8')).toContain(
    `code: ${code}`,
  );
}

describe('bad inputs through ropewatch ingest', () => {
  it('refuses a row with an unknown assay (unknown-assay, with its line), stores the other rows and exits 1', async () => {
    const ws = workspace();
    const out = await ingestOne(
      ws,
      'nvdl_assay.csv',
      lines(
        northfieldLine('C1', 'S-1', 'PRRSV', '30.1'),
        'C2,S-2,PEDV RT-PCR,28.0,Positive,PASS,2026-08-03,2026-08-06,Final',
        northfieldLine('C3', 'S-3', 'IAV', 'Undetermined'),
      ),
    );
    expect(out.run.code).toBe(1);
    expect(out.receipt.status).toBe('accepted');
    expect(out.receipt.rows).toMatchObject({ accepted: 2, rejected: 1 });
    expect(out.receipt.rejectedRows).toEqual([
      expect.objectContaining({ code: 'unknown-assay', line: 3, field: 'Test Name', value: 'PEDV RT-PCR' }),
    ]);
    expect(out.look.results).toBe(2);
    expect(out.look.rejectedRows).toBe(1);
    expect(fs.existsSync(path.join(ws.paths.inbox, 'archive', 'nvdl_assay.csv'))).toBe(true);
  });

  it('refuses rope-sheet rows naming an unknown site or an unknown pen (unknown-site, unknown-pen), keeps the good row and exits 1', async () => {
    const ws = workspace();
    const sheet =
      [
        'sample_id,site,barn,pen,hung_on',
        'R1,hollow-creek,F1,A1,2026-08-03',
        'R2,Nowhere Farm,F1,A2,2026-08-03',
        'R3,hollow-creek,F1,A99,2026-08-03',
      ].join('\n') + '\n';
    const out = await ingestOne(ws, 'ropes_bad-place.csv', sheet);
    expect(out.run.code).toBe(1);
    expect(out.receipt.kind).toBe('ropes');
    expect(out.receipt.rejectedRows).toEqual([
      expect.objectContaining({ code: 'unknown-site', line: 3, field: 'site', value: 'Nowhere Farm' }),
      expect.objectContaining({ code: 'unknown-pen', line: 4, field: 'pen', value: 'A99' }),
    ]);
    expect(out.look.ropes).toBe(1);
  });

  it('refuses a whole file whose header names a column twice (duplicate-header, line 1) and moves it to inbox/rejected', async () => {
    const ws = workspace();
    const out = await ingestOne(
      ws,
      'nvdl_dup.csv',
      `${NORTHFIELD_HEADER.join(',')},Ct Value\n${northfieldLine('C1', 'S-1', 'PRRSV', '30.1')},30.1\n`,
    );
    expectFileRefused(ws, out, 'duplicate-header');
    expect(out.receipt.reason).toMatchObject({ line: 1, field: 'Ct Value' });
  });

  it('refuses a whole file that lacks a required column (missing-column, naming the column)', async () => {
    const ws = workspace();
    const header = NORTHFIELD_HEADER.filter((cell) => cell !== 'Ct Value').join(',');
    const out = await ingestOne(
      ws,
      'nvdl_noct.csv',
      `${header}\nC1,S-1,PRRSV NA/EU RT-PCR,Positive,PASS,2026-08-03,2026-08-06,Final\n`,
    );
    expectFileRefused(ws, out, 'missing-column');
    expect(out.receipt.reason).toMatchObject({ field: 'Ct Value' });
  });

  it('stores the first of two ropes hung in one pen on one day and refuses the second (pen-twice-same-day, its line)', async () => {
    const ws = workspace();
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    const out = await ingestOne(
      ws,
      'ropes_twice.csv',
      ropeSheet(site, [
        { sampleId: 'P1', barnId: 'F1', penId: 'A4', hungOn: '2026-08-03' },
        { sampleId: 'P2', barnId: 'F1', penId: 'A4', hungOn: '2026-08-03' },
      ]),
    );
    expect(out.run.code).toBe(1);
    expect(out.receipt.rows).toMatchObject({ accepted: 1, rejected: 1 });
    expect(out.receipt.rejectedRows).toEqual([
      expect.objectContaining({ code: 'pen-twice-same-day', line: 3, field: 'pen', value: 'A4' }),
    ]);
    expect(out.look.ropes).toBe(1);
  });

  it('refuses a planned sample ID with a wrong check character (bad-check-character) instead of storing it, and keeps the correct one', async () => {
    const ws = workspace();
    // A planned ID of the demo site code HCF (src/plan/sampleId.ts); the mistyped copy carries
    // any other MOD 37-2 character, which ISO/IEC 7064 guarantees the check detects.
    const good = formatSampleId({ siteCode: 'HCF', round: 1, sequence: 5 });
    const check = mod37CheckCharacter('HCF01005');
    expect(good).toBe(`HCF01-005${check}`);
    const wrong = `HCF01-005${check === 'X' ? 'Y' : 'X'}`;
    const out = await ingestOne(
      ws,
      'nvdl_check.csv',
      lines(northfieldLine('C1', good, 'PRRSV', '30.1'), northfieldLine('C2', wrong, 'PRRSV', '29.0')),
    );
    expect(out.run.code).toBe(1);
    expect(out.receipt.rejectedRows).toEqual([
      expect.objectContaining({ code: 'bad-check-character', line: 3, field: 'Sample ID', value: wrong }),
    ]);
    expect(out.look.results).toBe(1);
  });

  it('refuses a file with a header and zero data rows (empty-file)', async () => {
    const ws = workspace();
    expectFileRefused(ws, await ingestOne(ws, 'nvdl_none.csv', lines()), 'empty-file');
  });

  it('refuses a file of zero bytes (empty-file)', async () => {
    const ws = workspace();
    expectFileRefused(ws, await ingestOne(ws, 'nvdl_zero.csv', ''), 'empty-file');
  });

  it('refuses binary content that is not CSV at all (not-csv)', async () => {
    const ws = workspace();
    // The first bytes of a PNG image (PNG specification, file signature) and some binary noise.
    const png = Buffer.concat([
      Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0x0d]),
      Buffer.alloc(200, 0x07),
    ]);
    expectFileRefused(ws, await ingestOne(ws, 'nvdl_picture.csv', png), 'not-csv');
  });

  it('refuses a large export whose quote never closes (malformed-csv, the line the record starts on) instead of reading the rest as one field', async () => {
    const ws = workspace();
    // Line 4 opens a quote that never closes; six megabytes follow (read on the parse worker).
    const filler = `${'x'.repeat(99)}\n`.repeat(60_000);
    const text =
      lines(
        northfieldLine('NV-1', 'Q-1', 'PRRSV', '31.0'),
        northfieldLine('NV-2', 'Q-2', 'PRRSV', 'Undetermined'),
        'NV-3,"Q-3,PRRSV NA/EU RT-PCR,30.1',
      ) + filler;
    expect(Buffer.byteLength(text)).toBeGreaterThanOrEqual(PARSE_IN_WORKER_FROM_BYTES);
    const out = await ingestOne(ws, 'nvdl_unclosed_big.csv', text);
    expectFileRefused(ws, out, 'malformed-csv');
    expect(out.receipt.reason?.line).toBe(4);
  });

  it('refuses prose that is text but no lab export or rope sheet (unknown-format)', async () => {
    const ws = workspace();
    expectFileRefused(
      ws,
      await ingestOne(ws, 'notes.txt', 'Dear clinic,\nplease find the results attached.\nRegards\n'),
      'unknown-format',
    );
  });

  it('stores a good export completely next to refused files in the same run, and exits 1 for the refusals', async () => {
    const ws = workspace();
    const good = path.join(ws.paths.inbox, 'nvdl_good.csv');
    fs.writeFileSync(
      good,
      northfieldExport([{ sampleId: 'G-1', assay: 'PRRSV', ct: 30, collectedOn: '2026-08-03' }], '2026-08-06', 1),
    );
    const bad = path.join(ws.paths.inbox, 'nvdl_bad.csv');
    fs.writeFileSync(bad, '');
    const run = await runCli(['ingest', bad, good, ...ws.cliFlags]);
    expect(run.code).toBe(1);
    const look = lookIntoStore(ws.paths.db);
    expect(look.resultsByFile).toEqual({ 'nvdl_good.csv': 1 });
    expect(look.files.map((file) => [file.name, file.status])).toEqual([
      ['nvdl_bad.csv', 'rejected'],
      ['nvdl_good.csv', 'accepted'],
    ]);
  });
});
