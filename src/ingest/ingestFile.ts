/**
 * One input file into the store, streamed: hash, sniff, detect the kind, then parse and store in
 * bounded batches inside one transaction. A file is stored whole or not at all; a refused file
 * is recorded with its bytes and reason. Moving the file is the caller's job (see pipeline.ts).
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import type { Config } from '../config/types.js';
import type { PlannedRope, StoredFile } from '../domain/records.js';
import { FileAlreadyStoredError, RECEIPT_LIST_LIMIT, type StoreBackend } from '../domain/store.js';
import { CORRECTIONS_FILE } from '../config/load.js';
import { RecordTooLongError, UnclosedQuoteError } from './csvRecords.js';
import { BinaryContentError, decodeHead, EncodingError, sniffEncoding, type Sniffed } from './decode.js';
import { detectFileKind, type FileKind } from './detect.js';
import { IngestError, REJECTION_CODES, type RowRejection } from './errors.js';
import { BATCH_ROWS, FileChangedError, mappedBatches, type MappedBatch, type MappingInput } from './mappedBatches.js';
import { correctionsForFile, likelyMeantIds, type MeantId } from './plannedIds.js';
import { normaliseSampleId } from './rows.js';
import { ingestRules } from './rowRules.js';
import { ParseWorker } from './workerBatches.js';
import { emptyReceipt, type Receipt } from './receipt.js';
import { detectWorkbook, readHashedBytes, workbookBatches, workbookNote, type WorkbookKind } from './workbookInput.js';
import { isWorkbookFile, openWorkbook, WORKBOOK_MAX_BYTES, type OpenedWorkbook } from './xlsxReader.js';

export { emptyReceipt, type Receipt };

const HEAD_BYTES = 64 * 1024;
/** The head never grows past this: a header this long is refused by the record reader anyway. */
const HEAD_LIMIT_BYTES = 16 * 1024 * 1024;
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

/** What identifies one version of a file on disk: it changes when a writer touches it. */
interface FileIdentity {
  size: number;
  mtimeMs: number;
  ino: number;
}

function fileIdentity(file: string): FileIdentity {
  const stats = fs.statSync(file);
  return { size: stats.size, mtimeMs: stats.mtimeMs, ino: stats.ino };
}

/** Why the file on disk is no longer the one that was read, or undefined when it is the same. */
function changedSince(file: string, before: FileIdentity, name: string): string | undefined {
  let now: FileIdentity;
  try {
    now = fileIdentity(file);
  } catch (error) {
    return `${name} was moved or removed while it was read (${(error as NodeJS.ErrnoException).code ?? String(error)})`;
  }
  if (now.ino !== before.ino) return `${name} was replaced by another file while it was read`;
  if (now.size !== before.size)
    return `${name} changed while it was read (${before.size} bytes when reading began, ${now.size} now)`;
  if (now.mtimeMs !== before.mtimeMs) return `${name} was written to while it was read (its modification time moved)`;
  return undefined;
}

/**
 * The file was still being written while it was read: nothing of it is stored, it stays in the
 * inbox, and the next run (or the watcher, once the file settles) reads it again.
 */
