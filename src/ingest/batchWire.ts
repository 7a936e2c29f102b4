/**
 * A batch of mapped rows in a form that crosses from a worker thread cheaply. Structured clone
 * of 2,000 row objects costs the receiving thread about as much as storing them; here each text
 * column becomes a small dictionary (a batch repeats dates, assay names, calls and reasons on
 * every row) and an index array, and the numbers one Float64Array, all moved without copying.
 * Ropes and refusals are few: they travel as they are.
 */
import type { RowRejection } from './errors.js';
import type { MappedBatch, RowList } from './mappedBatches.js';
import type { ResultRow, RopeLocation, RopeRow } from '../domain/records.js';
import type { ResultClass } from '../interpret/classify.js';
import type { CallClass, Measure, ReportStatusKind } from '../config/types.js';

const TEXT_COLUMNS = [
  'labId',
  'sampleId',
  'assayId',
  'labAssay',
  'measure',
  'ctRaw',
  'labCall',
  'accession',
  'collectedOn',
  'reportedOn',
  'reportStatus',
  'control',
  'resultClass',
  'reason',
  'loadBand',
  'statusKind',
  'statusWord',
  'labCallClass',
  'sampleIdAsWritten',
  'ropeSiteId',
  'ropeBarnId',
  'ropePenId',
  'ropeHungOn',
] as const;
type TextColumn = (typeof TEXT_COLUMNS)[number];

/** Numbers per row: line, ct (NaN: none), Ct cutoffs, content key, flags, sp, S/P cutoffs (NaN: none). */
const NUMBERS_PER_ROW = 10;
const FLAG_REISSUE = 1;
const FLAG_CALL_DIFFERS = 2;

interface WireText {
  values: (string | null)[];
  index: Uint32Array;
}

export interface WireBatch {
  count: number;
  numbers: Float64Array;
  texts: Record<TextColumn, WireText>;
  ropes: RopeRow[];
  rejections: RowRejection[];
}

/** Look-ups after which a column whose dictionary rarely finds a value stops asking it. */
const DICTIONARY_TRIAL = 64;

/**
 * One column as a dictionary and an index, filled row by row. Neighbouring rows mostly repeat a
 * value (a sample's assays, a round's dates), so the previous row's value is compared before the
 * dictionary is asked. A column whose values hardly ever come back once their run has ended (case
 * numbers, sample IDs) gives up its dictionary after a trial: each new run then just adds its
 * value, which reads back the same.
 */
class ColumnEncoder {
  private positions: Map<string | null, number> | undefined = new Map();
  readonly values: (string | null)[] = [];
  readonly index: Uint32Array;
  // undefined until the first row: a value is a string or null, so the first row always looks up.
  private previous: string | null | undefined;
  private previousPosition = 0;
  private lookups = 0;
  private found = 0;

  constructor(count: number) {
    this.index = new Uint32Array(count);
  }

  add(i: number, value: string | null): void {
    if (value !== this.previous) {
      this.previous = value;
      this.previousPosition = this.positionOf(value);
    }
    this.index[i] = this.previousPosition;
  }

  private positionOf(value: string | null): number {
    const positions = this.positions;
    if (positions === undefined) return this.values.push(value) - 1;
    let position = positions.get(value);
    if (position === undefined) {
      position = this.values.push(value) - 1;
      positions.set(value, position);
    } else {
      this.found++;
    }
    // Fewer than one look-up in eight found its value: the dictionary costs more than it saves.
    if (++this.lookups === DICTIONARY_TRIAL && this.found * 8 < DICTIONARY_TRIAL) this.positions = undefined;
    return position;
  }

  wire(): WireText {
    return { values: this.values, index: this.index };
  }
}

/**
 * The batch in wire form, in one pass over its rows: each field is read at a call site of its
 * own and handed to one encoder class, so every property read and every call stays monomorphic
 * (a function per column called from one loop was a call V8 could not inline).
 */
