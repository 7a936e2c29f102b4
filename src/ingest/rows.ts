/**
 * One parsed CSV record to one stored row, or to a refusal naming the line and field. Pure: all
 * context (lab profile, sites, header index, the planned-ID check) is passed in.
 */
import { createHash } from 'node:crypto';
import { format as formatDate, isValid, parse as parseDate } from 'date-fns';
import { foldToken } from '../config/load.js';
import { canonicalPenKey } from '../domain/layout.js';
import type { Assay, LabProfile, Site } from '../config/types.js';
import { classify, type ResultClass } from '../interpret/classify.js';
import { readCt } from '../interpret/ct.js';
import { rowRejection, type RowRejection } from './errors.js';

/** How a sample ID is compared: capitals, no spaces. */
export function normaliseSampleId(raw: string): string {
  return raw.replace(/\s+/g, '').toUpperCase();
}

export { canonicalPenKey };

/**
 * Checks a sample ID against the planned-ID grammar: `planned` with its canonical spelling,
 * `bad-check` when it has the planned shape for a configured site but a wrong check character
 * (mistyped), `other` for any other ID (a lab's or a farm's own numbering).
 */
export type PlannedIdCheck = (sampleId: string) => { kind: 'planned'; canonical: string } | { kind: 'bad-check' } | { kind: 'other' };

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
  for (const candidate of [dateFormat, ISO_DATE, `${ISO_DATE}'T'HH:mm:ss`, `${ISO_DATE} HH:mm:ss`, `${ISO_DATE} HH:mm`]) {
    const parsed = parseDate(trimmed, candidate, REFERENCE_DATE);
    if (isValid(parsed) && parsed.getFullYear() >= 1990 && parsed.getFullYear() <= 2200) return formatDate(parsed, ISO_DATE);
  }
  // Date-times written with the profile's date format and a time after it.
  const firstPart = trimmed.split(/[ T]/)[0]!;
  if (firstPart !== trimmed) return parseDateUncached(firstPart, dateFormat);
  return undefined;
}

export interface RopeLocation {
  siteId: string;
  barnId: string;
  penId: string;
  hungOn: string;
}

