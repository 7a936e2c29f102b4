/**
 * HL7 messages into the store, as one unit: a file of one message or a batch, or one message
 * received over MLLP. Everything is read, parsed and mapped before the transaction; then one
 * transaction stores the rows of every message that is new, with the same receipts, refusals,
 * supersession and idempotency as a CSV export. Idempotent by content (the SHA-256 of the bytes)
 * and by message: a message whose MSH-10 (control ID) from the same lab was stored whole before
 * is a repeat, stored once and acknowledged AA. The caller acknowledges only after this returns,
 * so a crash before the commit leaves the message unacknowledged and the sender sends it again.
 */
import { createHash } from 'node:crypto';
import type { Config } from '../config/types.js';
import { correctionsForFile, plannedIdChecker } from '../ingest/plannedIds.js';
import { emptyReceipt, type Receipt } from '../ingest/receipt.js';
import { rowRejection, type RowRejection } from '../ingest/errors.js';
import type { StoredFile } from '../domain/records.js';
import { FileAlreadyStoredError, RECEIPT_LIST_LIMIT, type StoreBackend } from '../domain/store.js';
import { withConflictRetrySync } from '../ingest/conflictRetry.js';
import { ingestRules } from '../ingest/rowRules.js';
import { type AckCode, type AckError, messageRefusalAck } from './ack.js';
import { fieldName, Hl7Error, type Hl7Location } from './hl7Error.js';
import { type Hl7Message, parseMessage, type SegmentLine } from './parse.js';
import { controlIdOf, type MessageHeader, messageRecords, type MessageRecords, readHeader } from './resultRecords.js';
import { decodeHl7, splitMessages } from './envelope.js';

export interface ReceiveDeps {
  config: Config;
  store: StoreBackend;
  now: () => Date;
}

/** What became of one message: the acknowledgement it earns. */
export interface MessageOutcome {
  message: Hl7Message | undefined;
  controlId: string;
  ack: AckCode;
  errors: AckError[];
  /** Stored whole before (by MSH-10 or by the same bytes): nothing stored again. */
  repeat: boolean;
}

export interface ReceiveResult {
  receipt: Receipt;
  outcomes: MessageOutcome[];
}

/** Rejected inputs up to this size keep their bytes in the store. */
const KEEP_BYTES_LIMIT = 16 * 1024 * 1024;

/** The meta key under which a message stored whole is remembered: lab and MSH-10. */
export function controlIdKey(labId: string, controlId: string): string {
  return `hl7-control-id\u001f${labId}\u001f${controlId}`;
}

/** One message read as far as it goes before the store is touched. */
interface ReadMessage {
  outcome: MessageOutcome;
  header?: MessageHeader;
  records?: MessageRecords;
  /** The message-level refusal, when the message is refused whole. */
  refusal?: Hl7Error;
}

function refusalOf(error: Hl7Error): AckError {
  return { code: error.code, location: error.location, text: error.message };
}

function readOne(lines: readonly SegmentLine[], name: string, deps: ReceiveDeps): ReadMessage {
  let message: Hl7Message | undefined;
  try {
    message = parseMessage(lines);
    const header = readHeader(message, deps.config.labs);
    const corrections = correctionsForFile(deps.config.corrections, [name]);
    const records = messageRecords(message, header, {
      fileName: name,
      sites: deps.config.sites,
      assayById: deps.config.assayById,
      plannedIdCheck: plannedIdChecker({ sites: deps.config.sites, corrections }),
    });
    const errors = records.rejections.map((rejection) => ackErrorOf(rejection, records));
    return {
      outcome: { message, controlId: header.controlId, ack: errors.length > 0 ? 'AE' : 'AA', errors, repeat: false },
      header,
      records,
    };
  } catch (error) {
    if (!(error instanceof Hl7Error)) throw error;
    return {
      outcome: {
        message,
        controlId: message === undefined ? '' : controlIdOf(message),
        ack: messageRefusalAck(error.code),
        errors: [refusalOf(error)],
        repeat: false,
      },
      refusal: error,
    };
  }
}

