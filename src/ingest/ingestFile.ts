/**
 * One input file into the store, streamed: hash, sniff, detect the kind, then parse and store in
 * bounded batches inside one transaction. A file is stored whole or not at all; a refused file
 * is recorded with its bytes and reason. Moving the file is the caller's job (see pipeline.ts).
 *
 *   hashBeforeReading -> earlierCopy -> detectInput -> storeFile (beginFile ... commit)
 *                                                   -> rejectFile (a coded refusal, recorded)
 */
import fs from 'node:fs';
import path from 'node:path';
import { CORRECTIONS_FILE } from '../config/load.js';
import type { Config, SampleIdCorrection } from '../config/types.js';
import type { PlannedRope, StoredFile } from '../domain/records.js';
import { FileAlreadyStoredError, type StoreBackend } from '../domain/store.js';
import { withConflictRetry } from './conflictRetry.js';
import { RecordTooLongError, UnclosedQuoteError } from './csvRecords.js';
import { EncodingError } from './decode.js';
import { IngestError, REJECTION_CODES, type RowRejection } from './errors.js';
import {
  FileStillChangingError,
  hashBeforeReading,
  type HashedFile,
  movedOnSince,
  stillChanging,
} from './fileOnDisk.js';
import { listRejections, noRows, setAsideMistyped, tallyBatch } from './fileRows.js';
import { detectInput, type InputKind } from './inputKind.js';
import { BATCH_ROWS, FileChangedError, type MappedBatch, mappedBatches, type MappingInput } from './mappedBatches.js';
import { type PlannedLookup, withSuggestion } from './mistypedIds.js';
import { correctionsForFile } from './plannedIds.js';
import { ingestRules } from './rowRules.js';
import { emptyReceipt, type Receipt } from './receipt.js';
import { normaliseSampleId } from './recordCells.js';
import { workbookBatches } from './workbookInput.js';
import { ParseWorker } from './workerBatches.js';
import { isWorkbookFile } from './xlsxReader.js';
import { ingestHl7File, isHl7File } from '../hl7/fileInput.js';

export { emptyReceipt, FileStillChangingError, type Receipt };

/**
 * Files at least this big are read and mapped on a worker thread while this one stores: below
 * it, starting a worker costs more than it saves.
 */
export const PARSE_IN_WORKER_FROM_BYTES = 4 * 1024 * 1024;
/** Rejected files up to this size keep their bytes in the store too. */
const KEEP_BYTES_LIMIT = 16 * 1024 * 1024;

export interface IngestDeps {
  config: Config;
  store: StoreBackend;
  now: () => Date;
  /** Read and map files of at least this many bytes on a worker thread (default PARSE_IN_WORKER_FROM_BYTES). */
  parseInWorkerFromBytes?: number;
}

/** One file in hand: where it is, its bytes as hashed, and its receipt so far. */
interface FileInHand {
  file: string;
  name: string;
  receivedAt: string;
  hashed: HashedFile;
  receipt: Receipt;
  deps: IngestDeps;
}

/** What the store knew of the same bytes: the corrections that apply, and the record to reopen. */
interface EarlierCopy {
  corrections: readonly SampleIdCorrection[];
  /** The id of the accepted record read again for refused rows a correction now covers. */
  reopen: number | undefined;
}

/**
 * Ingests one file. Never throws for bad input: a refused file comes back as a receipt with
 * status `rejected`. Throws FileStillChangingError when the file changed between the start of
 * reading and the commit (nothing stored), and re-throws unexpected errors after rolling back.
 */
