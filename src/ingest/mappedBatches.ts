/**
 * One file's data rows, read and mapped in bounded batches: bytes -> text (decode.ts) ->
 * records (csvRecords.ts) -> stored rows or coded refusals (resultRecords.ts, ropeSheetRecords.ts).
 * No store, no clock: the same generator runs on the main thread for small files and in a worker
 * for large ones.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import type { Assay, SampleIdCorrection, Site } from '../config/types.js';
import { CsvRecordReader, type CsvRecord } from './csvRecords.js';
import { TextChunkDecoder, type Sniffed } from './decode.js';
import type { FileKind } from './detect.js';
import type { ResultRow, RopeRow, RowList } from '../domain/records.js';
import { rowRejection, type RowRejection } from './errors.js';
import { plannedIdChecker } from './plannedIds.js';
import { mapResultRow, type ResultContext } from './resultRecords.js';
import { mapRopeRow, type RopeContext } from './ropeSheetRecords.js';
import { mapWideRow, wideLayout, type WideLayout } from './wideRows.js';

/** Rows per batch: what one store call takes, and what bounds memory while a file streams. */
export const BATCH_ROWS = 2000;
/**
 * Bytes read at a time: small enough that a chunk's text is an ordinary young object (V8 puts a
 * string over 128 KB straight into the old generation, where only a full collection frees it,
 * and the heap would grow with the file).
 */
const READ_CHUNK_BYTES = 64 * 1024;

/** What the store reads a batch's rows through: an array, or rows decoded on demand. */

export type { RowList };

export interface MappedBatch<Rows extends RowList<ResultRow> = RowList<ResultRow>> {
  results: Rows;
  ropes: RopeRow[];
  /** Rows refused before the store saw them (ragged rows, bad cells), with line and field. */
  rejections: RowRejection[];
}

/**
 * The bytes the file held when it was hashed. Reading stops at `bytes` and the bytes read are
 * hashed again: a file that a writer is still changing is caught, never stored as far as the
 * writer had got.
 */
export interface ExpectedContent {
  bytes: number;
  sha256: string;
}

/** The file's bytes differ from those hashed before reading: a writer is still at work on it. */
export class FileChangedError extends Error {
  override readonly name = 'FileChangedError';
}

export interface MappingInput {
  file: string;
  expected: ExpectedContent;
  fileName: string;
  sniffed: Sniffed;
  kind: FileKind;
  sites: readonly Site[];
  assayById: ReadonlyMap<string, Assay>;
  /** Confirmed sample-ID corrections that apply to this file (config/corrections.yaml). */
  corrections?: readonly SampleIdCorrection[];
}

/** What mapping a file's records needs besides the records: the file's kind and the configuration. */
export type MappingSetup = Pick<MappingInput, 'fileName' | 'kind' | 'sites' | 'assayById' | 'corrections'>;

/** Records in, batches out: the same for a CSV file's records and a workbook sheet's rows. */
export interface RecordTaker {
  take(record: CsvRecord): void;
  /** A row refused before it could be mapped (a workbook cell without its value). */
  refuse(rejection: RowRejection): void;
  /** Rows taken since the last batch. */
  size(): number;
  /** The rows taken since the last batch, as a batch; the next one starts empty. */
  batch(): MappedBatch<ResultRow[]>;
}

