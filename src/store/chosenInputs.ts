/**
 * A site's inputs (StoreReader.siteInputs), and its outline with, from the same snapshot, its
 * inputs with the results and replaced reports of the chosen samples only
 * (StoreReader.siteInputsChosen), over the read queries each backend writes in its own dialect.
 */
import type { MistypedRefusal, PlannedRope, ReplacedReport, StoredResult, StoredRope } from '../domain/records.js';
import type {
  OutlineHead,
  RopeHorizon,
  SampleChoice,
  SiteChangesSince,
  SiteInputs,
  SiteOutline,
} from '../domain/store.js';

/** The queries the outline and the chosen inputs are read with. */
export interface OutlineQueries {
  snapshot<T>(read: () => T): T;
  siteVersion(siteId: string): number;
  /** The site's ropes, those hung on or after `fromDay` when it is given. */
  ropes(siteId: string, fromDay?: string): StoredRope[];
  /** SiteOutline.reportKeys: of the ropes hung on or after `fromDay` when it is given. */
  reportKeys(siteId: string, fromDay?: string): Map<string, string>;
  plannedRopes(siteId: string): PlannedRope[];
  plannedWithoutResults(siteId: string): PlannedRope[];
  /** OutlineHead.plannedPlaced. */
  plannedPlaced(siteId: string): string[];
  /** The site's change log after `version`. */
  siteChangesSince(siteId: string, version: number): SiteChangesSince;
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

/**
 * The outline and the chosen inputs from one committed state: the head first, then the ropes
 * from the day `horizon` names (all of them without one), then the results `choose` names.
 */
export function chosenInputs(
  queries: OutlineQueries,
  siteId: string,
  choose: SampleChoice,
  horizon?: RopeHorizon,
): { outline: SiteOutline; inputs: SiteInputs } {
  return queries.snapshot(() => {
    const head: OutlineHead = {
      version: queries.siteVersion(siteId),
      planned: queries.plannedRopes(siteId),
      plannedWithoutResults: queries.plannedWithoutResults(siteId),
      plannedPlaced: queries.plannedPlaced(siteId),
      mistyped: queries.mistypedRefusals(siteId),
    };
    const ropesFrom = horizon?.(head, (version) => queries.siteChangesSince(siteId, version));
    const outline: SiteOutline = {
      ...head,
      ropes: queries.ropes(siteId, ropesFrom),
      ropesFrom,
      reportKeys: queries.reportKeys(siteId, ropesFrom),
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
