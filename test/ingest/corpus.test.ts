/**
 * The hostile-input corpus (test/fixtures/exports/): every file beside `<name>.expected.json`,
 * checked against the corpus config (a copy of the demo config in test/fixtures/exports/config).
 * Expectations were written by hand from the bytes of each file before running the code; the
 * binary, Latin-1, UTF-16 and BOM files come from make-fixtures.ts in the same folder, the
 * workbooks (.xlsx) from make-workbooks.ts. Each
 * file is read twice: on this thread, and on the parse worker that large files use; the
 * outcome must be the same.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { ingestFile } from '../../src/ingest/ingestFile.js';
import { openTestStore } from '../helpers/testStore.js';

const CORPUS = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../fixtures/exports');
const config = loadConfig(path.join(CORPUS, 'config'));

type Expected =
  | { status: 'accepted'; rows: number; rejected: { line: number; code: string; field: string | null }[] }
  | { status: 'rejected'; code: string; line: number | null; field?: string };

const inputs = fs
  .readdirSync(CORPUS, { withFileTypes: true })
  .filter((entry) => entry.isFile() && !entry.name.endsWith('.expected.json') && !entry.name.endsWith('.ts'))
  .map((entry) => entry.name)
  .sort();

describe('hostile-input corpus', () => {
  it('has an expectation beside every input, and an input for every expectation', () => {
    expect(inputs.length).toBeGreaterThanOrEqual(12);
    const expectations = fs.readdirSync(CORPUS).filter((name) => name.endsWith('.expected.json'));
    expect(expectations.map((name) => name.replace(/\.expected\.json$/, '')).sort()).toEqual(
      inputs.map((name) => name.replace(/\.[^.]+$/, '')).sort(),
    );
  });

  for (const [name, thread] of inputs.flatMap(
    (input) =>
      [
        [input, 'main thread'],
        [input, 'parse worker'],
      ] as const,
  )) {
    const expected = JSON.parse(
      fs.readFileSync(path.join(CORPUS, `${name.replace(/\.[^.]+$/, '')}.expected.json`), 'utf8'),
    ) as Expected;
    it(`${name} (${thread}): ${expected.status === 'accepted' ? `accepted with ${expected.rows} rows and ${expected.rejected.length} refused` : `refused as ${expected.code}`}`, async () => {
      const store = openTestStore();
      try {
        const receipt = await ingestFile(path.join(CORPUS, name), {
          config,
          store,
          now: () => new Date('2026-12-01T12:00:00Z'),
          parseInWorkerFromBytes: thread === 'parse worker' ? 0 : Number.POSITIVE_INFINITY,
        });
        if (expected.status === 'accepted') {
          expect(receipt.status, receipt.reason?.message).toBe('accepted');
          expect(receipt.rows.accepted).toBe(expected.rows);
          const rejected = [...receipt.rejectedRows]
            .sort((a, b) => a.line - b.line)
            .map((row) => ({ line: row.line, code: row.code, field: row.field ?? null }));
          expect(rejected).toEqual(expected.rejected);
          // Nothing lost: every refused row is in the store with its file.
          expect(store.counts()).toMatchObject({ files: 1, rejectedFiles: 0, rejectedRows: expected.rejected.length });
        } else {
          expect(receipt.status).toBe('rejected');
          expect({ code: receipt.reason?.code, line: receipt.reason?.line ?? null }).toEqual({
            code: expected.code,
            line: expected.line,
          });
          if (expected.field !== undefined) expect(receipt.reason?.field).toBe(expected.field);
          // A refused file leaves only its own record (with its bytes) in the store.
          expect(store.counts()).toMatchObject({ files: 1, rejectedFiles: 1, results: 0, ropes: 0, rejectedRows: 0 });
        }
      } finally {
        store.close();
      }
    });
  }
});