/** One file's row mapping: its contexts are built once, then each record is mapped into the current batch. */
export function recordTaker(input: MappingSetup): RecordTaker {
  const { kind } = input;
  const plannedIdCheck = plannedIdChecker(input);
  const width = kind.header.length;
  const resultContext: ResultContext | undefined =
    kind.kind === 'results'
      ? {
          fileName: input.fileName,
          lab: kind.lab,
          columnIndex: kind.columnIndex,
          assayById: input.assayById,
          sites: input.sites,
          plannedIdCheck,
        }
      : undefined;
  const ropeContext: RopeContext = {
    fileName: input.fileName,
    columnIndex: kind.columnIndex,
    columnNames: kind.kind === 'ropes' ? kind.columnNames : undefined,
    sites: input.sites,
    plannedIdCheck,
  };
  const wide: WideLayout | undefined =
    resultContext !== undefined && resultContext.lab.layout === 'wide'
      ? wideLayout(resultContext, kind.header)
      : undefined;
  let batch: MappedBatch<ResultRow[]> = { results: [], ropes: [], rejections: [] };
  const size = () => batch.results.length + batch.ropes.length + batch.rejections.length;

  const take = ({ cells, line }: CsvRecord): void => {
    if (cells.length === 1 && cells[0]!.trim() === '') return;
    if (cells.length !== width) {
      // Trailing empty cells (a common export habit) do not make a row ragged.
      const trimmed = cells.length > width && cells.slice(width).every((cell) => cell.trim() === '');
      if (!trimmed) {
        batch.rejections.push(
          rowRejection({
            code: 'ragged-row',
            line,
            value: cells.join(kind.delimiter),
            detail: `the row has ${cells.length} fields, the header ${width}`,
          }),
        );
        return;
      }
    }
    if (wide) {
      mapWideRow(cells, line, wide, batch.results, batch.rejections);
    } else if (resultContext) {
      const outcome = mapResultRow(cells, line, resultContext);
      if (outcome.ok) batch.results.push(outcome.row);
      else batch.rejections.push(outcome.rejection);
    } else {
      const outcome = mapRopeRow(cells, line, ropeContext);
      if (outcome.ok) batch.ropes.push(outcome.row);
      else batch.rejections.push(outcome.rejection);
    }
  };
  return {
    take,
    refuse: (rejection) => batch.rejections.push(rejection),
    size,
    batch: () => {
      const full = batch;
      batch = { results: [], ropes: [], rejections: [] };
      return full;
    },
  };
}

/**
 * Yields the file's rows in batches of about `batchRows`.
 * @throws EncodingError, UnclosedQuoteError, RecordTooLongError (the file cannot be trusted past that line);
 *   FileChangedError when the bytes read are not the bytes expected
 */
export async function* mappedBatches(
  input: MappingInput,
  batchRows = BATCH_ROWS,
): AsyncGenerator<MappedBatch<ResultRow[]>> {
  const { kind } = input;
  const taker = recordTaker(input);
  const decoder = new TextChunkDecoder(input.sniffed);
  const reader = new CsvRecordReader(kind.delimiter, kind.headerLine);
  const records: CsvRecord[] = [];
  const takeAll = function* (): Generator<MappedBatch<ResultRow[]>> {
    for (const record of records) {
      taker.take(record);
      if (taker.size() >= batchRows) yield taker.batch();
    }
    records.length = 0;
  };
  const parsedHash = createHash('sha256');
  let parsedBytes = 0;
  const { expected } = input;
  // Bytes appended after hashing are not read (at least one byte is asked for, so that a file
  // hashed empty and written to since is caught).
  const readUpTo = Math.max(expected.bytes, 1);
  const file = await fs.promises.open(input.file, 'r');
  try {
    // One buffer for every chunk: each chunk is hashed, and decoded to text (which copies), before
    // the next is read into it.
    const buffer = Buffer.allocUnsafe(READ_CHUNK_BYTES);
    while (parsedBytes < readUpTo) {
      const { bytesRead } = await file.read(buffer, 0, Math.min(READ_CHUNK_BYTES, readUpTo - parsedBytes), parsedBytes);
      if (bytesRead === 0) break;
      const chunk = buffer.subarray(0, bytesRead);
      parsedHash.update(chunk);
      parsedBytes += bytesRead;
      reader.push(decoder.decode(chunk), records);
      yield* takeAll();
    }
  } finally {
    await file.close();
  }
  if (parsedBytes !== expected.bytes || parsedHash.digest('hex') !== expected.sha256) {
    throw new FileChangedError(
      parsedBytes !== expected.bytes
        ? `${input.fileName} changed while it was read (${expected.bytes} bytes when hashed, ${parsedBytes} read)`
        : `${input.fileName} changed while it was read (its bytes no longer match the hash taken before reading)`,
    );
  }
  reader.push(decoder.end(), records);
  reader.end(records);
  yield* takeAll();
  if (taker.size() > 0) yield taker.batch();
}
