/**
 * One parsed CSV record to one stored row, or to a refusal naming the line and field. Pure: all
 * context (lab profile, sites, header index, the planned-ID check) is passed in.
 */
import { hash } from 'node:crypto';
// Subpath imports: the package index loads every date-fns function (slow to start a worker).
import { format as formatDate } from 'date-fns/format';
import { isValid } from 'date-fns/isValid';
import { parse as parseDate } from 'date-fns/parse';
import { foldToken } from '../util/fold.js';
import { canonicalPenKey } from '../domain/layout.js';
import { compilePatternSet, type PatternSet } from '../config/pattern.js';
import type { Assay, LabAssay, LabProfile, ReportStatusKind, Site } from '../config/types.js';
import { classify, type Interpretation, type ValueReading } from '../interpret/classify.js';
import { readCt } from '../interpret/ct.js';
import { readSp } from '../interpret/sp.js';
import { rowRejection, type RejectionCode, type RowRejection } from './errors.js';
import { labWords, type LabWords } from './labWords.js';
import type { ResultRow, RopeLocation, RopeRow } from '../domain/records.js';

export type { ResultRow, RopeLocation, RopeRow };

/** How a sample ID is compared: capitals, no spaces. */
export function normaliseSampleId(raw: string): string {
  return raw.replace(/\s+/g, '').toUpperCase();
}

export { canonicalPenKey };

/**
 * Checks a sample ID against the planned-ID grammar: `planned` with its canonical spelling,
 * `corrected` when a person confirmed (config/corrections.yaml) that the ID as written on this
 * line meant another, `bad-check` when it has the planned shape for a configured site but a
 * wrong check character (mistyped), `other` for any other ID (a lab's or a farm's own numbering).
 */
export type PlannedIdCheck = (
  sampleId: string,
  line: number,
) =>
  | { kind: 'planned'; canonical: string }
  | { kind: 'corrected'; canonical: string; written: string }
  | { kind: 'bad-check' }
  | { kind: 'other' };

const ISO_DATE = 'yyyy-MM-dd';
const REFERENCE_DATE = new Date(2000, 0, 1);

const ISO_DAY = /^(\d{4})-(\d{2})-(\d{2})$/;
/** Parsed date cells by format and text: exports repeat a handful of dates over thousands of rows. */
const dateCache = new Map<string, string | null>();
const DATE_CACHE_LIMIT = 10_000;

/** Parses a date cell with the profile's format, accepting ISO dates too. Returns yyyy-MM-dd or undefined. */
export function parseDateCell(text: string, dateFormat: string): string | undefined {
  const key = `${dateFormat}\u001f${text}`;
  const cached = dateCache.get(key);
  if (cached !== undefined) return cached ?? undefined;
  const parsed = parseDateUncached(text, dateFormat);
  if (dateCache.size >= DATE_CACHE_LIMIT) dateCache.clear();
  dateCache.set(key, parsed ?? null);
  return parsed;
}

function parseDateUncached(text: string, dateFormat: string): string | undefined {
  const trimmed = text.trim();
  const iso = ISO_DAY.exec(trimmed);
  if (iso) {
    // yyyy-MM-dd needs no parser: check the calendar with Date (months 1-12, real days, leap years).
    const [year, month, day] = [Number(iso[1]), Number(iso[2]), Number(iso[3])];
    const date = new Date(Date.UTC(year, month - 1, day));
    const real = date.getUTCFullYear() === year && date.getUTCMonth() === month - 1 && date.getUTCDate() === day;
    return real && year >= 1990 && year <= 2200 ? trimmed : undefined;
  }
  if (trimmed === '') return undefined;
  for (const candidate of [
    dateFormat,
    ISO_DATE,
    `${ISO_DATE}'T'HH:mm:ss`,
    `${ISO_DATE} HH:mm:ss`,
    `${ISO_DATE} HH:mm`,
  ]) {
    const parsed = parseDate(trimmed, candidate, REFERENCE_DATE);
    if (isValid(parsed) && parsed.getFullYear() >= 1990 && parsed.getFullYear() <= 2200)
      return formatDate(parsed, ISO_DATE);
  }
  // Date-times written with the profile's date format and a time after it.
  const firstPart = trimmed.split(/[ T]/)[0]!;
  if (firstPart !== trimmed) return parseDateUncached(firstPart, dateFormat);
  return undefined;
}

