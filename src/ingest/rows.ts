/**
 * One parsed CSV record to one stored row, or to a refusal naming the line and field. Pure: all
 * context (lab profile, sites, header index, the planned-ID check) is passed in.
 */
import { createHash } from 'node:crypto';
import { format as formatDate, isValid, parse as parseDate } from 'date-fns';
import { foldToken } from '../config/load.js';
import type { Assay, LabProfile, Site } from '../config/types.js';
import { classify, type ResultClass } from '../interpret/classify.js';
import { readCt } from '../interpret/ct.js';
import { rowRejection, type RowRejection } from './errors.js';

/** How a sample ID is compared: capitals, no spaces. */
export function normaliseSampleId(raw: string): string {
  return raw.replace(/\s+/g, '').toUpperCase();
}

/** How a pen label is compared: capitals, no spaces, no leading zeros in numbers ("a01" = "A1"). */
export function canonicalPenKey(raw: string): string {
  return raw
    .replace(/\s+/g, '')
    .toUpperCase()
    .replace(/\d+/g, (digits) => String(Number(digits)));
}

/**
 * Checks a sample ID against the planned-ID grammar: `planned` with its canonical spelling,
 * `bad-check` when it has the planned shape for a configured site but a wrong check character
 * (mistyped), `other` for any other ID (a lab's or a farm's own numbering).
 */
export type PlannedIdCheck = (sampleId: string) => { kind: 'planned'; canonical: string } | { kind: 'bad-check' } | { kind: 'other' };

const ISO_DATE = 'yyyy-MM-dd';
const REFERENCE_DATE = new Date(2000, 0, 1);

