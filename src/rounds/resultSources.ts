/** The lab reports (lab and report date) behind a barn's or a round's results, gathered and sorted. Pure. */
import type { ResultInput, ResultSource } from './roundTypes.js';
import { compareText } from './penOrder.js';

/** The earlier (or later) of two ISO dates, either of which may be missing. */
const earliest = (a: string | null, b: string | null | undefined): string | null =>
  b === null || b === undefined ? a : a === null || b < a ? b : a;
const latest = (a: string | null, b: string | null | undefined): string | null =>
  b === null || b === undefined ? a : a === null || b > a ? b : a;

const sourceKey = (labId: string, reportedOn: string | null) => `${labId}\u0000${reportedOn ?? ''}`;

/** A source being gathered: sets, so that a report with many case numbers stays linear. */
export interface SourceDraft {
  labId: string;
  reportedOn: string | null;
  accessions: Set<string>;
  assays: Set<string>;
  results: number;
  collectedFrom: string | null;
  collectedTo: string | null;
  barnIds: string[];
}

/** The source of lab `labId`'s report of `reportedOn`, opened when new. */
function sourceOf(sources: Map<string, SourceDraft>, labId: string, reportedOn: string | null): SourceDraft {
  const key = sourceKey(labId, reportedOn);
  let source = sources.get(key);
  if (!source) {
    source = {
      labId,
      reportedOn,
      accessions: new Set(),
      assays: new Set(),
      results: 0,
      collectedFrom: null,
      collectedTo: null,
      barnIds: [],
    };
    sources.set(key, source);
  }
  return source;
}

/** Adds one result to the sources: its lab report's count, case number, assay and collection day. */
export function addResultSource(sources: Map<string, SourceDraft>, result: ResultInput): void {
  const source = sourceOf(sources, result.labId, result.reportedOn ?? null);
  if (result.accession !== null && result.accession !== undefined) source.accessions.add(result.accession);
  source.assays.add(result.assayId);
  source.results += 1;
  const collectedOn = result.collectedOn ?? null;
  source.collectedFrom = earliest(source.collectedFrom, collectedOn);
  source.collectedTo = latest(source.collectedTo, collectedOn);
}

/** Adds a barn's gathered source to the sources, keyed by lab and report date. */
export function addSource(
  sources: Map<string, SourceDraft>,
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
  for (const accession of entry.accessions) source.accessions.add(accession);
  for (const assay of entry.assays) source.assays.add(assay);
  source.results += entry.results;
  source.collectedFrom = earliest(source.collectedFrom, entry.collectedFrom);
  source.collectedTo = latest(source.collectedTo, entry.collectedTo);
  if (barnId !== undefined && !source.barnIds.includes(barnId)) source.barnIds.push(barnId);
}

/** The gathered sources in lab and report-date order, case numbers and assays sorted. */
export function sortedSources(sources: Map<string, SourceDraft>): (ResultSource & { barnIds: string[] })[] {
  return [...sources.values()]
    .map((source) => ({
      ...source,
      accessions: [...source.accessions].sort(compareText),
      assays: [...source.assays].sort(compareText),
    }))
    .sort((a, b) => compareText(a.labId, b.labId) || compareText(a.reportedOn ?? '', b.reportedOn ?? ''));
}
