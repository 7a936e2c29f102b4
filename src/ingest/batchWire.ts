/**
 * A batch of mapped rows in a form that crosses from a worker thread cheaply. Structured clone
 * of 2,000 row objects costs the receiving thread about as much as storing them; here each text
 * column becomes a small dictionary (a batch repeats dates, assay names, calls and reasons on
 * every row) and an index array, and the numbers one Float64Array, all moved without copying.
 * Ropes and refusals are few: they travel as they are.
 */
import type { RowRejection } from './errors.js';
import type { MappedBatch } from './mappedBatches.js';
import type { ResultRow, RopeRow } from './rows.js';
import type { ResultClass } from '../interpret/classify.js';

const TEXT_COLUMNS = [
  'labId', 'sampleId', 'assayId', 'labAssay', 'ctRaw', 'labCall', 'accession', 'collectedOn', 'reportedOn', 'reportStatus', 'control', 'resultClass', 'reason', 'loadBand',
  'ropeSiteId', 'ropeBarnId', 'ropePenId', 'ropeHungOn',
] as const;
type TextColumn = (typeof TEXT_COLUMNS)[number];

/** Numbers per row: line, ct (NaN: none), cutoffs, content key, flags. */
const NUMBERS_PER_ROW = 7;
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

export function encodeBatch(batch: MappedBatch): WireBatch {
  const rows = batch.results;
  const count = rows.length;
  const numbers = new Float64Array(count * NUMBERS_PER_ROW);
  for (let i = 0; i < count; i++) {
    const row = rows[i]!;
    const at = i * NUMBERS_PER_ROW;
    numbers[at] = row.line;
    numbers[at + 1] = row.ct ?? Number.NaN;
    numbers[at + 2] = row.positiveBelow;
    numbers[at + 3] = row.suspectBelow;
    numbers[at + 4] = row.cycleLimit;
    numbers[at + 5] = row.contentKey;
    numbers[at + 6] = (row.markedReissue ? FLAG_REISSUE : 0) | (row.callDiffers ? FLAG_CALL_DIFFERS : 0);
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
  return [wire.numbers.buffer as ArrayBuffer, ...TEXT_COLUMNS.map((column) => wire.texts[column].index.buffer as ArrayBuffer)];
}

export function decodeBatch(wire: WireBatch): MappedBatch {
  const { count, numbers, texts } = wire;
  const text = (column: TextColumn, i: number) => texts[column].values[texts[column].index[i]!]!;
  const results: ResultRow[] = new Array(count);
  for (let i = 0; i < count; i++) {
    const at = i * NUMBERS_PER_ROW;
    const ct = numbers[at + 1]!;
    const flags = numbers[at + 6]!;
    const ropeSiteId = text('ropeSiteId', i);
    results[i] = {
      line: numbers[at]!,
      labId: text('labId', i)!,
      sampleId: text('sampleId', i)!,
      assayId: text('assayId', i)!,
      labAssay: text('labAssay', i)!,
      ct: Number.isNaN(ct) ? null : ct,
      ctRaw: text('ctRaw', i)!,
      labCall: text('labCall', i),
      accession: text('accession', i),
      collectedOn: text('collectedOn', i),
      reportedOn: text('reportedOn', i),
      reportStatus: text('reportStatus', i),
      control: text('control', i),
      resultClass: text('resultClass', i) as ResultClass,
      reason: text('reason', i)!,
      loadBand: text('loadBand', i),
      positiveBelow: numbers[at + 2]!,
      suspectBelow: numbers[at + 3]!,
      cycleLimit: numbers[at + 4]!,
      markedReissue: (flags & FLAG_REISSUE) !== 0,
      callDiffers: (flags & FLAG_CALL_DIFFERS) !== 0,
      contentKey: numbers[at + 5]!,
      encodedRope: ropeSiteId === null ? undefined : { siteId: ropeSiteId, barnId: text('ropeBarnId', i)!, penId: text('ropePenId', i)!, hungOn: text('ropeHungOn', i)! },
    };
  }
  return { results, ropes: wire.ropes, rejections: wire.rejections };
}
