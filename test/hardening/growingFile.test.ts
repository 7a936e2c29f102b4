/**
 * A file still being written when it is read: stored whole once it is whole, never stored up to
 * where the writer had got. The writer is simulated deterministically: the clock that ingest
 * reads once, right before it takes the file's size, mtime and inode, schedules an append on the
 * next turn of the event loop, so the append always lands after that first look and before the
 * commit (which comes after many more turns).
 *
 * Expected counts are by hand from the rows written.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { northfieldExport } from '../../src/demo/scenario.js';
import { FileStillChangingError, ingestFile } from '../../src/ingest/ingestFile.js';
import { FileChangedError, mappedBatches } from '../../src/ingest/mappedBatches.js';
import { createHash } from 'node:crypto';
import { sniffEncoding } from '../../src/ingest/decode.js';
import { detectFileKind } from '../../src/ingest/detect.js';
import { runCli } from '../helpers/runCli.js';
import { FIXED_NOW, workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

function rows(
  from: number,
  to: number,
): { sampleId: string; assay: 'PRRSV'; ct: number | null; collectedOn: string }[] {
  const list: { sampleId: string; assay: 'PRRSV'; ct: number | null; collectedOn: string }[] = [];
  for (let i = from; i <= to; i++)
    list.push({
      sampleId: `GROW-${String(i).padStart(4, '0')}`,
      assay: 'PRRSV' as const,
      ct: i === 700 ? 24.5 : null,
      collectedOn: '2026-08-03',
    });
  return list;
}

/** The export of rows 1..1000, cut after `cutAt` bytes (a writer part-way), and the rest. */
function exportInTwoParts(cutAt: (whole: string) => number): { first: string; rest: string; whole: string } {
  const whole = northfieldExport(rows(1, 1000), '2026-08-06', 1).toString('utf8');
  const at = cutAt(whole);
  return { first: whole.slice(0, at), rest: whole.slice(at), whole };
}

/** A clock that, when ingest reads it, lets the writer append `rest` on the next turn. */
function clockThatAppends(file: string, rest: string): () => Date {
  let armed = true;
  return () => {
    if (armed) {
      armed = false;
      setTimeout(() => fs.appendFileSync(file, rest), 0);
    }
    return FIXED_NOW;
  };
}

