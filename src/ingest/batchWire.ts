/**
 * A batch of mapped rows in a form that crosses from a worker thread cheaply. Structured clone
 * of 2,000 row objects costs the receiving thread about as much as storing them; here each text
 * column becomes a small dictionary (a batch repeats dates, assay names, calls and reasons on
 * every row) and an index array, and the numbers one Float64Array, all moved without copying.
 * Ropes and refusals are few: they travel as they are.
 */
import type { RowRejection } from './errors.js';
import type { MappedBatch, RowList } from './mappedBatches.js';
import type { ResultRow, RopeRow } from '../domain/records.js';
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

function textOf(row: ResultRow, column: TextColumn): string | null {
  switch (column) {
    case 'ropeSiteId':
      return row.encodedRope?.siteId ?? null;
    case 'ropeBarnId':
      return row.encodedRope?.barnId ?? null;
    case 'ropePenId':
      return row.encodedRope?.penId ?? null;
    case 'ropeHungOn':
      return row.encodedRope?.hungOn ?? null;
    default:
      return row[column];
  }
}

export function encodeBatch(batch: MappedBatch<ResultRow[]>): WireBatch {
  const rows = batch.results;
  const count = rows.length;
  const numbers = new Float64Array(count * NUMBERS_PER_ROW);
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
  }
  const texts = {} as Record<TextColumn, WireText>;
  for (const column of TEXT_COLUMNS) {
    const positions = new Map<string | null, number>();
    const values: (string | null)[] = [];
    const index = new Uint32Array(count);
    for (let i = 0; i < count; i++) {
      const value = textOf(rows[i]!, column);
      let position = positions.get(value);
      if (position === undefined) {
        position = values.length;
        values.push(value);
        positions.set(value, position);
      }
      index[i] = position;
    }
    texts[column] = { values, index };
  }
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

  constructor(private readonly wire: WireBatch) {
    this.length = wire.count;
  }

  at(i: number): ResultRow {
    const { numbers, texts } = this.wire;
    const at = i * NUMBERS_PER_ROW;
    const ct = numbers[at + 1]!;
    const flags = numbers[at + 6]!;
    const ropeSiteId = textAt(texts, 'ropeSiteId', i);
    return {
      line: numbers[at]!,
      labId: textAt(texts, 'labId', i)!,
      sampleId: textAt(texts, 'sampleId', i)!,
      assayId: textAt(texts, 'assayId', i)!,
      labAssay: textAt(texts, 'labAssay', i)!,
      measure: textAt(texts, 'measure', i) as Measure,
      ct: Number.isNaN(ct) ? null : ct,
      sp: orNull(numbers[at + 7]!),
      ctRaw: textAt(texts, 'ctRaw', i)!,
      labCall: textAt(texts, 'labCall', i),
      accession: textAt(texts, 'accession', i),
      collectedOn: textAt(texts, 'collectedOn', i),
      reportedOn: textAt(texts, 'reportedOn', i),
      reportStatus: textAt(texts, 'reportStatus', i),
      control: textAt(texts, 'control', i),
      resultClass: textAt(texts, 'resultClass', i) as ResultClass,
      reason: textAt(texts, 'reason', i)!,
      loadBand: textAt(texts, 'loadBand', i),
      positiveBelow: orNull(numbers[at + 2]!),
      suspectBelow: orNull(numbers[at + 3]!),
      cycleLimit: orNull(numbers[at + 4]!),
      positiveAtOrAbove: orNull(numbers[at + 8]!),
      suspectAtOrAbove: orNull(numbers[at + 9]!),
      markedReissue: (flags & FLAG_REISSUE) !== 0,
      statusKind: textAt(texts, 'statusKind', i) as ReportStatusKind | null,
      statusWord: textAt(texts, 'statusWord', i),
      labCallClass: textAt(texts, 'labCallClass', i) as CallClass | null,
      callDiffers: (flags & FLAG_CALL_DIFFERS) !== 0,
      sampleIdAsWritten: textAt(texts, 'sampleIdAsWritten', i),
      contentKey: numbers[at + 5]!,
      encodedRope:
        ropeSiteId === null
          ? undefined
          : {
              siteId: ropeSiteId,
              barnId: textAt(texts, 'ropeBarnId', i)!,
              penId: textAt(texts, 'ropePenId', i)!,
              hungOn: textAt(texts, 'ropeHungOn', i)!,
            },
    };
  }
}

/** NaN carries "none" across the wire. */
function orNull(value: number): number | null {
  return Number.isNaN(value) ? null : value;
}

function textAt(texts: Record<TextColumn, WireText>, column: TextColumn, i: number): string | null {
  const text = texts[column];
  return text.values[text.index[i]!]!;
}

export function decodeBatch(wire: WireBatch): MappedBatch {
  return { results: new WireRows(wire), ropes: wire.ropes, rejections: wire.rejections };
}
