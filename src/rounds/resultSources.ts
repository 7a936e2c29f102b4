/** The lab reports (lab and report date) behind a barn's or a round's results, gathered and sorted. Pure. */
import type { ResultInput, ResultSource } from './roundTypes.js';
import { compareText } from './penOrder.js';

/** The earlier (or later) of two ISO dates, either of which may be missing. */
const earliest = (a: string | null, b: string | null | undefined): string | null =>
  b === null || b === undefined ? a : a === null || b < a ? b : a;
const latest = (a: string | null, b: string | null | undefined): string | null =>
  b === null || b === undefined ? a : a === null || b > a ? b : a;

/**
 * A source being gathered. Case numbers are listed as they come (one per result, most of them
 * distinct) and sorted and made unique once, at the end (`sortedSources`).
 */
export interface SourceDraft {
  labId: string;
  reportedOn: string | null;
  accessions: string[];
  assays: Set<string>;
  results: number;
  collectedFrom: string | null;
  collectedTo: string | null;
  barnIds: string[];
}

/**
 * Sources by lab, then report date ('' for none): looked up by the texts themselves, with no key
 * made per result.
 */
export type SourceDrafts = Map<string, Map<string, SourceDraft>>;

/** The source of lab `labId`'s report of `reportedOn`, opened when new. */
function sourceOf(sources: SourceDrafts, labId: string, reportedOn: string | null): SourceDraft {
  let ofLab = sources.get(labId);
  if (!ofLab) {
    ofLab = new Map();
    sources.set(labId, ofLab);
  }
  let source = ofLab.get(reportedOn ?? '');
  if (!source) {
    source = {
      labId,
      reportedOn,
      accessions: [],
      assays: new Set(),
      results: 0,
      collectedFrom: null,
      collectedTo: null,
      barnIds: [],
    };
    ofLab.set(reportedOn ?? '', source);
  }
  return source;
}

/** Adds one result to the sources: its lab report's count, case number, assay and collection day. */
export function addResultSource(sources: SourceDrafts, result: ResultInput): void {
  const source = sourceOf(sources, result.labId, result.reportedOn ?? null);
  if (result.accession !== null && result.accession !== undefined) source.accessions.push(result.accession);
  source.assays.add(result.assayId);
  source.results += 1;
  const collectedOn = result.collectedOn ?? null;
  source.collectedFrom = earliest(source.collectedFrom, collectedOn);
  source.collectedTo = latest(source.collectedTo, collectedOn);
}

/** Adds a barn's gathered source to the sources, keyed by lab and report date. */
export function addSource(
  sources: SourceDrafts,
  entry: {
    labId: string;
    reportedOn: string | null;
    accessions: Iterable<string>;
    assays: Iterable<string>;
    results: number;
    collectedFrom: string | null;
    collectedTo: string | null;
  },
  barnId?: string,
): void {
  const source = sourceOf(sources, entry.labId, entry.reportedOn);
  for (const accession of entry.accessions) source.accessions.push(accession);
  for (const assay of entry.assays) source.assays.add(assay);
  source.results += entry.results;
  source.collectedFrom = earliest(source.collectedFrom, entry.collectedFrom);
  source.collectedTo = latest(source.collectedTo, entry.collectedTo);
  if (barnId !== undefined && !source.barnIds.includes(barnId)) source.barnIds.push(barnId);
}

/**
 * The texts in code-unit order (as `compareText` orders them: the default sort of an array of
 * strings, without a comparator called per comparison), each once.
 */
function uniqueSorted(texts: readonly string[]): string[] {
  const sorted = [...texts].sort();
  return sorted.filter((text, index) => index === 0 || text !== sorted[index - 1]);
}

/** The gathered sources in lab and report-date order, case numbers and assays sorted. */
export function sortedSources(sources: SourceDrafts): (ResultSource & { barnIds: string[] })[] {
  return [...sources.values()]
    .flatMap((ofLab) => [...ofLab.values()])
    .map((source) => ({
      ...source,
      accessions: uniqueSorted(source.accessions),
      assays: [...source.assays].sort(compareText),
    }))
    .sort((a, b) => compareText(a.labId, b.labId) || compareText(a.reportedOn ?? '', b.reportedOn ?? ''));
}