export interface ResultRow {
  line: number;
  labId: string;
  sampleId: string;
  assayId: string;
  labAssay: string;
  ct: number | null;
  ctRaw: string;
  labCall: string | null;
  accession: string | null;
  collectedOn: string | null;
  reportedOn: string | null;
  reportStatus: string | null;
  control: string | null;
  resultClass: ResultClass;
  reason: string;
  loadBand: string | null;
  positiveBelow: number;
  suspectBelow: number;
  cycleLimit: number;
  /** The lab marked this row as a corrected or reissued report. */
  markedReissue: boolean;
  /** The lab's own call disagrees with the class from the cutoffs (kept for review). */
  callDiffers: boolean;
  naturalKey: string;
  /** Location carried by the sample ID itself (site sample pattern). */
  encodedRope: RopeLocation | undefined;
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
/** Header positions of a lab's columns, resolved once per file (context), not once per row. */
const positionsByContext = new WeakMap<ResultContext, Readonly<Record<ColumnName, number | undefined>>>();

function columnPositions(context: ResultContext): Readonly<Record<ColumnName, number | undefined>> {
  let positions = positionsByContext.get(context);
  if (!positions) {
    const entries = Object.entries(context.lab.columns).map(([name, column]) => [name, column === undefined ? undefined : context.columnIndex.get(foldToken(column))]);
    positions = Object.fromEntries(entries) as Record<ColumnName, number | undefined>;
    positionsByContext.set(context, positions);
  }
  return positions;
}

const LAB_CALL_WORDS: Readonly<Record<string, ResultClass>> = {
  positive: 'positive', pos: 'positive', detected: 'positive',
  negative: 'negative', neg: 'negative', 'not detected': 'negative',
  suspect: 'suspect', inconclusive: 'suspect', equivocal: 'suspect', indeterminate: 'suspect',
  invalid: 'invalid',
};

/** Finds the site, barn and pen a sample ID encodes through a site's configured pattern. */
export function locationFromPattern(sampleId: string, sites: readonly Site[], fallbackDate: string | undefined): RopeLocation | 'no-date' | 'bad-date' | undefined {
  // Exports come a site at a time: try the site that matched last before the others.
  const last = lastPatternSite.get(sites);
  for (const site of last === undefined ? sites : [last, ...sites]) {
    const match = site.samplePattern?.exec(sampleId);
    if (!match?.groups) continue;
    const barn = site.barnById.get(match.groups['barn']!.toUpperCase());
    if (!barn) continue;
    const pen = barn.penByKey.get(canonicalPenKey(match.groups['pen']!));
    if (!pen) continue;
    const encodedDate = match.groups['date'] ? parseDateCell(match.groups['date'], 'yyyyMMdd') : undefined;
    // A date the tube label claims but the calendar lacks (20261345) is a mistyped label, not a reason to guess.
    if (match.groups['date'] && encodedDate === undefined) return 'bad-date';
    const hungOn = encodedDate ?? fallbackDate;
    if (!hungOn) return 'no-date';
    if (last !== site) lastPatternSite.set(sites, site);
    return { siteId: site.id, barnId: barn.id, penId: pen.id, hungOn };
  }
  return undefined;
}
const lastPatternSite = new WeakMap<readonly Site[], Site>();

/** Maps one lab-export record. `line` is the 1-based line where the record starts. */
export function mapResultRow(cells: readonly string[], line: number, context: ResultContext): RowOutcome<ResultRow> {
  const { lab } = context;
  const columns = lab.columns;
  const positions = columnPositions(context);
  const cell = (name: ColumnName) => {
    const position = positions[name];
    return position === undefined ? undefined : (cells[position] ?? '').trim();
  };
  const reject = (code: Parameters<typeof rowRejection>[0], field: string | undefined, value: string | undefined, detail?: string) =>
    ({ ok: false, rejection: rowRejection(code, line, field, value, detail) }) as const;

  const rawSample = cell('sampleId') ?? '';
  if (rawSample === '') return reject('missing-value', columns.sampleId, rawSample, 'the sample ID is empty');
  const checked = context.plannedIdCheck(normaliseSampleId(rawSample));
  if (checked.kind === 'bad-check') {
    return reject('bad-check-character', columns.sampleId, rawSample, `sample ID ${rawSample} fails its check character: probably mistyped on the tube or at the lab`);
  }
  const sampleId = checked.kind === 'planned' ? checked.canonical : normaliseSampleId(rawSample);
  const labAssayName = cell('assay') ?? '';
  if (labAssayName === '') return reject('missing-value', columns.assay, labAssayName, 'the assay is empty');
  const labAssay = lab.assays.get(foldToken(labAssayName));
  if (!labAssay) return reject('unknown-assay', columns.assay, labAssayName, `lab ${lab.id} profile has no assay "${labAssayName}"; add it under assays: with its cutoffs`);
  const assay = context.assayById.get(labAssay.assayId)!;

  const dateOf = (name: ColumnName) => {
    const text = cell(name);
    if (text === undefined || text === '') return { value: null } as const;
    const parsed = parseDateCell(text, lab.dateFormat);
    return parsed === undefined ? ({ error: text } as const) : ({ value: parsed } as const);
  };
  const collected = dateOf('collectedOn');
  if ('error' in collected) return reject('bad-date', columns.collectedOn, collected.error, `"${collected.error}" does not match date format ${lab.dateFormat}`);
  const reported = dateOf('reportedOn');
  if ('error' in reported) return reject('bad-date', columns.reportedOn, reported.error, `"${reported.error}" does not match date format ${lab.dateFormat}`);

  const ctRaw = cell('ct') ?? '';
  const reading = readCt(ctRaw, lab, labAssay);
  if (reading.kind === 'error') return reject(reading.code, columns.ct, ctRaw, reading.detail);

  const labCall = cell('call') || null;
  const control = cell('internalControl') || null;
  const controlFailed = [control, labCall].find((value) => value !== null && lab.controlFailedTokens.has(foldToken(value)));
  const interpretation = classify(reading, labAssay, assay, controlFailed ?? undefined);
  const reportStatus = cell('reportStatus') || null;
  const markedReissue = reportStatus !== null && lab.reissueTokens.has(foldToken(reportStatus));
  const labCallClass = labCall === null ? undefined : LAB_CALL_WORDS[foldToken(labCall)];
  const callDiffers = labCallClass !== undefined && labCallClass !== interpretation.resultClass;
  const accession = cell('accession') || null;

  let encodedRope: RopeLocation | undefined;
  const located = locationFromPattern(sampleId, context.sites, collected.value ?? undefined);
  if (located === 'no-date') {
    return reject('no-collection-date', columns.sampleId, rawSample, `sample ID ${rawSample} names its pen but no date, and the row has no collection date`);
  }
  if (located === 'bad-date') {
    return reject('bad-date', columns.sampleId, rawSample, `sample ID ${rawSample} carries a date that does not exist (yyyymmdd expected)`);
  }
  if (located) encodedRope = located;

  // The key starts with sample, assay and lab so that rows of one sample sit together in the
  // unique index (inserts stay local as the store grows); the hash covers everything reported.
  const naturalKey = `${sampleId}|${labAssay.assayId}|${lab.id}|${createHash('sha1')
    .update([foldToken(labAssayName), ctRaw, labCall ?? '', accession ?? '', reported.value ?? '', reportStatus ?? '', control ?? ''].join('\u001f'))
    .digest('hex')
    .slice(0, 24)}`;

  return {
    ok: true,
    row: {
      line,
      labId: lab.id,
      sampleId,
      assayId: labAssay.assayId,
      labAssay: labAssayName,
      ct: reading.kind === 'detected' ? reading.ct : null,
      ctRaw,
      labCall,
      accession,
      collectedOn: collected.value,
      reportedOn: reported.value,
      reportStatus,
      control,
      resultClass: interpretation.resultClass,
      reason: interpretation.reason,
      loadBand: interpretation.loadBand ?? null,
      positiveBelow: labAssay.positiveBelow,
      suspectBelow: labAssay.suspectBelow,
      cycleLimit: labAssay.cycleLimit,
      markedReissue,
      callDiffers,
      naturalKey,
      encodedRope,
    },
  };
}

export interface RopeRow extends RopeLocation {
  line: number;
  sampleId: string;
  note: string | null;
  /** A warning that did not stop the row (e.g. a rope in a pen the layout lists as empty). */
  warning: string | undefined;
}

export interface RopeContext {
  fileName: string;
  columnIndex: ReadonlyMap<string, number>;
  sites: readonly Site[];
  plannedIdCheck: PlannedIdCheck;
}

function findSite(sites: readonly Site[], text: string): Site | undefined {
  const folded = foldToken(text);
  return sites.find((site) => foldToken(site.id) === folded || foldToken(site.code) === folded || foldToken(site.name) === folded);
}

/** Maps one rope-sheet record (sample_id, site, barn, pen, hung_on). */
export function mapRopeRow(cells: readonly string[], line: number, context: RopeContext): RowOutcome<RopeRow> {
  const get = (column: string) => {
    const position = context.columnIndex.get(column);
    return position === undefined ? '' : (cells[position] ?? '').trim();
  };
  const reject = (code: Parameters<typeof rowRejection>[0], field: string, value: string, detail?: string) =>
    ({ ok: false, rejection: rowRejection(code, line, field, value, detail) }) as const;
  const rawSample = get('sample_id');
  if (rawSample === '') return reject('missing-value', 'sample_id', rawSample, 'the sample ID is empty');
  const checked = context.plannedIdCheck(normaliseSampleId(rawSample));
  if (checked.kind === 'bad-check') {
    return reject('bad-check-character', 'sample_id', rawSample, `sample ID ${rawSample} fails its check character: probably mistyped`);
  }
  const sampleId = checked.kind === 'planned' ? checked.canonical : normaliseSampleId(rawSample);
  const siteText = get('site');
  const site = findSite(context.sites, siteText);
  if (!site) return reject(siteText === '' ? 'missing-value' : 'unknown-site', 'site', siteText, siteText === '' ? 'the site is empty' : `no site "${siteText}" in sites.yaml`);
  const barnText = get('barn');
  const barn = site.barnById.get(barnText.toUpperCase()) ?? site.barns.find((candidate) => foldToken(candidate.name) === foldToken(barnText));
  if (!barn) return reject(barnText === '' ? 'missing-value' : 'unknown-barn', 'barn', barnText, `site ${site.id} has no barn "${barnText}"`);
  const penText = get('pen');
  const pen = barn.penByKey.get(canonicalPenKey(penText));
  if (!pen) return reject(penText === '' ? 'missing-value' : 'unknown-pen', 'pen', penText, `barn ${barn.id} on site ${site.id} has no pen "${penText}"`);
  const dateText = get('hung_on');
  if (dateText === '') return reject('missing-value', 'hung_on', dateText, 'the date the rope was hung is empty');
  const hungOn = parseDateCell(dateText, 'dd.MM.yyyy');
  if (!hungOn) return reject('bad-date', 'hung_on', dateText, `"${dateText}" is not a date (write yyyy-mm-dd)`);
  const notes = get('notes');
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
      warning: pen.status === 'in-use' ? undefined : `pen ${pen.id} is listed as ${pen.status} in the layout; the rope is kept`,
    },
  };
}
