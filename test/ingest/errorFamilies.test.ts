/**
 * Every error family carries a code that code and tests can tell apart without reading prose:
 * file-level refusals and row refusals (codes of REJECTION_CODES), configuration, usage and
 * store-open errors, and the outcomes interrupted, file still changing and file taken. Each is
 * produced here by the code path that produces it in use, where one is reachable from a test.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterEach, describe, expect, it } from 'vitest';
import { InterruptedError, UsageError } from '../../src/cli/io.js';
import { loadConfig } from '../../src/config/load.js';
import { ConfigError } from '../../src/config/problems.js';
import { detectFileKind } from '../../src/ingest/detect.js';
import { IngestError, REJECTION_CODES, rowRejection } from '../../src/ingest/errors.js';
import { FileStillChangingError, ingestFile } from '../../src/ingest/ingestFile.js';
import { FileTakenError } from '../../src/inboxFiles.js';
import { processFile } from '../../src/pipeline.js';
import { Store, StoreOpenError } from '../../src/store/store.js';
import { FIXED_NOW, workspacesPerTest } from '../helpers/workspace.js';

const CORPUS = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../fixtures/exports');
const workspace = workspacesPerTest();
const temporary: string[] = [];
afterEach(() => {
  for (const dir of temporary.splice(0)) fs.rmSync(dir, { recursive: true, force: true });
});
function tempDir(): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-errors-'));
  temporary.push(dir);
  return dir;
}

describe('file-level refusals', () => {
  it('come back on the receipt with their code, and the thrown IngestError names code, file, line and field', async () => {
    const ws = workspace({ configFrom: path.join(CORPUS, 'config') });
    const outcome = await ws.drop('empty.csv', '');
    expect(outcome.receipt.status).toBe('rejected');
    expect(outcome.receipt.reason?.code).toBe('empty-file');

    // A header that fits no lab profile and is not a rope sheet (common practice, no source).
    const thrown = (() => {
      try {
        detectFileKind('invoice.csv', 'Item;Price;Total\nrope;3;3\n', ws.config().labs);
      } catch (error) {
        return error;
      }
      return undefined;
    })();
    expect(thrown).toBeInstanceOf(IngestError);
    expect(thrown).toMatchObject({ code: 'unknown-format', file: 'invoice.csv', line: 1, field: undefined });
  });

  it('take their context from one options object', () => {
    const error = new IngestError({ code: 'missing-column', file: 'a.csv', line: 3, field: 'Ct Value' });
    expect(error).toMatchObject({
      code: 'missing-column',
      file: 'a.csv',
      line: 3,
      field: 'Ct Value',
      value: undefined,
    });
    expect(error.message.startsWith('a.csv, line 3, field "Ct Value": ')).toBe(true);
  });
});

describe('row refusals', () => {
  it('are listed on an accepted file by code, line and field', async () => {
    const ws = workspace({ configFrom: path.join(CORPUS, 'config') });
    const name = 'nvdl_ragged-row.csv';
    const outcome = await ws.drop(name, fs.readFileSync(path.join(CORPUS, name)));
    expect(outcome.receipt.status).toBe('accepted');
    // The corpus expectation beside the file names the same two rows.
    expect(outcome.receipt.rejectedRows.map(({ code, line, field }) => ({ code, line, field }))).toEqual([
      { code: 'ragged-row', line: 3, field: undefined },
      { code: 'ragged-row', line: 5, field: undefined },
    ]);
  });

  it('are built by rowRejection, which keeps the value to 200 characters and defaults the message to the code', () => {
    const refusal = rowRejection({ code: 'bad-ct', line: 7, field: 'Ct Value', value: 'x'.repeat(300) });
    expect(refusal).toMatchObject({ code: 'bad-ct', line: 7, field: 'Ct Value', message: REJECTION_CODES['bad-ct'] });
    expect(refusal.value).toHaveLength(200);
  });
});

describe('configuration, usage and store-open errors', () => {
  it('a configuration folder without its files is a ConfigError coded config', () => {
    let thrown: unknown;
    try {
      loadConfig(tempDir());
    } catch (error) {
      thrown = error;
    }
    expect(thrown).toBeInstanceOf(ConfigError);
    expect((thrown as ConfigError).code).toBe('config');
  });

  it('a store file that is not SQLite is a StoreOpenError coded store-open', () => {
    const file = path.join(tempDir(), 'not-a-store.db');
    fs.writeFileSync(file, 'this is plain text, not an SQLite database\n'.repeat(200));
    let thrown: unknown;
    try {
      new Store(file).close();
    } catch (error) {
      thrown = error;
    }
    expect(thrown).toBeInstanceOf(StoreOpenError);
    expect((thrown as StoreOpenError).code).toBe('store-open');
  });

  it('usage errors and interruptions carry their codes', () => {
    expect(new UsageError('--order must be one of a, b').code).toBe('usage');
    expect(new InterruptedError('stopped by SIGINT', 130)).toMatchObject({ code: 'interrupted', exitCode: 130 });
  });
});

describe('outcomes that leave the file in the inbox', () => {
  it('a file rewritten while it is read is FileStillChangingError coded file-still-changing, nothing stored', async () => {
    const ws = workspace({ configFrom: path.join(CORPUS, 'config') });
    const file = path.join(ws.paths.inbox, 'nvdl_ragged-row.csv');
    const bytes = fs.readFileSync(path.join(CORPUS, 'nvdl_ragged-row.csv'));
    fs.writeFileSync(file, bytes);
    const real = ws.ws().store;
    // A writer appends while ingest looks the hash up: after hashing, before the rows are read.
    const store = new Proxy(real, {
      get(target, property) {
        if (property === 'findFileByHash') {
          return (sha256: string) => {
            fs.appendFileSync(file, 'more,bytes\n');
            return target.findFileByHash(sha256);
          };
        }
        const value = Reflect.get(target, property) as unknown;
        return typeof value === 'function' ? (value as (...args: unknown[]) => unknown).bind(target) : value;
      },
    }) as Store;
    const outcome = await ingestFile(file, { config: ws.config(), store, now: () => FIXED_NOW }).catch(
      (error: unknown) => error,
    );
    expect(outcome).toBeInstanceOf(FileStillChangingError);
    expect((outcome as FileStillChangingError).code).toBe('file-still-changing');
    expect(real.counts()).toMatchObject({ files: 0, results: 0 });
  });

  it('a file another process took is FileTakenError coded file-taken', async () => {
    const ws = workspace({ configFrom: path.join(CORPUS, 'config') });
    const thrown = await processFile(ws.ws(), path.join(ws.paths.inbox, 'gone.csv')).catch((error: unknown) => error);
    expect(thrown).toBeInstanceOf(FileTakenError);
    expect((thrown as FileTakenError).code).toBe('file-taken');
  });

  it('each family has a code of its own, none of them a refusal code', () => {
    const families = ['config', 'usage', 'store-open', 'interrupted', 'file-still-changing', 'file-taken'];
    expect(new Set(families).size).toBe(families.length);
    for (const code of families) expect(Object.keys(REJECTION_CODES)).not.toContain(code);
  });
});