export interface ResultContext {
  fileName: string;
  lab: LabProfile;
  /** Folded header name to column position. */
  columnIndex: ReadonlyMap<string, number>;
  assayById: ReadonlyMap<string, Assay>;
  sites: readonly Site[];
  plannedIdCheck: PlannedIdCheck;
}

export type RowOutcome<T> = { ok: true; row: T } | { ok: false; rejection: RowRejection };

type ColumnName = keyof LabProfile['columns'];
type ColumnPositions = Readonly<Record<ColumnName, number | undefined>>;

/** Result cell (Ct or S/P) read and classified, for one lab assay and one cell text (no control failure). */
interface CtMeaning {
  reading: ValueReading;
  interpretation: Interpretation;
}

/**
 * What one file's rows share, resolved once per file (per context) rather than once per row:
 * header positions, and the meaning of each Ct text per lab assay (an export repeats
 * "Undetermined" and a few hundred Ct values over its rows). Bounded.
 */
interface FileMemo {
  positions: ColumnPositions;
  /** Positions of the lab's status columns that this file has. */
  statusPositions: readonly number[];
  words: LabWords;
  /** Scratch for one row's words, reused row after row. */
  rowWords: RowWords;
  ctMeanings: Map<LabAssay, Map<string, CtMeaning>>;
  ctMeaningCount: number;
  /** The last sample ID placed by pattern: a sample's assays come on neighbouring rows. */
  lastLocated:
    | { sampleId: string; fallbackDate: string | undefined; located: ReturnType<typeof locationFromPattern> }
    | undefined;
}
const CT_MEANING_LIMIT = 20_000;
const memoByContext = new WeakMap<ResultContext, FileMemo>();

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
      rowWords: { controlCell: null, controlFailed: undefined, status: undefined, statusWord: undefined },
      ctMeanings: new Map(),
      ctMeaningCount: 0,
      lastLocated: undefined,
    };
    memoByContext.set(context, memo);
  }
  return memo;
}

/** The sites with a sample pattern, and one automaton that tells which of their patterns match an ID. */
interface PatternSites {
  sites: readonly Site[];
  set: PatternSet;
}
const patternSitesOf = new WeakMap<readonly Site[], PatternSites>();

function patternSites(sites: readonly Site[]): PatternSites {
  let found = patternSitesOf.get(sites);
  if (found === undefined) {
    const withPattern = sites.filter((site) => site.samplePattern !== undefined);
    // Built from the patterns' sources, so it works as well on sites that crossed to the parse worker.
    found = { sites: withPattern, set: compilePatternSet(withPattern.map((site) => site.samplePattern!)) };
    patternSitesOf.set(sites, found);
  }
  return found;
}

/** A sample ID that a site's pattern reads as a barn of that site and a pen the barn's layout lacks. */
export interface UnknownEncodedPen {
  unknownPen: string;
  siteId: string;
  barnId: string;
}

type EncodedLocation = RopeLocation | UnknownEncodedPen | 'no-date' | 'bad-date' | undefined;

/**
 * Finds the site, barn and pen a sample ID encodes through a site's configured pattern. The pen
 * is the layout's own label (`07` and `7` name pen 7), so two spellings of one pen are one place.
 * A pen the barn lacks is returned as such (when no other site places the ID), never read as
 * "no location": the label names a place, and that place does not exist.
 */
