/**
 * One input file into the store, streamed: hash, sniff, detect the kind, then parse and store in
 * bounded batches inside one transaction. A file is stored whole or not at all; a refused file
 * is recorded with its bytes and reason. Moving the file is the caller's job (see pipeline.ts).
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import type { Config } from '../config/types.js';
import { FileAlreadyStoredError, RECEIPT_LIST_LIMIT, type Store, type StoredFile } from '../store/store.js';
import { RecordTooLongError, UnclosedQuoteError } from './csvRecords.js';
import { BinaryContentError, decodeHead, EncodingError, sniffEncoding } from './decode.js';
import { detectFileKind, type FileKind } from './detect.js';
import { IngestError, REJECTION_CODES, type RejectionCode, type RowRejection } from './errors.js';
import { mappedBatches, type MappedBatch, type MappingInput } from './mappedBatches.js';
import { ParseWorker } from './workerBatches.js';

const HEAD_BYTES = 64 * 1024;
/**
 * Files at least this big are read and mapped on a worker thread while this one stores: below
 * it, starting a worker costs more than it saves.
 */
export const PARSE_IN_WORKER_FROM_BYTES = 4 * 1024 * 1024;
/** Rejected files up to this size keep their bytes in the store too. */
const KEEP_BYTES_LIMIT = 16 * 1024 * 1024;

export interface Receipt {
  file: string;
  sha256: string;
  receivedAt: string;
  status: 'accepted' | 'rejected' | 'duplicate';
  kind: 'results' | 'ropes' | 'unknown';
  lab: string | null;
  encoding: string | null;
  rows: { accepted: number; rejected: number; duplicate: number; superseded: number };
  rejectedRows: RowRejection[];
  rejectedRowsNotListed: number;
  /** Result sample IDs of this file with no rope yet: kept, and resolved when the sheet arrives (first 500). */
  unresolvedSampleIds: string[];
  /** Unresolved sample IDs beyond those listed. */
  unresolvedNotListed: number;
  /** Earlier results that this rope sheet (or pattern) has now placed in a pen. */
  resolvedSampleIds: string[];
  warnings: string[];
  reason: { code: RejectionCode; message: string; line: number | null; field: string | null } | null;
  /** Sites whose outputs this file changed. */
  sites: string[];
}

export interface IngestDeps {
  config: Config;
  store: Store;
  now: () => Date;
  /**
   * Rewrites the outputs of these sites from the store, inside the file's transaction: if it
   * throws (read-only or full outbox), the file is rolled back and stays in the inbox.
   */
  regenerate: (siteIds: readonly string[]) => void;
  /** Read and map files of at least this many bytes on a worker thread (default PARSE_IN_WORKER_FROM_BYTES). */
  parseInWorkerFromBytes?: number;
}

/** Thrown when outputs could not be written: the store is unchanged and the file stays put. */
export class OutputError extends Error {
  override readonly name = 'OutputError';
}

async function hashFile(file: string): Promise<{ sha256: string; size: number }> {
  const hash = createHash('sha256');
  let size = 0;
  for await (const chunk of fs.createReadStream(file)) {
    hash.update(chunk as Buffer);
    size += (chunk as Buffer).length;
  }
  return { sha256: hash.digest('hex'), size };
}

function readHead(file: string): Buffer {
  const handle = fs.openSync(file, 'r');
  try {
    const buffer = Buffer.alloc(HEAD_BYTES);
    const read = fs.readSync(handle, buffer, 0, HEAD_BYTES, 0);
    return buffer.subarray(0, read);
  } finally {
    fs.closeSync(handle);
  }
}

function emptyReceipt(file: string, sha256: string, receivedAt: string): Receipt {
  return {
    file,
    sha256,
    receivedAt,
    status: 'accepted',
    kind: 'unknown',
    lab: null,
    encoding: null,
    rows: { accepted: 0, rejected: 0, duplicate: 0, superseded: 0 },
    rejectedRows: [],
    rejectedRowsNotListed: 0,
    unresolvedSampleIds: [],
    unresolvedNotListed: 0,
    resolvedSampleIds: [],
    warnings: [],
    reason: null,
    sites: [],
  };
}

/**
 * Ingests one file. Never throws for bad input: a refused file comes back as a receipt with
 * status `rejected`. Throws OutputError when outputs could not be written (nothing stored),
 * and re-throws unexpected errors after rolling back.
 */
export async function ingestFile(file: string, deps: IngestDeps): Promise<Receipt> {
  let worker: ParseWorker | undefined;
  try {
    if (fs.statSync(file).size >= (deps.parseInWorkerFromBytes ?? PARSE_IN_WORKER_FROM_BYTES)) worker = new ParseWorker();
  } catch {
    // Unreadable: hashing reports it.
  }
  try {
    return await ingestWith(file, deps, worker);
  } finally {
    await worker?.stop();
  }
}