export function encodeBatch(batch: MappedBatch<ResultRow[]>): WireBatch {
  const rows = batch.results;
  const count = rows.length;
  const numbers = new Float64Array(count * NUMBERS_PER_ROW);
  const column = () => new ColumnEncoder(count);
  const labId = column();
  const sampleId = column();
  const assayId = column();
  const labAssay = column();
  const measure = column();
  const ctRaw = column();
  const labCall = column();
  const accession = column();
  const collectedOn = column();
  const reportedOn = column();
  const reportStatus = column();
  const control = column();
  const resultClass = column();
  const reason = column();
  const loadBand = column();
  const statusKind = column();
  const statusWord = column();
  const labCallClass = column();
  const sampleIdAsWritten = column();
  const ropeSiteId = column();
  const ropeBarnId = column();
  const ropePenId = column();
  const ropeHungOn = column();
  for (let i = 0; i < count; i++) {
    const row = rows[i]!;
    const at = i * NUMBERS_PER_ROW;
    numbers[at] = row.line;
    numbers[at + 1] = row.ct ?? Number.NaN;
    numbers[at + 2] = row.positiveBelow ?? Number.NaN;
    numbers[at + 3] = row.suspectBelow ?? Number.NaN;
    numbers[at + 4] = row.cycleLimit ?? Number.NaN;
    numbers[at + 5] = row.contentKey;
    numbers[at + 6] = (row.markedReissue ? FLAG_REISSUE : 0) | (row.callDiffers ? FLAG_CALL_DIFFERS : 0);
    numbers[at + 7] = row.sp ?? Number.NaN;
    numbers[at + 8] = row.positiveAtOrAbove ?? Number.NaN;
    numbers[at + 9] = row.suspectAtOrAbove ?? Number.NaN;
    labId.add(i, row.labId);
    sampleId.add(i, row.sampleId);
    assayId.add(i, row.assayId);
    labAssay.add(i, row.labAssay);
    measure.add(i, row.measure);
    ctRaw.add(i, row.ctRaw);
    labCall.add(i, row.labCall);
    accession.add(i, row.accession);
    collectedOn.add(i, row.collectedOn);
    reportedOn.add(i, row.reportedOn);
    reportStatus.add(i, row.reportStatus);
    control.add(i, row.control);
    resultClass.add(i, row.resultClass);
    reason.add(i, row.reason);
    loadBand.add(i, row.loadBand);
    statusKind.add(i, row.statusKind);
    statusWord.add(i, row.statusWord);
    labCallClass.add(i, row.labCallClass);
    sampleIdAsWritten.add(i, row.sampleIdAsWritten);
    const rope = row.encodedRope;
    ropeSiteId.add(i, rope?.siteId ?? null);
    ropeBarnId.add(i, rope?.barnId ?? null);
    ropePenId.add(i, rope?.penId ?? null);
    ropeHungOn.add(i, rope?.hungOn ?? null);
  }
  const texts: Record<TextColumn, WireText> = {
    labId: labId.wire(),
    sampleId: sampleId.wire(),
    assayId: assayId.wire(),
    labAssay: labAssay.wire(),
    measure: measure.wire(),
    ctRaw: ctRaw.wire(),
    labCall: labCall.wire(),
    accession: accession.wire(),
    collectedOn: collectedOn.wire(),
    reportedOn: reportedOn.wire(),
    reportStatus: reportStatus.wire(),
    control: control.wire(),
    resultClass: resultClass.wire(),
    reason: reason.wire(),
    loadBand: loadBand.wire(),
    statusKind: statusKind.wire(),
    statusWord: statusWord.wire(),
    labCallClass: labCallClass.wire(),
    sampleIdAsWritten: sampleIdAsWritten.wire(),
    ropeSiteId: ropeSiteId.wire(),
    ropeBarnId: ropeBarnId.wire(),
    ropePenId: ropePenId.wire(),
    ropeHungOn: ropeHungOn.wire(),
  };
  return { count, numbers, texts, ropes: batch.ropes, rejections: batch.rejections };
}

/** The buffers to move (not copy) with postMessage. */
export function transferables(wire: WireBatch): ArrayBuffer[] {
  return [
    wire.numbers.buffer as ArrayBuffer,
    ...TEXT_COLUMNS.map((column) => wire.texts[column].index.buffer as ArrayBuffer),
  ];
}

/**
 * The rows of a wire batch, each decoded when it is asked for: a row object then dies as soon as
 * it is stored, instead of 2,000 living through a whole batch (which V8 answers by allocating
 * them in the old generation, where only a full collection frees them).
 */
export class WireRows implements RowList<ResultRow> {
  readonly length: number;
  private readonly numbers: Float64Array;
  // Each column's dictionary and index held in a field of its own: a row is read without a
  // keyed look-up per field.
  private readonly labId: WireText;
  private readonly sampleId: WireText;
  private readonly assayId: WireText;
  private readonly labAssay: WireText;
  private readonly measure: WireText;
  private readonly ctRaw: WireText;
  private readonly labCall: WireText;
  private readonly accession: WireText;
  private readonly collectedOn: WireText;
  private readonly reportedOn: WireText;
  private readonly reportStatus: WireText;
  private readonly control: WireText;
  private readonly resultClass: WireText;
  private readonly reason: WireText;
  private readonly loadBand: WireText;
  private readonly statusKind: WireText;
  private readonly statusWord: WireText;
  private readonly labCallClass: WireText;
  private readonly sampleIdAsWritten: WireText;
  private readonly ropeSiteId: WireText;
  private readonly ropeBarnId: WireText;
  private readonly ropePenId: WireText;
  private readonly ropeHungOn: WireText;

