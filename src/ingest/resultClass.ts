/**
 * The class of one lab result row: the result cell read and classified with the lab's cutoffs
 * (cached per cell text), then overruled by the lab's own words where they say more (a failed
 * internal control, a call of invalid, a blank Ct beside a call that is not negative). Pure.
 */
import type { Assay, CallClass, LabAssay, LabProfile, ReportStatusKind } from '../config/types.js';
import { classify, type Interpretation, type ValueReading } from '../interpret/classify.js';
import { readCt } from '../interpret/ct.js';
import { readSp } from '../interpret/sp.js';
import type { LabWords } from './labWords.js';

/** Result cell (Ct or S/P) read and classified, for one lab assay and one cell text (no control failure). */
export interface CtMeaning {
  reading: ValueReading;
  interpretation: Interpretation;
}

/**
 * The meaning of each result text per lab assay, for one file: an export repeats "Undetermined"
 * and a few hundred Ct values over its rows. Bounded by CT_MEANING_LIMIT.
 */
export interface CtMeaningCache {
  byLabAssay: Map<LabAssay, Map<string, CtMeaning>>;
  count: number;
}
const CT_MEANING_LIMIT = 20_000;

export function ctMeaningCache(): CtMeaningCache {
  return { byLabAssay: new Map(), count: 0 };
}

export function ctMeaning(
  cache: CtMeaningCache,
  ctRaw: string,
  lab: LabProfile,
  labAssay: LabAssay,
  assay: Assay,
): CtMeaning {
  let byText = cache.byLabAssay.get(labAssay);
  const cached = byText?.get(ctRaw);
  if (cached !== undefined) return cached;
  const reading = labAssay.measure === 'sp-ratio' ? readSp(ctRaw, lab) : readCt(ctRaw, lab, labAssay);
  const meaning = { reading, interpretation: classify(reading, labAssay, assay, undefined) };
  if (cache.count >= CT_MEANING_LIMIT) {
    cache.byLabAssay.clear();
    cache.count = 0;
    byText = undefined;
  }
  if (byText === undefined) cache.byLabAssay.set(labAssay, (byText = new Map()));
  byText.set(ctRaw, meaning);
  cache.count++;
  return meaning;
}

/**
 * The lab's words across the row's internal-control, call and status cells: a control failure
 * in any of them, the call from the call cell, the report state from the status cells (corrected
 * over preliminary over final). One per file, filled in place row after row.
 */
export interface RowWords {
  controlCell: string | null;
  controlFailed: string | undefined;
  status: ReportStatusKind | undefined;
  statusWord: string | undefined;
}

export function emptyRowWords(): RowWords {
  return { controlCell: null, controlFailed: undefined, status: undefined, statusWord: undefined };
}

const STATUS_RANK: Readonly<Record<ReportStatusKind, number>> = { final: 1, preliminary: 2, corrected: 3 };

/**
 * Reads the control, call and status cells of one row into `into` (reset first). Returns the
 * class the lab's call names, undefined when it names none.
 */
export function readRowWords(
  cells: readonly string[],
  labCall: string | null,
  control: string | null,
  words: LabWords,
  statusPositions: readonly number[],
  into: RowWords,
): CallClass | undefined {
  const callRead = labCall === null ? undefined : words.read(labCall);
  const controlRead = control === null ? undefined : words.read(control);
  into.controlCell = null;
  into.controlFailed = undefined;
  into.status = undefined;
  into.statusWord = undefined;
  if (controlRead?.controlFailed !== undefined) {
    into.controlFailed = controlRead.controlFailed;
    into.controlCell = control;
  } else if (callRead?.controlFailed !== undefined) {
    into.controlFailed = callRead.controlFailed;
    into.controlCell = labCall;
  }
  readStatusCells(cells, words, statusPositions, into);
  return callRead?.call;
}

function readStatusCells(
  cells: readonly string[],
  words: LabWords,
  statusPositions: readonly number[],
  into: RowWords,
): void {
  for (const position of statusPositions) {
    const cell = (cells[position] ?? '').trim();
    if (cell === '') continue;
    const read = words.read(cell);
    if (read.controlFailed !== undefined && into.controlFailed === undefined) {
      into.controlFailed = read.controlFailed;
      into.controlCell = cell;
    }
    if (
      read.status !== undefined &&
      (into.status === undefined || STATUS_RANK[read.status] > STATUS_RANK[into.status])
    ) {
      into.status = read.status;
      into.statusWord = read.statusWord;
    }
  }
}

/**
 * The row's class: the cutoffs' reading of the result cell unless the lab's words overrule it.
 * `hasCallColumn` says whether the lab profile names a call column at all.
 */
export function rowInterpretation(
  meaning: CtMeaning,
  ctRaw: string,
  labCall: string | null,
  labCallClass: CallClass | undefined,
  hasCallColumn: boolean,
  rowWords: RowWords,
  labAssay: LabAssay,
  assay: Assay,
): Interpretation {
  const reading = meaning.reading;
  if (rowWords.controlFailed !== undefined) {
    // The control failed: invalid (retest), never negative, whatever the Ct cell says.
    return classify(
      reading,
      labAssay,
      assay,
      rowWords.controlCell === rowWords.controlFailed
        ? rowWords.controlFailed
        : `"${rowWords.controlFailed}" in "${rowWords.controlCell}"`,
    );
  }
  if (labCallClass === 'invalid') {
    return {
      resultClass: 'invalid',
      reason: `the lab called it invalid ("${labCall}"): retest, not a result`,
      loadBand: undefined,
      load: 0,
    };
  }
  if (reading.kind === 'not-detected' && ctRaw === '' && hasCallColumn && labCallClass !== 'negative') {
    // A blank Ct is "not detected" for this lab only when its own call says negative: a blank
    // beside a call that is not a negative word (a pending row, a call ropewatch cannot read)
    // is no evidence of absence.
    return {
      resultClass: 'invalid',
      reason:
        labCall === null
          ? 'no Ct and no call from the lab: held as invalid, not read as not detected (ask the lab or retest)'
          : `no Ct, and the lab's call "${labCall}" is not one of its negative words: held as invalid, not read as not detected (ask the lab or retest)`,
      loadBand: undefined,
      load: 0,
    };
  }
  return meaning.interpretation;
}
