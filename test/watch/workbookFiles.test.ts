/**
 * `watch` takes spreadsheets: an .xlsx is read and archived; an old .xls, which ropewatch does not
 * read, is refused with the reason and moved to rejected/, never left in the inbox unseen. Real
 * chokidar, the real pipeline; the workbook is the demo scenario's Northfield workbook (sheet
 * "Results", header on row 3, as the demo profile says). The .xls stand-in carries the compound
 * file signature of [MS-CFB] 2.2, which is all the refusal looks at.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { northfieldWorkbook } from '../../src/demo/scenario.js';
import type { Receipt } from '../../src/ingest/receipt.js';
import { processFile } from '../../src/pipeline.js';
import { watchInbox } from '../../src/watch/watchInbox.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

async function waitFor(condition: () => boolean, label: string, timeoutMs = 15_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!condition()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}`);
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
}

describe('watch with spreadsheets in the inbox', () => {
  it('reads an .xlsx and refuses an .xls with the reason, both moved out of the inbox', async () => {
    const ws = workspace();
    const rows = [
      { sampleId: 'HC-1029-F1-01', assay: 'PRRSV' as const, ct: 27.5, collectedOn: '2026-10-26' },
      { sampleId: 'HC-1029-F1-01', assay: 'IAV' as const, ct: null, collectedOn: '2026-10-26' },
    ];
    fs.writeFileSync(
      path.join(ws.paths.inbox, 'nvdl_results_2026-10-29.xlsx'),
      await northfieldWorkbook(rows, '2026-10-29', 1, '2026-10-29T13:00:00.000Z'),
    );
    fs.writeFileSync(
      path.join(ws.paths.inbox, 'nvdl_old.xls'),
      Buffer.concat([Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]), Buffer.alloc(504)]),
    );
    const receipts: Receipt[] = [];
    let stop!: () => void;
    const stopped = new Promise<void>((resolve) => (stop = resolve));
    const done = watchInbox({
      inbox: ws.paths.inbox,
      stableMs: 150,
      stop: stopped,
      onFile: async (file) => {
        receipts.push((await processFile(ws.ws(), file)).receipt);
      },
      onError: (error) => {
        throw error;
      },
      log: () => {},
    });
    await waitFor(() => receipts.length === 2, 'both spreadsheets');
    stop();
    await done;
    const byName = Object.fromEntries(receipts.map((receipt) => [receipt.file, receipt]));
    expect(byName['nvdl_results_2026-10-29.xlsx']).toMatchObject({
      status: 'accepted',
      sheet: 'Results',
      rows: { accepted: 2 },
    });
    expect(byName['nvdl_old.xls']).toMatchObject({ status: 'rejected', reason: { code: 'not-a-workbook' } });
    expect(byName['nvdl_old.xls']!.reason!.message).toMatch(/\.xls\) .*save it as \.xlsx or CSV/);
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'archive'))).toEqual(['nvdl_results_2026-10-29.xlsx']);
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'rejected')).sort()).toEqual([
      'nvdl_old.xls',
      'nvdl_old.xls.reason.txt',
    ]);
  });
});
