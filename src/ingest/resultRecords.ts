/**
 * One lab-export record to one result row, or to a refusal naming the line and field. Pure: all
 * context (lab profile, sites, header index, the planned-ID check) is passed in.
 */
import type { Assay, LabAssay, LabProfile, Site } from '../config/types.js';
import { foldToken } from '../util/fold.js';
import { rowRejection, type RowRejection, type RowRejectionOptions } from './errors.js';
import { labWords, type LabWords } from './labWords.js';
import { cellAt, contentKey, normaliseSampleId, parseDateCell, type PlannedIdCheck } from './recordCells.js';
import {
  ctMeaning,
  ctMeaningCache,
  emptyRowWords,
  readRowWords,
  rowInterpretation,
  type CtMeaningCache,
  type RowWords,
} from './resultClass.js';
import type { ResultRow, RopeLocation } from '../domain/records.js';
import type { RowOutcome } from './rowTypes.js';
import { locationFromPattern, type EncodedLocation } from './sampleLocation.js';

export interface ResultContext {
  fileName: string;
  lab: LabProfile;
  /** Folded header name to column position. */
  columnIndex: ReadonlyMap<string, number>;
  assayById: ReadonlyMap<string, Assay>;
  sites: readonly Site[];
  plannedIdCheck: PlannedIdCheck;
}

type ColumnName = keyof LabProfile['columns'];
type ColumnPositions = Readonly<Record<ColumnName, number | undefined>>;
type Refused = { ok: false; rejection: RowRejection };

/**
 * What one file's rows share, resolved once per file (per context) rather than once per row:
 * header positions, the lab's words, and the meaning of each result text per lab assay.
 */
interface FileMemo {
  positions: ColumnPositions;
  /** Positions of the lab's status columns that this file has. */
  statusPositions: readonly number[];
  words: LabWords;
  /** Scratch for one row's words, reused row after row. */
  rowWords: RowWords;
  ctMeanings: CtMeaningCache;
  /** The last sample ID cell and its normalised form: a sample's assays come on neighbouring rows. */
  lastRawSample: string;
  lastNormalised: string;
  /** The collection and report date columns, each with its last cell read: a round's rows repeat them. */
  collectedDates: DateColumn;
  reportedDates: DateColumn;
  /** The last sample ID placed by pattern. */
  lastLocated: { sampleId: string; fallbackDate: string | undefined; located: EncodedLocation } | undefined;
}
const memoByContext = new WeakMap<ResultContext, FileMemo>();

/**
 * A date column: null when the lab has none or left it blank, undefined when it is not a date.
 * The last cell's text and reading are kept for the next row.
 */
class DateColumn {
  private lastText = '';
  private lastDate: string | null | undefined = null;

  read(cells: readonly string[], position: number | undefined, dateFormat: string): string | null | undefined {
    const text = cellAt(cells, position);
    if (text === undefined || text === '') return null;
    if (text !== this.lastText) {
      this.lastDate = parseDateCell(text, dateFormat);
      this.lastText = text;
    }
    return this.lastDate;
  }
}

function fileMemo(context: ResultContext): FileMemo {
  let memo = memoByContext.get(context);
  if (!memo) {
    const entries = Object.entries(context.lab.columns).map(([name, column]) => [
      name,
      column === undefined ? undefined : context.columnIndex.get(foldToken(column)),
    ]);
    const statusPositions = [
      ...new Set(
        context.lab.statusColumns
          .map((column) => context.columnIndex.get(foldToken(column)))
          .filter((at): at is number => at !== undefined),
      ),
    ];
    memo = {
      positions: Object.fromEntries(entries) as Record<ColumnName, number | undefined>,
      statusPositions,
      words: labWords(context.lab),
      rowWords: emptyRowWords(),
      ctMeanings: ctMeaningCache(),
      lastRawSample: '',
      lastNormalised: '',
      lastLocated: undefined,
      collectedDates: new DateColumn(),
      reportedDates: new DateColumn(),
    };
    memoByContext.set(context, memo);
  }
  return memo;
}

function locateOnce(
  memo: FileMemo,
  sampleId: string,
  sites: readonly Site[],
  fallbackDate: string | undefined,
): EncodedLocation {
  const last = memo.lastLocated;
  if (last !== undefined && last.sampleId === sampleId && last.fallbackDate === fallbackDate) return last.located;
  const located = locationFromPattern(sampleId, sites, fallbackDate);
  memo.lastLocated = { sampleId, fallbackDate, located };
  return located;
}