/** Parses a date cell with the profile's format, accepting ISO dates too. Returns yyyy-MM-dd or undefined. */
export function parseDateCell(text: string, dateFormat: string): string | undefined {
  const trimmed = text.trim();
  if (trimmed === '') return undefined;
  for (const candidate of [dateFormat, ISO_DATE, `${ISO_DATE}'T'HH:mm:ss`, `${ISO_DATE} HH:mm:ss`, `${ISO_DATE} HH:mm`]) {
    const parsed = parseDate(trimmed, candidate, REFERENCE_DATE);
    if (isValid(parsed) && parsed.getFullYear() >= 1990 && parsed.getFullYear() <= 2200) return formatDate(parsed, ISO_DATE);
  }
  // Date-times written with the profile's date format and a time after it.
  const firstPart = trimmed.split(/[ T]/)[0]!;
  if (firstPart !== trimmed) return parseDateCell(firstPart, dateFormat);
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

function cellOf(cells: readonly string[], columnIndex: ReadonlyMap<string, number>, column: string | undefined): string | undefined {
  if (column === undefined) return undefined;
  const position = columnIndex.get(foldToken(column));
  return position === undefined ? undefined : (cells[position] ?? '').trim();
}

const LAB_CALL_WORDS: Readonly<Record<string, ResultClass>> = {
  positive: 'positive', pos: 'positive', detected: 'positive',
  negative: 'negative', neg: 'negative', 'not detected': 'negative',
  suspect: 'suspect', inconclusive: 'suspect', equivocal: 'suspect', indeterminate: 'suspect',
  invalid: 'invalid',
};

/** Finds the site, barn and pen a sample ID encodes through a site's configured pattern. */
export function locationFromPattern(sampleId: string, sites: readonly Site[], fallbackDate: string | undefined): RopeLocation | 'no-date' | undefined {
  for (const site of sites) {
    const match = site.samplePattern?.exec(sampleId);
    if (!match?.groups) continue;
    const barn = site.barnById.get(match.groups['barn']!.toUpperCase());
    if (!barn) continue;
    const penKey = canonicalPenKey(match.groups['pen']!);
    const pen = barn.pens.find((candidate) => canonicalPenKey(candidate.id) === penKey);
    if (!pen) continue;
    const encodedDate = match.groups['date'] ? parseDateCell(match.groups['date'], 'yyyyMMdd') : undefined;
    const hungOn = encodedDate ?? fallbackDate;
    if (!hungOn) return 'no-date';
    return { siteId: site.id, barnId: barn.id, penId: pen.id, hungOn };
  }
  return undefined;
}

/** Maps one lab-export record. `line` is the 1-based line where the record starts. */
export function mapResultRow(cells: readonly string[], line: number, context: ResultContext): RowOutcome<ResultRow> {
  const { lab, columnIndex } = context;
  const columns = lab.columns;
  const get = (column: string | undefined) => cellOf(cells, columnIndex, column);
  const reject = (code: Parameters<typeof rowRejection>[0], field: string | undefined, value: string | undefined, detail?: string) =>
    ({ ok: false, rejection: rowRejection(code, line, field, value, detail) }) as const;

  const rawSample = get(columns.sampleId) ?? '';
  if (rawSample === '') return reject('missing-value', columns.sampleId, rawSample, 'the sample ID is empty');
  const checked = context.plannedIdCheck(normaliseSampleId(rawSample));
  if (checked.kind === 'bad-check') {
    return reject('bad-check-character', columns.sampleId, rawSample, `sample ID ${rawSample} fails its check character: probably mistyped on the tube or at the lab`);
  }
  const sampleId = checked.kind === 'planned' ? checked.canonical : normaliseSampleId(rawSample);
  const labAssayName = get(columns.assay) ?? '';
  if (labAssayName === '') return reject('missing-value', columns.assay, labAssayName, 'the assay is empty');
  const labAssay = lab.assays.get(foldToken(labAssayName));
  if (!labAssay) return reject('unknown-assay', columns.assay, labAssayName, `lab ${lab.id} profile has no assay "${labAssayName}"; add it under assays: with its cutoffs`);
  const assay = context.assayById.get(labAssay.assayId)!;

  const dateOf = (column: string | undefined) => {
    const text = get(column);
    if (text === undefined || text === '') return { value: null } as const;
    const parsed = parseDateCell(text, lab.dateFormat);
    return parsed === undefined ? ({ error: text } as const) : ({ value: parsed } as const);
  };
  const collected = dateOf(columns.collectedOn);
  if ('error' in collected) return reject('bad-date', columns.collectedOn, collected.error, `"${collected.error}" does not match date format ${lab.dateFormat}`);
  const reported = dateOf(columns.reportedOn);
  if ('error' in reported) return reject('bad-date', columns.reportedOn, reported.error, `"${reported.error}" does not match date format ${lab.dateFormat}`);

  const ctRaw = get(columns.ct) ?? '';
  const reading = readCt(ctRaw, lab, labAssay);
  if (reading.kind === 'error') return reject(reading.code, columns.ct, ctRaw, reading.detail);

  const labCall = get(columns.call) || null;
  const control = get(columns.internalControl) || null;
  const controlFailed = [control, labCall].find((value) => value !== null && lab.controlFailedTokens.has(foldToken(value)));
  const interpretation = classify(reading, labAssay, assay, controlFailed ?? undefined);
  const reportStatus = get(columns.reportStatus) || null;
  const markedReissue = reportStatus !== null && lab.reissueTokens.has(foldToken(reportStatus));
  const labCallClass = labCall === null ? undefined : LAB_CALL_WORDS[foldToken(labCall)];
  const callDiffers = labCallClass !== undefined && labCallClass !== interpretation.resultClass;
  const accession = get(columns.accession) || null;

  let encodedRope: RopeLocation | undefined;
  const located = locationFromPattern(sampleId, context.sites, collected.value ?? undefined);
  if (located === 'no-date') {
    return reject('no-collection-date', columns.sampleId, rawSample, `sample ID ${rawSample} names its pen but no date, and the row has no collection date`);
  }
  if (located) encodedRope = located;

  const naturalKey = createHash('sha1')
    .update([lab.id, sampleId, labAssay.assayId, foldToken(labAssayName), ctRaw, labCall ?? '', accession ?? '', reported.value ?? '', reportStatus ?? '', control ?? ''].join('\u001f'))
    .digest('hex');

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
  const penKey = canonicalPenKey(penText);
  const pen = barn.pens.find((candidate) => canonicalPenKey(candidate.id) === penKey);
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