/** A row refusal as the acknowledgement names it: the segment at its line, and its field number. */
function ackErrorOf(rejection: RowRejection, records: Pick<MessageRecords, 'segmentAt'>): AckError {
  const segment = records.segmentAt.get(rejection.line);
  const fieldNo = /^[A-Z][A-Z0-9]{2}-(\d+)$/.exec(rejection.field ?? '')?.[1];
  const segmentId = /^([A-Z][A-Z0-9]{2})/.exec(rejection.field ?? '')?.[1] ?? segment?.id ?? 'OBX';
  const same = segment !== undefined && segment.id === segmentId;
  return {
    code: rejection.code,
    location: {
      segment: segmentId,
      sequence: same ? segment.sequence : undefined,
      field: fieldNo === undefined ? undefined : Number(fieldNo),
      line: rejection.line,
    },
    text: rejection.message,
  };
}

/** Records a refused unit (its bytes kept when small) and returns the refusal. */
function rejectUnit(
  unit: { name: string; bytes: Buffer; sha256: string; receivedAt: string },
  receipt: Receipt,
  refusal: { error: Hl7Error; outcomes: MessageOutcome[]; labId: string | null },
  deps: ReceiveDeps,
): ReceiveResult {
  const { name, bytes, sha256, receivedAt } = unit;
  const { error, outcomes, labId } = refusal;
  receipt.status = 'rejected';
  receipt.reason = {
    code: error.code,
    message: `${name}: ${error.message}`,
    line: error.location.line,
    field: fieldName(error.location),
  };
  deps.store.recordRejectedFile({
    name,
    kind: 'results',
    sha256,
    receivedAt,
    reasonCode: error.code,
    reason: receipt.reason.message,
    line: error.location.line,
    field: fieldName(error.location),
    bytes: bytes.length <= KEEP_BYTES_LIMIT ? bytes : undefined,
    byteLength: bytes.length,
    labId,
  });
  return { receipt, outcomes };
}

/**
 * Receives one unit of HL7 (a file's bytes, or one MLLP frame's) and stores what is new in one
 * transaction. Never throws for bad input: refusals come back in the receipt and the outcomes.
 * Re-throws unexpected errors after rolling back (nothing stored, nothing to acknowledge).
 */
export function receiveHl7(
  input: { name: string; bytes: Buffer; source: 'file' | 'mllp' },
  deps: ReceiveDeps,
): ReceiveResult {
  const { name, bytes } = input;
  const receivedAt = deps.now().toISOString();
  const sha256 = createHash('sha256').update(bytes).digest('hex');
  const receipt = emptyReceipt(name, sha256, receivedAt);
  receipt.kind = 'results';
  const known = deps.store.findFileByHash(sha256);
  if (known?.status === 'accepted') return repeatOfFile(receipt, known, bytes, deps.store);
  if (known?.status === 'rejected')
    receipt.warnings.push(
      `the same bytes were refused before (as ${known.name} on ${known.receivedAt}: ${known.reasonCode ?? 'no code'}); read again with the current configuration`,
    );

  const unit = { name, bytes, sha256, receivedAt };
  const reject = (error: Hl7Error, outcomes: MessageOutcome[], labId: string | null): ReceiveResult =>
    rejectUnit(unit, receipt, { error, outcomes, labId }, deps);

  let units: SegmentLine[][];
  try {
    const text = decodeHl7(bytes);
    receipt.encoding = text.note;
    units = splitMessages(text.text, input.source);
  } catch (error) {
    if (!(error instanceof Hl7Error)) throw error;
    const outcome: MessageOutcome = {
      message: undefined,
      controlId: '',
      ack: messageRefusalAck(error.code),
      errors: [refusalOf(error)],
      repeat: false,
    };
    return reject(error, [outcome], null);
  }
  const read = units.map((lines) => readOne(lines, name, deps));
  const usable = read.filter((entry) => entry.refusal === undefined);
  const firstLab = usable[0]?.header?.lab.id ?? null;
  receipt.lab = firstLab;
  const isRepeat = (entry: ReadMessage) =>
    entry.header !== undefined &&
    deps.store.getMeta(controlIdKey(entry.header.lab.id, entry.header.controlId)) !== undefined;
  for (const entry of usable) markRepeat(entry, isRepeat(entry));
  const fresh = usable.filter((entry) => !entry.outcome.repeat);
  if (fresh.length === 0) {
    const refused = read.find((entry) => entry.refusal !== undefined);
    if (refused !== undefined)
      return reject(
        refused.refusal!,
        read.map((entry) => entry.outcome),
        firstLab,
      );
    receipt.status = 'duplicate';
    receipt.reason = {
      code: 'duplicate-file',
      message: `${name}: every message in it (MSH-10 ${usable.map((entry) => entry.outcome.controlId).join(', ')}) was stored before; nothing stored twice`,
      line: null,
      field: null,
    };
    return { receipt, outcomes: read.map((entry) => entry.outcome) };
  }

  // Stored again, from the receipt and outcomes as they were, when another process stored rows
  // it meets first (src/ingest/conflictRetry.ts).
  const before = {
    receipt: structuredClone(receipt),
    outcomes: read.map(({ outcome }) => ({ ...outcome, errors: [...outcome.errors] })),
  };
  return withConflictRetrySync((attempt, lockSites) => {
    if (attempt > 1)
      read.forEach((entry, i) =>
        Object.assign(entry.outcome, before.outcomes[i], { errors: [...before.outcomes[i]!.errors] }),
      );
    const unit = { name, sha256, receivedAt, bytes, labId: firstLab, read, fresh, isRepeat, lockSites };
    return storeInOneTransaction(unit, attempt === 1 ? receipt : structuredClone(before.receipt), deps);
  });
}

