/**
 * How a stored result was read: the lab's assay name and words (call, report status, control,
 * load band), the class and status found from them, and the cutoffs in effect. A lab export
 * repeats a handful of these on every row (one per assay and class, as a rule), so the store
 * keeps each once in `readings` and a result names its reading by id, like its reason: a result
 * row half as wide, and about a third less of SQLite's work to store it. The `results_read` view
 * joins them back under the columns a result had before.
 */
import type { ResultRow, StoredResult } from '../domain/records.js';

/** The columns of `results` in table order (both stores): a result's own values and its reading. */
export const RESULT_COLUMNS = [
  'id',
  'file_id',
  'line',
  'sample',
  'lab_id',
  'assay_id',
  'ct',
  'ct_raw',
  'accession',
  'collected_on',
  'reported_on',
  'reason',
  'content_key',
  'sample_id_as_written',
  'sp',
  'reading',
] as const;

/** The columns of `readings` after its id, in table order (both stores). */
export const READING_COLUMNS = [
  'lab_assay',
  'measure',
  'class',
  'lab_call',
  'lab_call_class',
  'call_differs',
  'report_status',
  'status_kind',
  'status_word',
  'control',
  'load_band',
  'positive_below',
  'suspect_below',
  'cycle_limit',
  'positive_at_or_above',
  'suspect_at_or_above',
] as const;

export type ReadingValue = string | number | null;

/** What a stored result takes from its reading, as the readers give it: the Ct cutoffs null for an S/P reading. */
export type ReadingFields = Pick<
  StoredResult,
  | 'measure'
  | 'labCall'
  | 'resultClass'
  | 'loadBand'
  | 'positiveBelow'
  | 'suspectBelow'
  | 'cycleLimit'
  | 'positiveAtOrAbove'
  | 'suspectAtOrAbove'
  | 'callDiffers'
>;

/**
 * A result's own values as the readers have them, in column order: id, file, lab, sample ID,
 * assay, Ct, S/P, the result as written, case number, collected, reported (the SQLite reader's
 * row goes on with the reason's and the reading's ids).
 */
export type OwnResultValues = [
  number,
  number,
  string,
  string,
  string,
  number | null,
  number | null,
  string,
  string | null,
  string | null,
  string | null,
];

/** OwnResultValues, and whatever a reader's row holds after them. */
export type OwnResultCells = readonly [...OwnResultValues, ...unknown[]];

/**
 * The stored result from its own values, its reason's text and its reading, in the field order
 * the analysis and its tests have always seen: one place for both readers.
 */
export function storedResult(cells: OwnResultCells, reason: string, reading: ReadingFields): StoredResult {
  return {
    id: cells[0],
    fileId: cells[1],
    labId: cells[2],
    sampleId: cells[3],
    assayId: cells[4],
    measure: reading.measure,
    ct: cells[5],
    sp: cells[6],
    ctRaw: cells[7],
    labCall: reading.labCall,
    accession: cells[8],
    collectedOn: cells[9],
    reportedOn: cells[10],
    resultClass: reading.resultClass,
    reason,
    loadBand: reading.loadBand,
    positiveBelow: reading.positiveBelow,
    suspectBelow: reading.suspectBelow,
    cycleLimit: reading.cycleLimit,
    positiveAtOrAbove: reading.positiveAtOrAbove,
    suspectAtOrAbove: reading.suspectAtOrAbove,
    callDiffers: reading.callDiffers,
  };
}

/**
 * A row's reading as the values of READING_COLUMNS. An S/P row has no Ct cutoffs: 0 in those
 * NOT NULL columns (as results held them since migration 5).
 */
export function readingValues(row: ResultRow): ReadingValue[] {
  return [
    row.labAssay,
    row.measure,
    row.resultClass,
    row.labCall,
    row.labCallClass,
    row.callDiffers ? 1 : 0,
    row.reportStatus,
    row.statusKind,
    row.statusWord,
    row.control,
    row.loadBand,
    row.positiveBelow ?? 0,
    row.suspectBelow ?? 0,
    row.cycleLimit ?? 0,
    row.positiveAtOrAbove,
    row.suspectAtOrAbove,
  ];
}

/** Whether two rows were read alike (every field READING_COLUMNS holds). */
function readAlike(a: ResultRow, b: ResultRow): boolean {
  return (
    a.resultClass === b.resultClass &&
    a.labCall === b.labCall &&
    a.labAssay === b.labAssay &&
    a.loadBand === b.loadBand &&
    a.labCallClass === b.labCallClass &&
    a.callDiffers === b.callDiffers &&
    a.reportStatus === b.reportStatus &&
    a.statusKind === b.statusKind &&
    a.statusWord === b.statusWord &&
    a.control === b.control &&
    a.measure === b.measure &&
    a.positiveBelow === b.positiveBelow &&
    a.suspectBelow === b.suspectBelow &&
    a.cycleLimit === b.cycleLimit &&
    a.positiveAtOrAbove === b.positiveAtOrAbove &&
    a.suspectAtOrAbove === b.suspectAtOrAbove
  );
}

/** Readings remembered by their values (a store holds tens to hundreds). */
const READINGS_REMEMBERED = 10_000;

/**
 * The id of each row's reading, stored the first time it is met (through `findOrCreate`, which
 * finds a stored reading with the same values or stores it). Rows of one assay mostly repeat the
 * reading of the row before, so that row is compared field by field before any key is formed.
 */
export class ReadingIds {
  private readonly byValues = new Map<string, number>();
  /** The last row met per lab assay name, and its reading id. */
  private readonly lastByAssay = new Map<string, { row: ResultRow; id: number }>();

  constructor(private readonly findOrCreate: (values: readonly ReadingValue[]) => number) {}

  idOf(row: ResultRow): number {
    const last = this.lastByAssay.get(row.labAssay);
    if (last !== undefined && readAlike(last.row, row)) return last.id;
    const values = readingValues(row);
    const key = JSON.stringify(values);
    let id = this.byValues.get(key);
    if (id === undefined) {
      id = this.findOrCreate(values);
      if (this.byValues.size >= READINGS_REMEMBERED) this.byValues.clear();
      this.byValues.set(key, id);
    }
    if (last === undefined) this.lastByAssay.set(row.labAssay, { row, id });
    else {
      last.row = row;
      last.id = id;
    }
    return id;
  }

  /** After a rollback: readings first stored by the file are gone with it. */
  forget(): void {
    this.byValues.clear();
    this.lastByAssay.clear();
  }
}