export async function ingestFile(file: string, deps: IngestDeps): Promise<Receipt> {
  if (isHl7File(file)) return ingestHl7File(file, deps, (why) => new FileStillChangingError(why));
  let worker: ParseWorker | undefined;
  try {
    // A workbook is read whole on this thread (workbookInput.ts): no worker for a spreadsheet's name.
    const large = fs.statSync(file).size >= (deps.parseInWorkerFromBytes ?? PARSE_IN_WORKER_FROM_BYTES);
    if (large && !isWorkbookFile(path.basename(file), new Uint8Array())) worker = new ParseWorker();
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
  let hashed: HashedFile;
  try {
    hashed = await hashBeforeReading(file);
  } catch (error) {
    return unreadable(name, receivedAt, error);
  }
  const inHand: FileInHand = {
    file,
    name,
    receivedAt,
    hashed,
    receipt: emptyReceipt(name, hashed.sha256, receivedAt),
    deps,
  };
  const earlier = earlierCopy(inHand);
  if (earlier === 'stored') return inHand.receipt;
  if (hashed.size === 0)
    return rejectFile(
      inHand,
      new IngestError({ code: 'empty-file', file: name, detail: 'the file is empty (0 bytes)' }),
      null,
    );
  const input = await detectInput({ file, name, size: hashed.size, sha256: hashed.sha256 }, deps.config);
  if (input instanceof IngestError) return rejectFile(inHand, input, null);
  const receipt = inHand.receipt;
  if (input.workbook) receipt.sheet = input.workbook.found.sheet.name;
  receipt.kind = input.kind.kind;
  receipt.lab = input.kind.kind === 'results' ? input.kind.lab.id : null;
  receipt.encoding = input.sniffed.note;
  // Stored again from the start, with a fresh receipt, when another process stored rows it meets
  // first (conflictRetry.ts); a parse worker reads a file once, so a later attempt reads here.
  const before = structuredClone(receipt);
  return withConflictRetry(
    (attempt, lockSites) => storeFile(inHand, input, earlier, attempt === 1 ? worker : undefined, lockSites),
    () => {
      inHand.receipt = structuredClone(before);
    },
  );
}

/** The receipt of a file that cannot be read at all (nothing recorded: there are no bytes to keep). */
function unreadable(name: string, receivedAt: string, error: unknown): Receipt {
  const receipt = emptyReceipt(name, '', receivedAt);
  receipt.status = 'rejected';
  receipt.reason = {
    code: 'file-read-error',
    message: `${name}: cannot be read (${(error as NodeJS.ErrnoException).code ?? String(error)})`,
    line: null,
    field: null,
  };
  return receipt;
}

/** Fills the receipt of bytes stored before: a duplicate, nothing stored twice. */
function alreadyStored(receipt: Receipt, name: string, known: StoredFile): Receipt {
  receipt.status = 'duplicate';
  receipt.kind = known.kind;
  receipt.lab = known.labId;
  receipt.warnings.push(`the same bytes arrived before as ${known.name} on ${known.receivedAt}; nothing stored twice`);
  receipt.reason = {
    code: 'duplicate-file',
    message: `${name}: the same bytes were stored before as ${known.name} on ${known.receivedAt}; nothing stored twice`,
    line: null,
    field: null,
  };
  return receipt;
}

/** Throws FileStillChangingError (after rolling back) when the file moved on since it was hashed. */
function requireUnchanged(inHand: FileInHand): void {
  const why = movedOnSince(inHand.file, inHand.name, inHand.hashed);
  if (why === undefined) return;
  inHand.deps.store.rollback();
  throw stillChanging(why);
}

/** The refusal a reading error stands for (bad bytes, broken quoting, a record too long), if any. */
function readRefusal(error: unknown, name: string): IngestError | undefined {
  if (error instanceof EncodingError) {
    return new IngestError({
      code: 'invalid-encoding',
      file: name,
      line: error.line,
      detail: `${error.message}; set format.encoding in the lab profile or re-export as UTF-8`,
    });
  }
  if (error instanceof UnclosedQuoteError || error instanceof RecordTooLongError) {
    return new IngestError({
      code: 'malformed-csv',
      file: name,
      line: error.line,
      detail: `the file is not well-formed CSV (${error.message}); rows after it cannot be trusted`,
    });
  }
  return undefined;
}

/** The file's rows in batches: from the workbook, the parse worker, or this thread. */
function batchesOf(
  inHand: FileInHand,
  input: InputKind,
  corrections: readonly SampleIdCorrection[],
  worker: ParseWorker | undefined,
): AsyncIterable<MappedBatch> | Iterable<MappedBatch> {
  const { config } = inHand.deps;
  const mapping: MappingInput = {
    file: inHand.file,
    expected: { bytes: inHand.hashed.size, sha256: inHand.hashed.sha256 },
    fileName: inHand.name,
    sniffed: input.sniffed,
    kind: input.kind,
    sites: config.sites,
    assayById: config.assayById,
    corrections,
  };
  if (input.workbook) return workbookBatches(mapping, input.workbook.opened, input.workbook.found, BATCH_ROWS);
  return worker ? worker.batches(mapping) : mappedBatches(mapping);
}

// The store calls of a file: what it knew of the same bytes (earlierCopy), the file's transaction
// (storeFile), a refused file's record (rejectFile), and the planned ropes behind a suggestion.

/**
 * What the store knew of the same bytes. Bytes refused before are read again with the
 * configuration of today (the refusal may have come from a mistake in a lab profile since put
 * right); bytes stored before are read again only for refused rows a confirmed correction now
 * covers, otherwise 'stored' (the receipt says duplicate).
 */
function earlierCopy(inHand: FileInHand): EarlierCopy | 'stored' {
  const { deps, name, receipt } = inHand;
  const known = deps.store.findFileByHash(inHand.hashed.sha256);
  const corrections = correctionsForFile(deps.config.corrections, known ? [name, known.name] : [name]);
  let reopen: number | undefined;
  if (known?.status === 'accepted') {
    const covered =
      corrections.length === 0
        ? []
        : deps.store.openRefusals(known.id).filter((refusal) => {
            const id = refusal.value === null ? '' : normaliseSampleId(refusal.value);
            return corrections.some(
              (correction) =>
                correction.written === id && (correction.line === undefined || correction.line === refusal.line),
            );
          });
    if (covered.length === 0) {
      alreadyStored(receipt, name, known);
      return 'stored';
    }
    reopen = known.id;
    receipt.warnings.push(
      `the same bytes were stored as ${known.name} on ${known.receivedAt}; read again because ${CORRECTIONS_FILE} now gives the sample ID meant on line ${covered.map((refusal) => refusal.line).join(', ')}; rows stored before are not stored twice`,
    );
  }
  if (known?.status === 'rejected') {
    receipt.warnings.push(
      `the same bytes were refused before (as ${known.name} on ${known.receivedAt}: ${known.reasonCode ?? 'no code'}); read again with the current configuration`,
    );
  }
  return { corrections, reopen };
}

/** Rolls back and records the file as refused, with its bytes (up to KEEP_BYTES_LIMIT). */
function rejectFile(inHand: FileInHand, error: IngestError, labId: string | null): Receipt {
  const { deps, receipt, hashed } = inHand;
  deps.store.rollback();
  // A file cut off by a writer still at work looks malformed (an open quote, a ragged last
  // row): it is not refused for that, it is read again once it is whole.
  requireUnchanged(inHand);
  receipt.status = 'rejected';
  receipt.rows = { accepted: 0, rejected: 0, duplicate: 0, superseded: 0 };
  receipt.rejectedRows = [];
  receipt.reason = { code: error.code, message: error.message, line: error.line ?? null, field: error.field ?? null };
  deps.store.recordRejectedFile({
    name: inHand.name,
    kind: receipt.kind,
    sha256: hashed.sha256,
    receivedAt: inHand.receivedAt,
    reasonCode: error.code,
    reason: error.message,
    line: error.line,
    field: error.field,
    bytes: hashed.size <= KEEP_BYTES_LIMIT ? fs.readFileSync(inHand.file) : undefined,
    byteLength: hashed.size,
    labId,
  });
  return receipt;
}

/** The planned ropes a mistyped ID's suggestion is drawn from, read once per file when first asked. */
function plannedLookup(store: StoreBackend): PlannedLookup {
  let planned: Map<string, PlannedRope> | undefined;
  const awaitingBySite = new Map<string, Set<string>>();
  return {
    planned: () => (planned ??= new Map(store.plannedRopes().map((rope) => [rope.sampleId, rope]))),
    awaiting: (rope) => {
      let ids = awaitingBySite.get(rope.siteId);
      if (ids === undefined)
        awaitingBySite.set(
          rope.siteId,
          (ids = new Set(store.plannedWithoutResults(rope.siteId).map((open) => open.sampleId))),
        );
      return ids.has(rope.sampleId);
    },
  };
}

/** Closes the file's transaction: its counts, what it resolved, the site versions, then the commit if unchanged. */
function finishAndCommit(inHand: FileInHand, fileId: number, kind: InputKind['kind']['kind']): void {
  const { deps, receipt } = inHand;
  deps.store.finishFile(fileId, {
    accepted: receipt.rows.accepted,
    rejected: receipt.rows.rejected,
    duplicate: receipt.rows.duplicate,
  });
  const effects = deps.store.openFileEffects();
  if (kind === 'results') {
    receipt.unresolvedSampleIds = effects.unresolved;
    receipt.unresolvedNotListed = effects.unresolvedCount - effects.unresolved.length;
  }
  receipt.resolvedSampleIds = effects.resolved;
  receipt.sites = effects.sites;
  deps.store.bumpSiteVersions(effects.changes);
  requireUnchanged(inHand);
  deps.store.commit();
}

/** The file's transaction: beginFile, its rows batch by batch, finishFile, then commit if the file is unchanged. */
async function storeFile(
  inHand: FileInHand,
  input: InputKind,
  earlier: EarlierCopy,
  worker: ParseWorker | undefined,
  lockSites: readonly string[],
): Promise<Receipt> {
  const { deps, name, receipt, hashed } = inHand;
  const { kind } = input;
  let fileId: number;
  try {
    fileId = deps.store.beginFile(
      {
        name,
        sha256: hashed.sha256,
        kind: kind.kind,
        labId: receipt.lab,
        receivedAt: inHand.receivedAt,
        encodingNote: input.sniffed.note,
        byteLength: hashed.size,
      },
      ingestRules,
      earlier.reopen === undefined ? { lockSites } : { reopen: earlier.reopen, lockSites },
    );
  } catch (error) {
    // Another process stored the same bytes while this one waited for the write lock.
    if (error instanceof FileAlreadyStoredError) return alreadyStored(receipt, name, error.known);
    throw error;
  }
  try {
    const storeRejections = (list: readonly RowRejection[]): void => {
      if (list.length === 0) return;
      deps.store.insertRejections(fileId, list);
      listRejections(receipt, list);
    };
    const mistyped: RowRejection[] = [];
    for await (const batch of batchesOf(inHand, input, earlier.corrections, worker)) {
      const counts =
        kind.kind === 'results'
          ? deps.store.insertResults(fileId, batch.results, kind.lab.columns.sampleId)
          : deps.store.insertRopes(fileId, batch.ropes);
      tallyBatch(receipt, counts, batch.ropes);
      storeRejections(setAsideMistyped(batch.rejections, mistyped));
      storeRejections(setAsideMistyped(counts.rejections, mistyped));
    }
    if (mistyped.length > 0) {
      const lookup = plannedLookup(deps.store);
      storeRejections(mistyped.map((rejection) => withSuggestion(rejection, lookup, name)));
      receipt.rejectedRows.sort((a, b) => a.line - b.line);
    }
    if (noRows(receipt)) {
      const detail = 'the file has a header but no data rows';
      return rejectFile(
        inHand,
        new IngestError({ code: 'empty-file', file: name, line: kind.headerLine, detail }),
        receipt.lab,
      );
    }
    finishAndCommit(inHand, fileId, kind.kind);
    return receipt;
  } catch (error) {
    if (error instanceof FileStillChangingError) throw error;
    if (error instanceof FileChangedError) {
      deps.store.rollback();
      throw stillChanging(error.message);
    }
    const refusal = readRefusal(error, name);
    if (refusal !== undefined) return rejectFile(inHand, refusal, receipt.lab);
    deps.store.rollback();
    throw error;
  }
}

export { REJECTION_CODES };