/** What receiveHl7 read before the store, handed to the transaction. */
interface ReadUnit {
  name: string;
  sha256: string;
  receivedAt: string;
  bytes: Buffer;
  labId: string | null;
  read: ReadMessage[];
  fresh: ReadMessage[];
  isRepeat: (entry: ReadMessage) => boolean;
  /** Sites an earlier attempt touched before another process stored rows it met (locked first). */
  lockSites: readonly string[];
}

/** The one transaction: every new message's rows and refusals, the messages refused whole as refusals of the file. */
function storeInOneTransaction(unit: ReadUnit, receipt: Receipt, deps: ReceiveDeps): ReceiveResult {
  const { name, sha256, receivedAt, bytes, read, fresh, isRepeat } = unit;
  let fileId: number;
  try {
    fileId = deps.store.beginFile(
      {
        name,
        sha256,
        kind: 'results',
        labId: unit.labId,
        receivedAt,
        encodingNote: `${receipt.encoding}; ${read.length} message(s), MSH-10 ${read.map((entry) => entry.outcome.controlId || '?').join(', ')}`,
        byteLength: bytes.length,
      },
      ingestRules,
      { lockSites: unit.lockSites },
    );
  } catch (error) {
    if (error instanceof FileAlreadyStoredError) return repeatOfFile(receipt, error.known, bytes, deps.store);
    throw error;
  }
  try {
    for (const entry of fresh) {
      // Another process may have stored the same message while this one waited for the lock.
      if (isRepeat(entry)) {
        markRepeat(entry, true);
        continue;
      }
      storeMessage(entry, fileId, deps.store, receipt);
    }
    for (const entry of read) {
      if (entry.refusal === undefined) continue;
      const where = entry.refusal.location;
      const refusal = rowRejection({
        code: entry.refusal.code,
        line: where.line,
        field: fieldName(where),
        detail: entry.refusal.message,
      });
      deps.store.insertRejections(fileId, [refusal]);
      noteRejections(receipt, [refusal]);
    }
    deps.store.finishFile(fileId, {
      accepted: receipt.rows.accepted,
      rejected: receipt.rows.rejected,
      duplicate: receipt.rows.duplicate,
    });
    const effects = deps.store.openFileEffects();
    receipt.unresolvedSampleIds = effects.unresolved;
    receipt.unresolvedNotListed = effects.unresolvedCount - effects.unresolved.length;
    receipt.resolvedSampleIds = effects.resolved;
    receipt.sites = effects.sites;
    deps.store.bumpSiteVersions(effects.changes);
    deps.store.commit();
  } catch (error) {
    deps.store.rollback();
    throw error;
  }
  return { receipt, outcomes: read.map((entry) => entry.outcome) };
}

