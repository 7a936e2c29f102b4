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
/**
 * Case numbers of 2-, 3- and 4-byte UTF-8 characters. These counts put two chunk ends of this
 * file inside a character (one inside a 2-byte Ä, one inside a 3-byte €), checked below.
 */
const caseNumber = (i: number) => `NVÄÄ€€€😀😀😀-${i}`;
const ROWS = 3000;
/** Bytes per chunk: READ_CHUNK_BYTES in src/ingest/mappedBatches.ts. */
const CHUNK_BYTES = 64 * 1024;

/** How many chunk ends fall on a UTF-8 continuation byte (10xxxxxx, RFC 3629 section 3), inside a character. */
function chunkEndsInsideCharacters(bytes: Buffer): number {
  let inside = 0;
  for (let at = CHUNK_BYTES; at < bytes.length; at += CHUNK_BYTES) if ((bytes[at]! & 0xc0) === 0x80) inside++;
  return inside;
}

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
      // Several chunks, and chunk ends that cut a character.
      expect(fs.statSync(file).size).toBeGreaterThan(4 * CHUNK_BYTES);
      expect(chunkEndsInsideCharacters(fs.readFileSync(file))).toBe(2);
      const receipt = await ingestFile(file, deps);
      expect(receipt.status).toBe('accepted');
      expect(receipt.rows.accepted).toBe(ROWS);
      const stored = ws.sql().all<{ accession: string }>('SELECT accession FROM results ORDER BY line');
      expect(stored.map((row) => row.accession)).toEqual(lines.map((_, i) => caseNumber(i)));
    });
  }
});