export function locationFromPattern(
  sampleId: string,
  sites: readonly Site[],
  fallbackDate: string | undefined,
): EncodedLocation {
  // One pass over the ID finds the sites whose pattern matches (usually none or one); only
  // those are asked for their groups.
  const candidates = patternSites(sites);
  const matching = candidates.set.matching(sampleId);
  if (matching.length === 0) return undefined;
  if (matching.length === 1) return locationInSite(candidates.sites[matching[0]!]!, sampleId, fallbackDate, sites);
  // Several sites' patterns match: exports come a site at a time, so the site that matched
  // last goes first, then the others in configuration order.
  const matched = [...matching].sort((a, b) => a - b).map((index) => candidates.sites[index]!);
  const last = lastPatternSite.get(sites);
  let unknown: UnknownEncodedPen | undefined;
  for (const site of last !== undefined && matched.includes(last)
    ? [last, ...matched.filter((other) => other !== last)]
    : matched) {
    const located = locationInSite(site, sampleId, fallbackDate, sites);
    if (located !== undefined && typeof located === 'object' && 'unknownPen' in located) unknown ??= located;
    else if (located !== undefined) return located;
  }
  return unknown;
}
const lastPatternSite = new WeakMap<readonly Site[], Site>();

function locationInSite(
  site: Site,
  sampleId: string,
  fallbackDate: string | undefined,
  sites: readonly Site[],
): EncodedLocation {
  const groups = site.samplePattern?.exec(sampleId);
  // An optional group (barn or pen) that took no part in the match places nothing.
  const barnText = groups?.['barn'];
  const penText = groups?.['pen'];
  if (barnText === undefined || penText === undefined) return undefined;
  const barn = site.barnById.get(barnText.toUpperCase());
  if (!barn) return undefined;
  const pen = barn.penByKey.get(canonicalPenKey(penText));
  if (!pen) return { unknownPen: penText, siteId: site.id, barnId: barn.id };
  const dateText = groups?.['date'];
  const encodedDate = dateText ? parseDateCell(dateText, 'yyyyMMdd') : undefined;
  // A date the tube label claims but the calendar lacks (20261345) is a mistyped label, not a reason to guess.
  if (dateText && encodedDate === undefined) return 'bad-date';
  const hungOn = encodedDate ?? fallbackDate;
  if (!hungOn) return 'no-date';
  if (lastPatternSite.get(sites) !== site) lastPatternSite.set(sites, site);
  return { siteId: site.id, barnId: barn.id, penId: pen.id, hungOn };
}

function locateOnce(
  memo: FileMemo,
  sampleId: string,
  sites: readonly Site[],
  fallbackDate: string | undefined,
): ReturnType<typeof locationFromPattern> {
  const last = memo.lastLocated;
  if (last !== undefined && last.sampleId === sampleId && last.fallbackDate === fallbackDate) return last.located;
  const located = locationFromPattern(sampleId, sites, fallbackDate);
  memo.lastLocated = { sampleId, fallbackDate, located };
  return located;
}

/** A trimmed cell, or undefined when the lab has no such column. */
function cellAt(cells: readonly string[], position: number | undefined): string | undefined {
  return position === undefined ? undefined : (cells[position] ?? '').trim();
}

function refuse(
  code: RejectionCode,
  line: number,
  field: string | undefined,
  value: string | undefined,
  detail?: string,
): { ok: false; rejection: RowRejection } {
  return { ok: false, rejection: rowRejection(code, line, field, value, detail) };
}

/** A date column: null when the lab has none or left it blank, undefined when it is not a date. */
function dateAt(cells: readonly string[], position: number | undefined, dateFormat: string): string | null | undefined {
  const text = cellAt(cells, position);
  return text === undefined || text === '' ? null : parseDateCell(text, dateFormat);
}

function ctMeaning(memo: FileMemo, ctRaw: string, lab: LabProfile, labAssay: LabAssay, assay: Assay): CtMeaning {
  let byText = memo.ctMeanings.get(labAssay);
  const cached = byText?.get(ctRaw);
  if (cached !== undefined) return cached;
  const reading = labAssay.measure === 'sp-ratio' ? readSp(ctRaw, lab) : readCt(ctRaw, lab, labAssay);
  const meaning = { reading, interpretation: classify(reading, labAssay, assay, undefined) };
  if (memo.ctMeaningCount >= CT_MEANING_LIMIT) {
    memo.ctMeanings.clear();
    memo.ctMeaningCount = 0;
    byText = undefined;
  }
  if (byText === undefined) memo.ctMeanings.set(labAssay, (byText = new Map()));
  byText.set(ctRaw, meaning);
  memo.ctMeaningCount++;
  return meaning;
}