function markRepeat(entry: ReadMessage, repeat: boolean): void {
  if (!repeat) return;
  entry.outcome.repeat = true;
  entry.outcome.ack = 'AA';
  entry.outcome.errors = [];
}

/** Stores one message's rows; remembers its MSH-10 when it was stored whole (a resend of an AE message is read again). */
function storeMessage(entry: ReadMessage, fileId: number, store: StoreBackend, receipt: Receipt): void {
  const records = entry.records!;
  const header = entry.header!;
  const counts = store.insertResults(fileId, records.rows, header.hl7.sampleId);
  receipt.rows.accepted += counts.inserted;
  receipt.rows.duplicate += counts.duplicates;
  receipt.rows.superseded += counts.superseded;
  receipt.warnings.push(...counts.warnings);
  listInto(receipt.invalidRows!, counts.invalid);
  listInto(receipt.callDisagreements!, counts.callDisagreements);
  listInto(receipt.supersessions!, counts.supersessions);
  const refusals = [...records.rejections, ...counts.rejections];
  if (refusals.length > 0) {
    store.insertRejections(fileId, refusals);
    noteRejections(receipt, refusals);
  }
  if (counts.rejections.length > 0) {
    entry.outcome.errors.push(...counts.rejections.map((rejection) => ackErrorOf(rejection, records)));
    entry.outcome.ack = 'AE';
  }
  if (entry.outcome.ack === 'AA') store.setMeta(controlIdKey(header.lab.id, header.controlId), String(fileId));
}

function noteRejections(receipt: Receipt, refusals: readonly RowRejection[]): void {
  receipt.rows.rejected += refusals.length;
  for (const refusal of refusals) {
    if (receipt.rejectedRows.length < RECEIPT_LIST_LIMIT) receipt.rejectedRows.push(refusal);
    else receipt.rejectedRowsNotListed++;
  }
}

function listInto<T>(list: T[], items: readonly T[]): void {
  for (const item of items) if (list.length < RECEIPT_LIST_LIMIT) list.push(item);
}

/**
 * The same bytes were stored before: nothing stored twice. A message is acknowledged as it was
 * the first time: AA, or AE again with the refusals stored with it (a resend does not turn an
 * error into an acceptance).
 */
function repeatOfFile(receipt: Receipt, known: StoredFile, bytes: Buffer, store: StoreBackend): ReceiveResult {
  receipt.status = 'duplicate';
  receipt.lab = known.labId;
  receipt.reason = {
    code: 'duplicate-file',
    message: `${receipt.file}: the same bytes were stored before as ${known.name} on ${known.receivedAt}; nothing stored twice`,
    line: null,
    field: null,
  };
  let outcomes: MessageOutcome[] = [];
  try {
    outcomes = splitMessages(decodeHl7(bytes).text, 'file').map((lines) => {
      let message: Hl7Message | undefined;
      try {
        message = parseMessage(lines);
      } catch {
        // Stored before, so it parsed then; acknowledged without its header all the same.
      }
      return {
        message,
        controlId: message === undefined ? '' : controlIdOf(message),
        ack: 'AA',
        errors: [],
        repeat: true,
      };
    });
  } catch {
    outcomes = [];
  }
  const refusals = store.rejectedRows(known.id);
  const only = outcomes.length === 1 ? outcomes[0]! : undefined;
  if (only !== undefined && refusals.length > 0) {
    const segmentAt = new Map((only.message?.segments ?? []).map((segment) => [segment.line, segment]));
    only.ack = 'AE';
    only.errors = refusals.map((refusal) => ackErrorOf(refusal, { segmentAt }));
  }
  return { receipt, outcomes };
}

export type { Hl7Location };
