/**
 * A file is read in chunks into one buffer used again for each: text cut between two chunks,
 * inside a character of several bytes, is stored as written, on the main thread and on the parse
 * worker alike.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ingestFile } from '../../src/ingest/ingestFile.js';
import { FIXED_NOW, workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const NF_HEADER =
  'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status';
/** Case numbers of 2-, 3- and 4-byte UTF-8 characters, so that chunk ends fall inside characters. */
const caseNumber = (i: number) => `NVÄ€😀-${i}`;
const ROWS = 3000;

describe('reading a file in chunks', () => {
  for (const thread of ['main thread', 'parse worker'] as const) {
    it(`stores characters cut between chunks as written (${thread})`, async () => {
      const ws = workspace();
      const deps = {
        config: ws.config(),
        store: ws.ws().store,
        now: () => FIXED_NOW,
        parseInWorkerFromBytes: thread === 'parse worker' ? 0 : Number.POSITIVE_INFINITY,
      };
      const lines = Array.from(
        { length: ROWS },
        (_, i) => `${caseNumber(i)},LAB-${i},PRRSV NA/EU RT-PCR,Undetermined,Negative,PASS,2026-08-31,2026-09-02,Final`,
      );
      const file = path.join(ws.paths.inbox, 'nvdl_chunks.csv');
      fs.writeFileSync(file, `${[NF_HEADER, ...lines].join('\n')}\n`);
      // Several 64 KiB chunks.
      expect(fs.statSync(file).size).toBeGreaterThan(4 * 64 * 1024);
      const receipt = await ingestFile(file, deps);
      expect(receipt.status).toBe('accepted');
      expect(receipt.rows.accepted).toBe(ROWS);
      const stored = ws.sql().all<{ accession: string }>('SELECT accession FROM results ORDER BY line');
      expect(stored.map((row) => row.accession)).toEqual(lines.map((_, i) => caseNumber(i)));
    });
  }
});