/**
 * The lab's words across the row's internal-control, call and status cells: a control failure
 * in any of them, the call from the call cell, the report state from the status cells (corrected
 * over preliminary over final). One per file (FileMemo), filled in place row after row.
 */
interface RowWords {
  controlCell: string | null;
  controlFailed: string | undefined;
  status: ReportStatusKind | undefined;
  statusWord: string | undefined;
}

const STATUS_RANK: Readonly<Record<ReportStatusKind, number>> = { final: 1, preliminary: 2, corrected: 3 };

function readStatusCells(cells: readonly string[], memo: FileMemo, into: RowWords): void {
  for (const position of memo.statusPositions) {
    const cell = (cells[position] ?? '').trim();
    if (cell === '') continue;
    const read = memo.words.read(cell);
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
 * The key that makes a re-sent report idempotent: 52 bits of SHA-1 over what the lab reported
 * (assay name, Ct, call, case, report date, status, control). Stored beside sample, assay and lab
 * under one UNIQUE index, so a clash would need two different reports of the same sample and
 * assay from the same lab to share 52 bits (about 1 in 4.5e15 for a pair).
 */
export function contentKey(parts: readonly string[]): number {
  return Number.parseInt(hash('sha1', parts.join('\u001f'), 'hex').slice(0, 13), 16);
}

/** Maps one lab-export record. `line` is the 1-based line where the record starts. */
export function mapResultRow(cells: readonly string[], line: number, context: ResultContext): RowOutcome<ResultRow> {
  const { lab } = context;
  const columns = lab.columns;
  const memo = fileMemo(context);
  const at = memo.positions;

  const rawSample = cellAt(cells, at.sampleId) ?? '';
  if (rawSample === '') return refuse('missing-value', line, columns.sampleId, rawSample, 'the sample ID is empty');
  const normalised = normaliseSampleId(rawSample);
  const checked = context.plannedIdCheck(normalised, line);
  if (checked.kind === 'bad-check') {
    return refuse(
      'bad-check-character',
      line,
      columns.sampleId,
      rawSample,
      `sample ID ${rawSample} fails its check character: probably mistyped on the tube or at the lab`,
    );
  }
  const sampleId = checked.kind === 'planned' || checked.kind === 'corrected' ? checked.canonical : normalised;
  const labAssayName = cellAt(cells, at.assay) ?? '';
  if (labAssayName === '') return refuse('missing-value', line, columns.assay, labAssayName, 'the assay is empty');
  const labAssay = lab.assays.get(foldToken(labAssayName));
  if (!labAssay) {
    return refuse(
      'unknown-assay',
      line,
      columns.assay,
      labAssayName,
      `lab ${lab.id} profile has no assay "${labAssayName}"; add it under assays: with its cutoffs (an antibody ELISA reporting S/P ratios maps to an assay with measure: sp-ratio in assays.yaml, never to a PCR assay, which would read its S/P as a Ct)`,
    );
  }
  const assay = context.assayById.get(labAssay.assayId)!;

  const collectedOn = dateAt(cells, at.collectedOn, lab.dateFormat);
  if (collectedOn === undefined) {
    const text = cellAt(cells, at.collectedOn)!;
    return refuse(
      'bad-date',
      line,
      columns.collectedOn,
      text,
      `"${text}" does not match date format ${lab.dateFormat}`,
    );
  }
  const reportedOn = dateAt(cells, at.reportedOn, lab.dateFormat);
  if (reportedOn === undefined) {
    const text = cellAt(cells, at.reportedOn)!;
    return refuse('bad-date', line, columns.reportedOn, text, `"${text}" does not match date format ${lab.dateFormat}`);
  }

  const ctRaw = cellAt(cells, at.result) ?? '';
  const meaning = ctMeaning(memo, ctRaw, lab, labAssay, assay);
  const reading = meaning.reading;
  if (reading.kind === 'error') return refuse(reading.code, line, columns.result, ctRaw, reading.detail);

  const labCall = cellAt(cells, at.call) || null;
  const control = cellAt(cells, at.internalControl) || null;
  const words = memo.words;
  const callRead = labCall === null ? undefined : words.read(labCall);
  const controlRead = control === null ? undefined : words.read(control);
  const rowWords = memo.rowWords;
  rowWords.controlCell = null;
  rowWords.controlFailed = undefined;
  rowWords.status = undefined;
  rowWords.statusWord = undefined;
  if (controlRead?.controlFailed !== undefined) {
    rowWords.controlFailed = controlRead.controlFailed;
    rowWords.controlCell = control;
  } else if (callRead?.controlFailed !== undefined) {
    rowWords.controlFailed = callRead.controlFailed;
    rowWords.controlCell = labCall;
  }
  readStatusCells(cells, memo, rowWords);
  const labCallClass = callRead?.call;
  let interpretation = meaning.interpretation;
  if (rowWords.controlFailed !== undefined) {
    // The control failed: invalid (retest), never negative, whatever the Ct cell says.
    interpretation = classify(
      reading,
      labAssay,
      assay,
      rowWords.controlCell === rowWords.controlFailed
        ? rowWords.controlFailed
        : `"${rowWords.controlFailed}" in "${rowWords.controlCell}"`,
    );
  } else if (labCallClass === 'invalid') {
    interpretation = {
      resultClass: 'invalid',
      reason: `the lab called it invalid ("${labCall}"): retest, not a result`,
      loadBand: undefined,
      load: 0,
    };
  } else if (reading.kind === 'not-detected' && ctRaw === '' && at.call !== undefined && labCallClass !== 'negative') {
    // A blank Ct is "not detected" for this lab only when its own call says negative: a blank
    // beside a call that is not a negative word (a pending row, a call ropewatch cannot read)
    // is no evidence of absence.
    interpretation = {
      resultClass: 'invalid',
      reason:
        labCall === null
          ? 'no Ct and no call from the lab: held as invalid, not read as not detected (ask the lab or retest)'
          : `no Ct, and the lab's call "${labCall}" is not one of its negative words: held as invalid, not read as not detected (ask the lab or retest)`,
      loadBand: undefined,
      load: 0,
    };
  }
  const reportStatus = cellAt(cells, at.reportStatus) || null;
  const callDiffers = labCallClass !== undefined && labCallClass !== interpretation.resultClass;
  const accession = cellAt(cells, at.accession) || null;

  const located = locateOnce(memo, sampleId, context.sites, collectedOn ?? undefined);
  if (located === 'no-date') {
    return refuse(
      'no-collection-date',
      line,
      columns.sampleId,
      rawSample,
      `sample ID ${rawSample} names its pen but no date, and the row has no collection date`,
    );
  }
  if (located === 'bad-date') {
    return refuse(
      'bad-date',
      line,
      columns.sampleId,
      rawSample,
      `sample ID ${rawSample} carries a date that does not exist (yyyymmdd expected)`,
    );
  }
  if (located !== undefined && 'unknownPen' in located) {
    return refuse(
      'unknown-pen',
      line,
      columns.sampleId,
      rawSample,
      `sample ID ${rawSample} names pen "${located.unknownPen}", which barn ${located.barnId} on site ${located.siteId} does not have (check the tube label, or the barn layout in sites.yaml)`,
    );
  }

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
      callDiffers,
      sampleIdAsWritten: checked.kind === 'corrected' ? checked.written : null,
      contentKey: contentKey([
        foldToken(labAssayName),
        ctRaw,
        labCall ?? '',
        accession ?? '',
        reportedOn ?? '',
        reportStatus ?? '',
        control ?? '',
      ]),
      encodedRope: located,
    },
  };
}