export class FileStillChangingError extends Error {
  override readonly name = 'FileStillChangingError';
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

/**
 * The head of the file, enough to hold its title lines and its header whole: 64 KB, grown (up
 * to the longest record the reader accepts) while the header line is not yet complete.
 */
function readHead(file: string, size: number, linesNeeded: number): { head: Buffer; sniffed: Sniffed; text: string } {
  const handle = fs.openSync(file, 'r');
  try {
    for (let window = HEAD_BYTES; ; window *= 4) {
      const buffer = Buffer.alloc(Math.min(window, size, HEAD_LIMIT_BYTES));
      const head = buffer.subarray(0, fs.readSync(handle, buffer, 0, buffer.length, 0));
      const sniffed = sniffEncoding(head, 'auto');
      const text = decodeHead(head, sniffed);
      let lines = 0;
      for (let at = text.indexOf('\n'); at !== -1 && lines < linesNeeded; at = text.indexOf('\n', at + 1)) lines++;
      if (lines >= linesNeeded || head.length >= size || head.length >= HEAD_LIMIT_BYTES)
        return { head, sniffed, text };
    }
  } finally {
    fs.closeSync(handle);
  }
}

/** The first bytes of a file (fewer when it is shorter): enough for a format's signature. */
function firstBytes(file: string, count: number): Buffer {
  const handle = fs.openSync(file, 'r');
  try {
    const buffer = Buffer.alloc(count);
    return buffer.subarray(0, fs.readSync(handle, buffer, 0, count, 0));
  } finally {
    fs.closeSync(handle);
  }
}

/** Appends to a receipt list up to RECEIPT_LIST_LIMIT; returns how many did not fit. */
function listInto<T>(list: T[], items: readonly T[]): number {
  const room = Math.max(0, RECEIPT_LIST_LIMIT - list.length);
  for (let i = 0; i < items.length && i < room; i++) list.push(items[i]!);
  return Math.max(0, items.length - room);
}

/**
 * The planned ID a sample ID that fails its check character most likely meant: among the planned
 * IDs one keying error away (plannedIds.ts), those of the round and site the ID as written names,
 * then those whose rope has no result yet. Undefined when no planned ID is near.
 */
function meantFor(
  written: string,
  planned: ReadonlyMap<string, PlannedRope>,
  awaiting: (rope: PlannedRope) => boolean,
): { best: MeantId | undefined; all: MeantId[] } {
  const all = likelyMeantIds(written, (id) => planned.has(id));
  if (all.length <= 1) return { best: all[0], all };
  const roundAndSite = /^([A-Z0-9]{1,4}[A-Z][0-9]{2,4})-/.exec(written)?.[1];
  let narrowed =
    roundAndSite === undefined ? all : all.filter((candidate) => candidate.id.startsWith(`${roundAndSite}-`));
  if (narrowed.length === 0) narrowed = all;
  if (narrowed.length > 1) {
    const open = narrowed.filter((candidate) => awaiting(planned.get(candidate.id)!));
    if (open.length > 0) narrowed = open;
  }
  return { best: narrowed.length === 1 ? narrowed[0] : undefined, all };
}

/**
 * Ingests one file. Never throws for bad input: a refused file comes back as a receipt with
 * status `rejected`. Throws FileStillChangingError when the file changed between the start of
 * reading and the commit (nothing stored), and re-throws unexpected errors after rolling back.
 */
export async function ingestFile(file: string, deps: IngestDeps): Promise<Receipt> {
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
  let sha256: string;
  let size: number;
  let before: FileIdentity;
  try {
    // Taken before the first byte is read: any write after it shows in size, mtime or inode.
    before = fileIdentity(file);
    ({ sha256, size } = await hashFile(file));
  } catch (error) {
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
  const receipt = emptyReceipt(name, sha256, receivedAt);
  /** Throws FileStillChangingError (after rolling back) when the file moved on since `before`. */
  const requireUnchanged = (): void => {
    const why =
      size !== before.size
        ? `${name} grew while it was hashed (${before.size} bytes, then ${size})`
        : changedSince(file, before, name);
    if (why === undefined) return;
    deps.store.rollback();
    throw new FileStillChangingError(`${why}; nothing was stored and the file stays in the inbox for the next run`);
  };

  const alreadyStored = (known: StoredFile): Receipt => {
    receipt.status = 'duplicate';
    receipt.kind = known.kind;
    receipt.lab = known.labId;
    receipt.warnings.push(
      `the same bytes arrived before as ${known.name} on ${known.receivedAt}; nothing stored twice`,
    );
    receipt.reason = {
      code: 'duplicate-file',
      message: `${name}: the same bytes were stored before as ${known.name} on ${known.receivedAt}; nothing stored twice`,
      line: null,
      field: null,
    };
    return receipt;
  };
  // Bytes refused before are read again with the configuration of today: the refusal may have
  // come from a mistake in a lab profile that has since been put right.
  const known = deps.store.findFileByHash(sha256);
  const corrections = correctionsForFile(deps.config.corrections, known ? [name, known.name] : [name]);
  let reopen: number | undefined;
  if (known?.status === 'accepted') {
    // Stored before: read again only for refused rows a confirmed correction now covers.
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
    if (covered.length === 0) return alreadyStored(known);
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

  const reject = (error: IngestError, labId: string | null): Receipt => {
    deps.store.rollback();
    // A file cut off by a writer still at work looks malformed (an open quote, a ragged last
    // row): it is not refused for that, it is read again once it is whole.
    requireUnchanged();
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

  if (size === 0)
    return reject(
      new IngestError('empty-file', name, undefined, undefined, undefined, 'the file is empty (0 bytes)'),
      null,
    );

  let kind: FileKind;
  let sniffed: Sniffed;
  let workbook: { opened: OpenedWorkbook; found: WorkbookKind } | undefined;
  if (isWorkbookFile(name, firstBytes(file, 8))) {
    if (size > WORKBOOK_MAX_BYTES) {
      return reject(
        new IngestError(
          'workbook-too-large',
          name,
          undefined,
          undefined,
          undefined,
          `the workbook has ${size} bytes; at most ${WORKBOOK_MAX_BYTES} are read (a workbook is read whole): split it, or export CSV`,
        ),
        null,
      );
    }
    try {
      // Read from exactly the bytes hashed: the workbook parsed is the one the hash names.
      const opened = await openWorkbook(readHashedBytes(file, name, { bytes: size, sha256 }), name);
      workbook = { opened, found: detectWorkbook(name, opened, deps.config.labs, deps.config.ropeSheet.columns) };
    } catch (error) {
      if (error instanceof IngestError) return reject(error, null);
      if (error instanceof FileChangedError)
        throw new FileStillChangingError(
          `${error.message}; nothing was stored and the file stays in the inbox for the next run`,
        );
      throw error;
    }
    kind = workbook.found.kind;
    sniffed = { encoding: 'utf-8', bomLength: 0, note: workbookNote(workbook.found) };
    receipt.sheet = workbook.found.sheet.name;
  } else {
    try {
      // Title lines above the header (the most any lab profile skips), the header, and one more line.
      const linesNeeded = Math.max(0, ...deps.config.labs.map((lab) => lab.skipLines)) + 2;
      const read = readHead(file, size, linesNeeded);
      const head = read.head;
      sniffed = read.sniffed;
      const text = read.text;
      kind = detectFileKind(name, text, deps.config.labs, deps.config.ropeSheet.columns);
      if (
        kind.kind === 'results' &&
        kind.lab.encoding !== 'auto' &&
        sniffed.bomLength === 0 &&
        !sniffed.note.includes('byte pattern')
      ) {
        sniffed = sniffEncoding(head, kind.lab.encoding);
      }
    } catch (error) {
      if (error instanceof IngestError) return reject(error, null);
      if (error instanceof BinaryContentError)
        return reject(new IngestError('not-csv', name, undefined, undefined, undefined, error.message), null);
      throw error;
    }
  }
  receipt.kind = kind.kind;
  receipt.lab = kind.kind === 'results' ? kind.lab.id : null;
  receipt.encoding = sniffed.note;

  let fileId: number;
  try {
    fileId = deps.store.beginFile(
      {
        name,
        sha256,
        kind: kind.kind,
        labId: receipt.lab,
        receivedAt,
        encodingNote: sniffed.note,
        byteLength: size,
      },
      ingestRules,
      reopen === undefined ? {} : { reopen },
    );
  } catch (error) {
    // Another process stored the same bytes while this one waited for the write lock.
    if (error instanceof FileAlreadyStoredError) return alreadyStored(error.known);
    throw error;
  }
  try {
    let planned: Map<string, PlannedRope> | undefined;
    const awaitingBySite = new Map<string, Set<string>>();
    const awaiting = (rope: PlannedRope): boolean => {
      let ids = awaitingBySite.get(rope.siteId);
      if (ids === undefined)
        awaitingBySite.set(
          rope.siteId,
          (ids = new Set(deps.store.plannedWithoutResults(rope.siteId).map((open) => open.sampleId))),
        );
      return ids.has(rope.sampleId);
    };
    /** Names the planned ID a mistyped one most likely meant (refusals are few: looked up on demand). */
    const withSuggestion = (rejection: RowRejection): RowRejection => {
      if (rejection.code !== 'bad-check-character' || rejection.value === undefined) return rejection;
      planned ??= new Map(deps.store.plannedRopes().map((rope) => [rope.sampleId, rope]));
      const written = normaliseSampleId(rejection.value);
      const { best, all } = meantFor(written, planned, awaiting);
      if (best !== undefined) {
        const rope = planned.get(best.id)!;
        const how = best.kind === 'substitution' ? 'one character differs' : 'two neighbouring characters swapped';
        return {
          ...rejection,
          suggestedId: best.id,
          ...(all.length > 1 ? { candidateIds: all.map((candidate) => candidate.id) } : {}),
          message:
            `${rejection.message}; most likely ${best.id} (planned for ${rope.siteId} barn ${rope.barnId} pen ${rope.penId}, due ${rope.dueOn}; ${how}). ` +
            `If so, confirm it in ${CORRECTIONS_FILE} (written: ${written}, meant: ${best.id}, file: ${name}, line: ${rejection.line}) and ingest this file again`,
        };
      }
      if (all.length > 1) {
        return {
          ...rejection,
          candidateIds: all.map((candidate) => candidate.id),
          message: `${rejection.message}; planned IDs one keying error away: ${all.map((candidate) => candidate.id).join(', ')} (ask the lab or the barn which one the tube carries)`,
        };
      }
      return rejection;
    };
    // Mistyped IDs wait for the whole file: the planned ID meant is the one whose rope still
    // has no result once every other row is stored.
    const mistyped: RowRejection[] = [];
    const addRejections = (given: readonly RowRejection[], deferMistyped = true) => {
      if (given.length === 0) return;
      let list = given;
      if (deferMistyped && given.some((rejection) => rejection.code === 'bad-check-character')) {
        for (const rejection of given) if (rejection.code === 'bad-check-character') mistyped.push(rejection);
        list = given.filter((rejection) => rejection.code !== 'bad-check-character');
        if (list.length === 0) return;
      }
      deps.store.insertRejections(fileId, list);
      receipt.rows.rejected += list.length;
      for (const rejection of list) {
        if (receipt.rejectedRows.length < RECEIPT_LIST_LIMIT) receipt.rejectedRows.push(rejection);
        else receipt.rejectedRowsNotListed++;
      }
    };
    const store = (batch: MappedBatch) => {
      const counts =
        kind.kind === 'results'
          ? deps.store.insertResults(fileId, batch.results, kind.lab.columns.sampleId)
          : deps.store.insertRopes(fileId, batch.ropes);
      receipt.rows.accepted += counts.inserted;
      receipt.rows.duplicate += counts.duplicates;
      receipt.rows.superseded += counts.superseded;
      receipt.warnings.push(...counts.warnings);
      receipt.invalidRowsNotListed! += listInto(receipt.invalidRows!, counts.invalid);
      receipt.callDisagreementsNotListed! += listInto(receipt.callDisagreements!, counts.callDisagreements);
      receipt.supersessionsNotListed! += listInto(receipt.supersessions!, counts.supersessions);
      listInto(receipt.sampleIdCorrections!, counts.idCorrections);
      for (const rope of batch.ropes) {
        if (rope.sampleIdAsWritten !== null)
          listInto(receipt.sampleIdCorrections!, [
            { line: rope.line, written: rope.sampleIdAsWritten, meant: rope.sampleId },
          ]);
      }
      addRejections(batch.rejections);
      addRejections(counts.rejections);
    };

    const input: MappingInput = {
      file,
      expected: { bytes: size, sha256 },
      fileName: name,
      sniffed,
      kind,
      sites: deps.config.sites,
      assayById: deps.config.assayById,
      corrections,
    };
    const batches = workbook
      ? workbookBatches(input, workbook.opened, workbook.found, BATCH_ROWS)
      : worker
        ? worker.batches(input)
        : mappedBatches(input);
    for await (const batch of batches) store(batch);
    if (mistyped.length > 0) {
      addRejections(mistyped.map(withSuggestion), false);
      receipt.rejectedRows.sort((a, b) => a.line - b.line);
    }

    if (receipt.rows.accepted + receipt.rows.rejected + receipt.rows.duplicate === 0) {
      return reject(
        new IngestError(
          'empty-file',
          name,
          kind.headerLine,
          undefined,
          undefined,
          'the file has a header but no data rows',
        ),
        receipt.lab,
      );
    }
    deps.store.finishFile(fileId, {
      accepted: receipt.rows.accepted,
      rejected: receipt.rows.rejected,
      duplicate: receipt.rows.duplicate,
    });

    const effects = deps.store.openFileEffects();
    if (kind.kind === 'results') {
      receipt.unresolvedSampleIds = effects.unresolved;
      receipt.unresolvedNotListed = effects.unresolvedCount - effects.unresolved.length;
    }
    receipt.resolvedSampleIds = effects.resolved;
    receipt.sites = effects.sites;
    deps.store.bumpSiteVersions(receipt.sites);

    requireUnchanged();
    deps.store.commit();
    return receipt;
  } catch (error) {
    if (error instanceof FileStillChangingError) throw error;
    if (error instanceof FileChangedError) {
      deps.store.rollback();
      throw new FileStillChangingError(
        `${error.message}; nothing was stored and the file stays in the inbox for the next run`,
      );
    }
    if (error instanceof EncodingError) {
      return reject(
        new IngestError(
          'invalid-encoding',
          name,
          error.line,
          undefined,
          undefined,
          `${error.message}; set format.encoding in the lab profile or re-export as UTF-8`,
        ),
        receipt.lab,
      );
    }
    if (error instanceof UnclosedQuoteError || error instanceof RecordTooLongError) {
      return reject(
        new IngestError(
          'malformed-csv',
          name,
          error.line,
          undefined,
          undefined,
          `the file is not well-formed CSV (${error.message}); rows after it cannot be trusted`,
        ),
        receipt.lab,
      );
    }
    deps.store.rollback();
    throw error;
  }
}

export { REJECTION_CODES };