async function ingestWith(file: string, deps: IngestDeps, worker: ParseWorker | undefined): Promise<Receipt> {
  const name = path.basename(file);
  const receivedAt = deps.now().toISOString();
  let sha256: string;
  let size: number;
  try {
    ({ sha256, size } = await hashFile(file));
  } catch (error) {
    const receipt = emptyReceipt(name, '', receivedAt);
    receipt.status = 'rejected';
    receipt.reason = { code: 'file-read-error', message: `${name}: cannot be read (${(error as NodeJS.ErrnoException).code ?? String(error)})`, line: null, field: null };
    return receipt;
  }
  const receipt = emptyReceipt(name, sha256, receivedAt);

  const alreadyStored = (known: StoredFile): Receipt => {
    receipt.status = known.status === 'rejected' ? 'rejected' : 'duplicate';
    receipt.kind = known.kind;
    receipt.lab = known.labId;
    receipt.warnings.push(`the same bytes arrived before as ${known.name} on ${known.receivedAt}; nothing stored twice`);
    if (known.status === 'rejected') {
      receipt.reason = { code: (known.reasonCode as RejectionCode) ?? 'duplicate-file', message: `${name}: ${known.reason ?? 'rejected before'} (the same bytes were rejected before)`, line: null, field: null };
    } else {
      receipt.reason = { code: 'duplicate-file', message: `${name}: the same bytes were stored before as ${known.name} on ${known.receivedAt}; nothing stored twice`, line: null, field: null };
    }
    return receipt;
  };
  const known = deps.store.findFileByHash(sha256);
  if (known) return alreadyStored(known);

  const reject = (error: IngestError, labId: string | null): Receipt => {
    deps.store.rollback();
    receipt.status = 'rejected';
    receipt.rows = { accepted: 0, rejected: 0, duplicate: 0, superseded: 0 };
    receipt.rejectedRows = [];
    receipt.reason = { code: error.code, message: error.message, line: error.line ?? null, field: error.field ?? null };
    deps.store.recordRejectedFile({
      name,
      kind: receipt.kind,
      sha256,
      receivedAt,
      reasonCode: error.code,
      reason: error.message,
      line: error.line,
      field: error.field,
      bytes: size <= KEEP_BYTES_LIMIT ? fs.readFileSync(file) : undefined,
      byteLength: size,
      labId,
    });
    return receipt;
  };

  if (size === 0) return reject(new IngestError('empty-file', name, undefined, undefined, undefined, 'the file is empty (0 bytes)'), null);

  let kind: FileKind;
  let sniffed;
  try {
    const head = readHead(file);
    sniffed = sniffEncoding(head, 'auto');
    const text = decodeHead(head, sniffed);
    kind = detectFileKind(name, text, deps.config.labs);
    if (kind.kind === 'results' && kind.lab.encoding !== 'auto' && sniffed.bomLength === 0 && !sniffed.note.includes('byte pattern')) {
      sniffed = sniffEncoding(head, kind.lab.encoding);
    }
  } catch (error) {
    if (error instanceof IngestError) return reject(error, null);
    if (error instanceof BinaryContentError) return reject(new IngestError('not-csv', name, undefined, undefined, undefined, error.message), null);
    throw error;
  }
  receipt.kind = kind.kind;
  receipt.lab = kind.kind === 'results' ? kind.lab.id : null;
  receipt.encoding = sniffed.note;

  let fileId: number;
  try {
    fileId = deps.store.beginFile({
      name,
      sha256,
      kind: kind.kind,
      labId: receipt.lab,
      receivedAt,
      encodingNote: sniffed.note,
      byteLength: size,
    });
  } catch (error) {
    // Another process stored the same bytes while this one waited for the write lock.
    if (error instanceof FileAlreadyStoredError) return alreadyStored(error.known);
    throw error;
  }
  try {
    const addRejections = (list: readonly RowRejection[]) => {
      if (list.length === 0) return;
      deps.store.insertRejections(fileId, list);
      receipt.rows.rejected += list.length;
      for (const rejection of list) {
        if (receipt.rejectedRows.length < RECEIPT_LIST_LIMIT) receipt.rejectedRows.push(rejection);
        else receipt.rejectedRowsNotListed++;
      }
    };
    const store = (batch: MappedBatch) => {
      const counts = kind.kind === 'results' ? deps.store.insertResults(fileId, batch.results) : deps.store.insertRopes(fileId, batch.ropes);
      receipt.rows.accepted += counts.inserted;
      receipt.rows.duplicate += counts.duplicates;
      receipt.rows.superseded += counts.superseded;
      receipt.warnings.push(...counts.warnings);
      addRejections(batch.rejections);
      addRejections(counts.rejections);
    };

    const input: MappingInput = { file, fileName: name, sniffed, kind, sites: deps.config.sites, assayById: deps.config.assayById };
    const batches = worker ? worker.batches(input) : mappedBatches(input);
    for await (const batch of batches) store(batch);

    if (receipt.rows.accepted + receipt.rows.rejected + receipt.rows.duplicate === 0) {
      return reject(new IngestError('empty-file', name, kind.headerLine, undefined, undefined, 'the file has a header but no data rows'), receipt.lab);
    }
    deps.store.finishFile(fileId, { accepted: receipt.rows.accepted, rejected: receipt.rows.rejected, duplicate: receipt.rows.duplicate });

    const effects = deps.store.openFileEffects();
    if (kind.kind === 'results') {
      receipt.unresolvedSampleIds = effects.unresolved;
      receipt.unresolvedNotListed = effects.unresolvedCount - effects.unresolved.length;
    }
    receipt.resolvedSampleIds = effects.resolved;
    receipt.sites = effects.sites;

    try {
      deps.regenerate(receipt.sites);
    } catch (error) {
      deps.store.rollback();
      throw new OutputError(`${name}: outputs could not be written (${(error as Error).message}); nothing was stored and the file stays in the inbox`);
    }
    deps.store.commit();
    return receipt;
  } catch (error) {
    if (error instanceof OutputError) throw error;
    if (error instanceof EncodingError) {
      return reject(new IngestError('invalid-encoding', name, error.line, undefined, undefined, `${error.message}; set format.encoding in the lab profile or re-export as UTF-8`), receipt.lab);
    }
    if (error instanceof UnclosedQuoteError || error instanceof RecordTooLongError) {
      return reject(
        new IngestError('malformed-csv', name, error.line, undefined, undefined, `the file is not well-formed CSV (${error.message}); rows after it cannot be trusted`),
        receipt.lab,
      );
    }
    deps.store.rollback();
    throw error;
  }
}

export { REJECTION_CODES };