  constructor(wire: WireBatch) {
    this.length = wire.count;
    this.numbers = wire.numbers;
    const { texts } = wire;
    this.labId = texts.labId;
    this.sampleId = texts.sampleId;
    this.assayId = texts.assayId;
    this.labAssay = texts.labAssay;
    this.measure = texts.measure;
    this.ctRaw = texts.ctRaw;
    this.labCall = texts.labCall;
    this.accession = texts.accession;
    this.collectedOn = texts.collectedOn;
    this.reportedOn = texts.reportedOn;
    this.reportStatus = texts.reportStatus;
    this.control = texts.control;
    this.resultClass = texts.resultClass;
    this.reason = texts.reason;
    this.loadBand = texts.loadBand;
    this.statusKind = texts.statusKind;
    this.statusWord = texts.statusWord;
    this.labCallClass = texts.labCallClass;
    this.sampleIdAsWritten = texts.sampleIdAsWritten;
    this.ropeSiteId = texts.ropeSiteId;
    this.ropeBarnId = texts.ropeBarnId;
    this.ropePenId = texts.ropePenId;
    this.ropeHungOn = texts.ropeHungOn;
  }

  /** The location decoded last and the row it was decoded for: a sample's rows share one. */
  private lastRope: RopeLocation | undefined;
  private lastRopeRow = -1;

  at(i: number): ResultRow {
    const numbers = this.numbers;
    const at = i * NUMBERS_PER_ROW;
    const ct = numbers[at + 1]!;
    const flags = numbers[at + 6]!;
    return {
      line: numbers[at]!,
      labId: textAt(this.labId, i)!,
      sampleId: textAt(this.sampleId, i)!,
      assayId: textAt(this.assayId, i)!,
      labAssay: textAt(this.labAssay, i)!,
      measure: textAt(this.measure, i) as Measure,
      ct: Number.isNaN(ct) ? null : ct,
      sp: orNull(numbers[at + 7]!),
      ctRaw: textAt(this.ctRaw, i)!,
      labCall: textAt(this.labCall, i),
      accession: textAt(this.accession, i),
      collectedOn: textAt(this.collectedOn, i),
      reportedOn: textAt(this.reportedOn, i),
      reportStatus: textAt(this.reportStatus, i),
      control: textAt(this.control, i),
      resultClass: textAt(this.resultClass, i) as ResultClass,
      reason: textAt(this.reason, i)!,
      loadBand: textAt(this.loadBand, i),
      positiveBelow: orNull(numbers[at + 2]!),
      suspectBelow: orNull(numbers[at + 3]!),
      cycleLimit: orNull(numbers[at + 4]!),
      positiveAtOrAbove: orNull(numbers[at + 8]!),
      suspectAtOrAbove: orNull(numbers[at + 9]!),
      markedReissue: (flags & FLAG_REISSUE) !== 0,
      statusKind: textAt(this.statusKind, i) as ReportStatusKind | null,
      statusWord: textAt(this.statusWord, i),
      labCallClass: textAt(this.labCallClass, i) as CallClass | null,
      callDiffers: (flags & FLAG_CALL_DIFFERS) !== 0,
      sampleIdAsWritten: textAt(this.sampleIdAsWritten, i),
      contentKey: numbers[at + 5]!,
      encodedRope: this.ropeAt(i),
    };
  }

  /**
   * The rope location row i's sample ID encodes, the same object as the row before's when both
   * name one place (the store then builds its key once per rope). Never changed once decoded.
   */
  private ropeAt(i: number): RopeLocation | undefined {
    const site = this.ropeSiteId.index[i]!;
    if (this.ropeSiteId.values[site] === null) return undefined;
    const last = this.lastRopeRow;
    if (
      last >= 0 &&
      site === this.ropeSiteId.index[last] &&
      this.ropeBarnId.index[i] === this.ropeBarnId.index[last] &&
      this.ropePenId.index[i] === this.ropePenId.index[last] &&
      this.ropeHungOn.index[i] === this.ropeHungOn.index[last]
    )
      return this.lastRope;
    this.lastRopeRow = i;
    this.lastRope = Object.freeze({
      siteId: this.ropeSiteId.values[site]!,
      barnId: textAt(this.ropeBarnId, i)!,
      penId: textAt(this.ropePenId, i)!,
      hungOn: textAt(this.ropeHungOn, i)!,
    });
    return this.lastRope;
  }
}

/** NaN carries "none" across the wire. */
function orNull(value: number): number | null {
  return Number.isNaN(value) ? null : value;
}

function textAt(text: WireText, i: number): string | null {
  return text.values[text.index[i]!]!;
}

export function decodeBatch(wire: WireBatch): MappedBatch {
  return { results: new WireRows(wire), ropes: wire.ropes, rejections: wire.rejections };
}