function refuse(options: RowRejectionOptions): Refused {
  return { ok: false, rejection: rowRejection(options) };
}

/** Which sample and which assay a record reports on. */
interface RecordSubject {
  rawSample: string;
  sampleId: string;
  /** The sample ID as written, when a confirmed correction replaced it. */
  sampleIdAsWritten: string | null;
  labAssayName: string;
  /** The assay name as compared (foldToken), also part of the content key. */
  foldedAssay: string;
  labAssay: LabAssay;
  assay: Assay;
}

/** The sample ID (checked against the planned-ID grammar) and the lab's assay of one record. */
function readSubject(
  cells: readonly string[],
  line: number,
  context: ResultContext,
  memo: FileMemo,
): RecordSubject | Refused {
  const at = memo.positions;
  const { lab } = context;
  const columns = lab.columns;
  const rawSample = cellAt(cells, at.sampleId) ?? '';
  if (rawSample === '')
    return refuse({
      code: 'missing-value',
      line,
      field: columns.sampleId,
      value: rawSample,
      detail: 'the sample ID is empty',
    });
  if (rawSample !== memo.lastRawSample) {
    memo.lastNormalised = normaliseSampleId(rawSample);
    memo.lastRawSample = rawSample;
  }
  const normalised = memo.lastNormalised;
  const checked = context.plannedIdCheck(normalised, line);
  if (checked.kind === 'bad-check') {
    return refuse({
      code: 'bad-check-character',
      line,
      field: columns.sampleId,
      value: rawSample,
      detail: `sample ID ${rawSample} fails its check character: probably mistyped on the tube or at the lab`,
    });
  }
  const sampleId = checked.kind === 'planned' || checked.kind === 'corrected' ? checked.canonical : normalised;
  const labAssayName = cellAt(cells, at.assay) ?? '';
  if (labAssayName === '')
    return refuse({
      code: 'missing-value',
      line,
      field: columns.assay,
      value: labAssayName,
      detail: 'the assay is empty',
    });
  const foldedAssay = foldToken(labAssayName);
  const labAssay = lab.assays.get(foldedAssay);
  if (!labAssay) {
    return refuse({
      code: 'unknown-assay',
      line,
      field: columns.assay,
      value: labAssayName,
      detail: `lab ${lab.id} profile has no assay "${labAssayName}"; add it under assays: with its cutoffs (an antibody ELISA reporting S/P ratios maps to an assay with measure: sp-ratio in assays.yaml, never to a PCR assay, which would read its S/P as a Ct)`,
    });
  }
  return {
    rawSample,
    sampleId,
    sampleIdAsWritten: checked.kind === 'corrected' ? checked.written : null,
    labAssayName,
    foldedAssay,
    labAssay,
    assay: context.assayById.get(labAssay.assayId)!,
  };
}

function badDate(line: number, field: string | undefined, text: string, dateFormat: string): Refused {
  return refuse({
    code: 'bad-date',
    line,
    field,
    value: text,
    detail: `"${text}" does not match date format ${dateFormat}`,
  });
}

/** The refusal for a sample ID whose pattern names no usable place, or undefined when it is fine. */
function locationRefusal(
  located: EncodedLocation,
  line: number,
  field: string,
  rawSample: string,
): Refused | undefined {
  if (located === 'no-date') {
    return refuse({
      code: 'no-collection-date',
      line,
      field,
      value: rawSample,
      detail: `sample ID ${rawSample} names its pen but no date, and the row has no collection date`,
    });
  }
  if (located === 'bad-date') {
    return refuse({
      code: 'bad-date',
      line,
      field,
      value: rawSample,
      detail: `sample ID ${rawSample} carries a date that does not exist (yyyymmdd expected)`,
    });
  }
  if (located !== undefined && 'unknownPen' in located) {
    return refuse({
      code: 'unknown-pen',
      line,
      field,
      value: rawSample,
      detail: `sample ID ${rawSample} names pen "${located.unknownPen}", which barn ${located.barnId} on site ${located.siteId} does not have (check the tube label, or the barn layout in sites.yaml)`,
    });
  }
  return undefined;
}