describe('a file that grows while it is read', () => {
  for (const thread of ['main thread', 'parse worker'] as const) {
    it(`stores nothing of a 1,000-row export cut after 400 rows, and stores it whole once it is whole (${thread})`, async () => {
      const ws = workspace();
      const open = ws.ws();
      const file = path.join(ws.paths.inbox, 'nvdl_growing.csv');
      // Cut at the end of the 401st line (header + 400 rows): what a writer has flushed so far.
      const { first, rest } = exportInTwoParts((whole) => whole.split('\n').slice(0, 401).join('\n').length + 1);
      fs.writeFileSync(file, first);
      const parseInWorkerFromBytes = thread === 'parse worker' ? 0 : Number.POSITIVE_INFINITY;
      await expect(
        ingestFile(file, {
          config: open.config,
          store: open.store,
          now: clockThatAppends(file, rest),
          parseInWorkerFromBytes,
        }),
      ).rejects.toBeInstanceOf(FileStillChangingError);
      expect(open.store.fileOpen).toBe(false);
      expect(open.store.counts()).toMatchObject({ files: 0, results: 0, rejectedRows: 0 });
      expect(fs.existsSync(file)).toBe(true);

      // The writer has finished: the next read stores all 1,000 rows.
      const receipt = await ingestFile(file, {
        config: open.config,
        store: open.store,
        now: () => FIXED_NOW,
        parseInWorkerFromBytes,
      });
      expect(receipt).toMatchObject({ status: 'accepted', rows: { accepted: 1000, rejected: 0 } });
      expect(receipt.sha256).toBe(createHash('sha256').update(fs.readFileSync(file)).digest('hex'));
    });
  }

  it('does not refuse a file cut inside a quoted field as malformed while its writer is still at work', async () => {
    const ws = workspace();
    const open = ws.ws();
    const file = path.join(ws.paths.inbox, 'nvdl_growing_quote.csv');
    // Quote the 300th sample ID and cut right after its opening quote: the head reads as an unclosed quote.
    const whole = northfieldExport(rows(1, 1000), '2026-08-06', 1).toString('utf8').replace('GROW-0300', '"GROW-0300"');
    const at = whole.indexOf('"GROW-0300"') + 1;
    fs.writeFileSync(file, whole.slice(0, at));
    await expect(
      ingestFile(file, { config: open.config, store: open.store, now: clockThatAppends(file, whole.slice(at)) }),
    ).rejects.toBeInstanceOf(FileStillChangingError);
    expect(open.store.counts()).toMatchObject({ files: 0, rejectedFiles: 0 });
    expect(fs.readFileSync(file, 'utf8')).toBe(whole);
  });

  it('reads exactly the bytes it hashed: bytes appended after hashing are caught, not parsed', async () => {
    const ws = workspace();
    const config = ws.config();
    const file = path.join(ws.paths.inbox, 'nvdl_unit.csv');
    const { first, rest } = exportInTwoParts((whole) => whole.split('\n').slice(0, 101).join('\n').length + 1);
    fs.writeFileSync(file, first);
    const bytes = fs.readFileSync(file);
    const sha256 = createHash('sha256').update(bytes).digest('hex');
    const sniffed = sniffEncoding(bytes, 'auto');
    const kind = detectFileKind('nvdl_unit.csv', first, config.labs);
    const input = {
      file,
      expected: { bytes: bytes.length, sha256 },
      fileName: 'nvdl_unit.csv',
      sniffed,
      kind,
      sites: config.sites,
      assayById: config.assayById,
    };
    let stored = 0;
    for await (const batch of mappedBatches(input)) stored += batch.results.length;
    expect(stored).toBe(100);
    // Same length, other bytes (a writer rewriting in place): the hash of the bytes parsed differs.
    fs.writeFileSync(file, first.replace('GROW-0001', 'GROW-9999'));
    await expect(
      (async () => {
        for await (const _ of mappedBatches(input)) void _;
      })(),
    ).rejects.toBeInstanceOf(FileChangedError);
    // Appended bytes are not read at all: the 100 rows hashed are what is parsed.
    fs.writeFileSync(file, first + rest);
    stored = 0;
    for await (const batch of mappedBatches({ ...input, expected: { bytes: bytes.length, sha256 } }))
      stored += batch.results.length;
    expect(stored).toBe(100);
  });

  it('ingest leaves a growing file in the inbox, says why and exits 1; the next run stores it whole', async () => {
    const ws = workspace();
    const file = path.join(ws.paths.inbox, 'nvdl_growing_cli.csv');
    const { first, rest } = exportInTwoParts((whole) => whole.split('\n').slice(0, 401).join('\n').length + 1);
    fs.writeFileSync(file, first);
    const run = await runCli(['ingest', file, ...ws.cliFlags], { now: clockThatAppends(file, rest) });
    expect(run.code).toBe(1);
    expect(run.stderr).toContain('nvdl_growing_cli.csv');
    expect(run.stderr).toContain('stays in the inbox');
    expect(fs.existsSync(file)).toBe(true);
    expect(fs.existsSync(path.join(ws.paths.outbox, 'receipts'))).toBe(false);
    const again = await runCli(['ingest', file, '--json', ...ws.cliFlags]);
    expect(again.code, again.stderr).toBe(0);
    expect(JSON.parse(again.stdout)[0]).toMatchObject({ status: 'accepted', rows: { accepted: 1000 } });
  });
});

describe('a header longer than the first block read', () => {
  it('is read whole: a 100,000-character column name before the required columns does not hide them', async () => {
    const ws = workspace();
    const open = ws.ws();
    const file = path.join(ws.paths.inbox, 'nvdl_wide_header.csv');
    const base = northfieldExport(rows(1, 3), '2026-08-06', 1).toString('utf8').split('\n');
    // An extra first column whose name is longer than 64 KB, and an empty cell for it in each row.
    const longName = `Remarks ${'x'.repeat(100_000)}`;
    const lines = [
      `${longName},${base[0]}`,
      ...base
        .slice(1)
        .filter((line) => line !== '')
        .map((line) => `,${line}`),
    ];
    fs.writeFileSync(file, lines.join('\n') + '\n');
    const receipt = await ingestFile(file, { config: open.config, store: open.store, now: () => FIXED_NOW });
    expect(receipt.reason).toBeNull();
    expect(receipt).toMatchObject({
      status: 'accepted',
      kind: 'results',
      lab: 'northfield',
      rows: { accepted: 3, rejected: 0 },
    });
  });
});