export interface RopeContext {
  fileName: string;
  /** Position of each column under its own name (sample_id, site, barn, pen, hung_on, notes). */
  columnIndex: ReadonlyMap<string, number>;
  /** The header cell of each column as the sheet writes it ("Collected on"): refusals name the field so. */
  columnNames?: ReadonlyMap<string, string>;
  sites: readonly Site[];
  plannedIdCheck: PlannedIdCheck;
}

function findSite(sites: readonly Site[], text: string): Site | undefined {
  const folded = foldToken(text);
  return sites.find(
    (site) => foldToken(site.id) === folded || foldToken(site.code) === folded || foldToken(site.name) === folded,
  );
}

/** Maps one rope-sheet record (sample_id, site, barn, pen, hung_on, optional notes and pool, under whatever header names the sheet gives them). */
export function mapRopeRow(cells: readonly string[], line: number, context: RopeContext): RowOutcome<RopeRow> {
  const get = (column: string) => {
    const position = context.columnIndex.get(column);
    return position === undefined ? '' : (cells[position] ?? '').trim();
  };
  // Only a refused row looks up its field's header name: nothing per accepted row.
  const reject = (code: Parameters<typeof rowRejection>[0], column: string, value: string, detail?: string) =>
    ({
      ok: false,
      rejection: rowRejection(code, line, context.columnNames?.get(column) ?? column, value, detail),
    }) as const;
  const rawSample = get('sample_id');
  if (rawSample === '') return reject('missing-value', 'sample_id', rawSample, 'the sample ID is empty');
  const checked = context.plannedIdCheck(normaliseSampleId(rawSample), line);
  if (checked.kind === 'bad-check') {
    return reject(
      'bad-check-character',
      'sample_id',
      rawSample,
      `sample ID ${rawSample} fails its check character: probably mistyped`,
    );
  }
  const sampleId =
    checked.kind === 'planned' || checked.kind === 'corrected' ? checked.canonical : normaliseSampleId(rawSample);
  const siteText = get('site');
  const site = findSite(context.sites, siteText);
  if (!site)
    return reject(
      siteText === '' ? 'missing-value' : 'unknown-site',
      'site',
      siteText,
      siteText === '' ? 'the site is empty' : `no site "${siteText}" in sites.yaml`,
    );
  const barnText = get('barn');
  const barn =
    site.barnById.get(barnText.toUpperCase()) ??
    site.barns.find((candidate) => foldToken(candidate.name) === foldToken(barnText));
  if (!barn)
    return reject(
      barnText === '' ? 'missing-value' : 'unknown-barn',
      'barn',
      barnText,
      `site ${site.id} has no barn "${barnText}"`,
    );
  const penText = get('pen');
  const pen = barn.penByKey.get(canonicalPenKey(penText));
  if (!pen)
    return reject(
      penText === '' ? 'missing-value' : 'unknown-pen',
      'pen',
      penText,
      `barn ${barn.id} on site ${site.id} has no pen "${penText}"`,
    );
  const dateText = get('hung_on');
  if (dateText === '') return reject('missing-value', 'hung_on', dateText, 'the date the rope was hung is empty');
  const hungOn = parseDateCell(dateText, 'dd.MM.yyyy');
  if (!hungOn) return reject('bad-date', 'hung_on', dateText, `"${dateText}" is not a date (write yyyy-mm-dd)`);
  const notes = get('notes');
  const poolText = get('pool');
  let poolId: string | null = null;
  if (poolText !== '') {
    const pool = context.plannedIdCheck(normaliseSampleId(poolText), line);
    if (pool.kind === 'bad-check')
      return reject(
        'bad-check-character',
        'pool',
        poolText,
        `pool ID ${poolText} fails its check character: probably mistyped`,
      );
    poolId = pool.kind === 'planned' || pool.kind === 'corrected' ? pool.canonical : normaliseSampleId(poolText);
    // A pool ID names the pool's tube: the rope's own ID would make one tube two things.
    if (poolId === sampleId)
      return reject(
        'bad-pool',
        'pool',
        poolText,
        `pool ID ${poolText} is the rope's own sample ID; a pool gets an ID of its own`,
      );
  }
  return {
    ok: true,
    row: {
      line,
      sampleId,
      siteId: site.id,
      barnId: barn.id,
      penId: pen.id,
      hungOn,
      note: notes === '' ? null : notes,
      sampleIdAsWritten: checked.kind === 'corrected' ? checked.written : null,
      warning:
        pen.status === 'in-use'
          ? undefined
          : `pen ${pen.id} is listed as ${pen.status} in the layout; the rope is kept`,
      poolId,
    },
  };
}