/** The content key of what the lab reported for a sample and assay (see contentKey); `foldedAssay` is the assay name folded (foldToken). */
function reportKey(
  foldedAssay: string,
  ctRaw: string,
  labCall: string | null,
  accession: string | null,
  reportedOn: string | null,
  reportStatus: string | null,
  control: string | null,
): number {
  return contentKey([
    foldedAssay,
    ctRaw,
    labCall ?? '',
    accession ?? '',
    reportedOn ?? '',
    reportStatus ?? '',
    control ?? '',
  ]);
}

/** Maps one lab-export record. `line` is the 1-based line where the record starts. */
export function mapResultRow(cells: readonly string[], line: number, context: ResultContext): RowOutcome<ResultRow> {
  const { lab } = context;
  const columns = lab.columns;
  const memo = fileMemo(context);
  const at = memo.positions;

  const subject = readSubject(cells, line, context, memo);
  if ('rejection' in subject) return subject;
  const { rawSample, sampleId, labAssayName, labAssay, assay } = subject;

  const collectedOn = memo.collectedDates.read(cells, at.collectedOn, lab.dateFormat);
  if (collectedOn === undefined)
    return badDate(line, columns.collectedOn, cellAt(cells, at.collectedOn)!, lab.dateFormat);
  const reportedOn = memo.reportedDates.read(cells, at.reportedOn, lab.dateFormat);
  if (reportedOn === undefined) return badDate(line, columns.reportedOn, cellAt(cells, at.reportedOn)!, lab.dateFormat);

  const ctRaw = cellAt(cells, at.result) ?? '';
  const meaning = ctMeaning(memo.ctMeanings, ctRaw, lab, labAssay, assay);
  const reading = meaning.reading;
  if (reading.kind === 'error')
    return refuse({ code: reading.code, line, field: columns.result, value: ctRaw, detail: reading.detail });

  const labCall = cellAt(cells, at.call) || null;
  const control = cellAt(cells, at.internalControl) || null;
  const rowWords = memo.rowWords;
  const labCallClass = readRowWords(cells, labCall, control, memo.words, memo.statusPositions, rowWords);
  const interpretation = rowInterpretation(
    meaning,
    ctRaw,
    labCall,
    labCallClass,
    at.call !== undefined,
    rowWords,
    labAssay,
    assay,
  );
  const reportStatus = cellAt(cells, at.reportStatus) || null;
  const accession = cellAt(cells, at.accession) || null;

  const located = locateOnce(memo, sampleId, context.sites, collectedOn ?? undefined);
  const refused = locationRefusal(located, line, columns.sampleId, rawSample);
  if (refused !== undefined) return refused;

  return {
    ok: true,
    row: {
      line,
      labId: lab.id,
      sampleId,
      assayId: labAssay.assayId,
      labAssay: labAssayName,
      measure: labAssay.measure,
      ct: reading.kind === 'detected' ? reading.ct : null,
      sp: reading.kind === 'sp' ? reading.sp : null,
      ctRaw,
      labCall,
      accession,
      collectedOn,
      reportedOn,
      reportStatus,
      control,
      resultClass: interpretation.resultClass,
      reason: interpretation.reason,
      loadBand: interpretation.loadBand ?? null,
      positiveBelow: labAssay.measure === 'ct' ? labAssay.positiveBelow : null,
      suspectBelow: labAssay.measure === 'ct' ? labAssay.suspectBelow : null,
      cycleLimit: labAssay.measure === 'ct' ? labAssay.cycleLimit : null,
      positiveAtOrAbove: labAssay.measure === 'sp-ratio' ? labAssay.positiveAtOrAbove : null,
      suspectAtOrAbove: labAssay.measure === 'sp-ratio' ? (labAssay.suspectAtOrAbove ?? null) : null,
      markedReissue: rowWords.status === 'corrected',
      statusKind: rowWords.status ?? null,
      statusWord: rowWords.statusWord ?? null,
      labCallClass: labCallClass ?? null,
      callDiffers: labCallClass !== undefined && labCallClass !== interpretation.resultClass,
      sampleIdAsWritten: subject.sampleIdAsWritten,
      contentKey: reportKey(subject.foldedAssay, ctRaw, labCall, accession, reportedOn, reportStatus, control),
      // locationRefusal let through only a place or nothing.
      encodedRope: located as RopeLocation | undefined,
    },
  };
}
