/**
 * A site's inputs (StoreReader.siteInputs), and its outline with, from the same snapshot, its
 * inputs with the results and replaced reports of the chosen samples only
 * (StoreReader.siteInputsChosen), over the read queries each backend writes in its own dialect.
 */
import type { MistypedRefusal, PlannedRope, ReplacedReport, StoredResult, StoredRope } from '../domain/records.js';
import type { SampleChoice, SiteInputs, SiteOutline } from '../domain/store.js';

/** The queries the outline and the chosen inputs are read with. */
export interface OutlineQueries {
  snapshot<T>(read: () => T): T;
  siteVersion(siteId: string): number;
  ropes(siteId: string): StoredRope[];
  reportKeys(siteId: string): Map<string, string>;
  plannedRopes(siteId: string): PlannedRope[];
  plannedWithoutResults(siteId: string): PlannedRope[];
  mistypedRefusals(siteId: string): MistypedRefusal[];
  currentResults(siteId: string): StoredResult[];
  currentResultsOf(sampleIds: readonly string[]): StoredResult[];
  replacedReports(siteId: string, sampleIds?: readonly string[]): ReplacedReport[];
}

/** Everything one site's analysis reads, from one committed state. */
export function siteInputsOf(queries: OutlineQueries, siteId: string): SiteInputs {
  return queries.snapshot(() => ({
    version: queries.siteVersion(siteId),
    ropes: queries.ropes(siteId),
    results: queries.currentResults(siteId),
    planned: queries.plannedRopes(siteId),
    plannedWithoutResults: queries.plannedWithoutResults(siteId),
    replaced: queries.replacedReports(siteId),
    mistyped: queries.mistypedRefusals(siteId),
  }));
}

export function chosenInputs(
  queries: OutlineQueries,
  siteId: string,
  choose: SampleChoice,
): { outline: SiteOutline; inputs: SiteInputs } {
  return queries.snapshot(() => {
    const outline: SiteOutline = {
      version: queries.siteVersion(siteId),
      ropes: queries.ropes(siteId),
      reportKeys: queries.reportKeys(siteId),
      planned: queries.plannedRopes(siteId),
      plannedWithoutResults: queries.plannedWithoutResults(siteId),
      mistyped: queries.mistypedRefusals(siteId),
    };
    const samples = choose(outline);
    const inputs: SiteInputs = {
      version: outline.version,
      ropes: outline.ropes,
      results: samples === undefined ? queries.currentResults(siteId) : queries.currentResultsOf(samples),
      planned: outline.planned,
      plannedWithoutResults: outline.plannedWithoutResults,
      replaced: queries.replacedReports(siteId, samples),
      mistyped: outline.mistyped,
    };
    return { outline, inputs };
  });
}
