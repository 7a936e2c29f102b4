/**
 * Assembling the read ropes into a barn's round (its group, missing ropes, pens in layout order,
 * tallies, sources) and the barns into the site's round (its state, assays, sources, cutoffs). Pure.
 */
import type { Barn, Site } from '../config/types.js';
import { inUsePens } from '../domain/layout.js';
import { barnStatusOn, groupRef } from './pigGroups.js';
import { resultsDueOn, roundState, type Round } from './rounds.js';
import { emptyTally, tallyByAssay } from './assayTallies.js';
import type { BarnDraft, RoundDraft, SiteIndex } from './barnReadings.js';
import { missingPensOf, mistypedRopes, plannedMissingRopes } from './missingRopes.js';
import { compareText, layoutOrder } from './penOrder.js';
import { sortedCutoffs } from './roundCutoffs.js';
import { addSource, sortedSources, type SourceDrafts } from './resultSources.js';
import type { BarnRound, PlannedInput, RopeInput, SiteRound } from './roundTypes.js';

/** The barn's round from its read ropes; its disagreements and replaced reports join the round's, in pen order. */
export function assembleBarnRound(
  barn: Barn,
  barnRopes: readonly RopeInput[],
  draft: BarnDraft,
  startOn: string,
  plannedHere: readonly PlannedInput[],
  index: SiteIndex,
  round: RoundDraft,
): BarnRound {
  const onDate = barnRopes.reduce(
    (first, rope) => (rope.hungOn < first ? rope.hungOn : first),
    barnRopes[0]?.hungOn ?? startOn,
  );
  const status = barnStatusOn(barn.groups, onDate);
  const { pens, missing, missingPen } = draft;
  const plannedMissing = plannedMissingRopes(barn, status.kind === 'empty', plannedHere, pens, missingPen);
  missing.push(...plannedMissing);
  const mistyped = mistypedRopes(barn, missing, missingPen, index.mistypedByMeant);
  // Layout order (row, then position along the alley), as the barn's pens are listed.
  const penList = [...pens.values()].sort((a, b) => layoutOrder(barn, a.penId) - layoutOrder(barn, b.penId));
  const byAssay = tallyByAssay(penList);
  addBarnNotes(barn, draft, round);
  return {
    barnId: barn.id,
    onDate,
    group: status.kind === 'group' ? groupRef(status.group) : null,
    empty: status.kind === 'empty',
    pensInUse: inUsePens(barn.pens).length,
    ropesHung: draft.hung + plannedMissing.length,
    ropesReturned: draft.returned,
    missingSampleIds: missing.sort(),
    plannedMissing: plannedMissing.sort(),
    awaitingSampleIds: [],
    missingPens: missingPensOf(missingPen, missing),
    mistyped,
    pens: penList,
    byAssay,
    // A barn's sources cover that barn only.
    sources: sortedSources(draft.sources).map(({ barnIds: _barns, ...source }) => source),
  };
}

/** Adds the barn's disagreements (marking those that stand for their pen) and replaced reports to the round's. */
function addBarnNotes(barn: Barn, draft: BarnDraft, round: RoundDraft): void {
  // Pen order of the barn's layout, then sample and assay: every disagreeing result is listed.
  draft.disagreements.sort(
    (a, b) =>
      layoutOrder(barn, a.penId) - layoutOrder(barn, b.penId) ||
      compareText(a.sampleId, b.sampleId) ||
      compareText(a.assayId, b.assayId),
  );
  for (const entry of draft.disagreements)
    entry.standsForPen = draft.pens.get(entry.penId)?.results[entry.assayId]?.sampleId === entry.sampleId;
  round.disagreements.push(...draft.disagreements);
  // Pen order of the layout, then sample and assay; links of one report in the order made.
  round.replaced.push(
    ...draft.replaced
      .map((entry, order) => ({ entry, order }))
      .sort(
        (a, b) =>
          layoutOrder(barn, a.entry.penId) - layoutOrder(barn, b.entry.penId) ||
          compareText(a.entry.sampleId, b.entry.sampleId) ||
          compareText(a.entry.assayId, b.entry.assayId) ||
          a.order - b.order,
      )
      .map(({ entry }) => entry),
  );
}

/** The site's round from its barns: its state by the clock, every barn tallied for every assay, sources and cutoffs. */
export function assembleSiteRound(
  site: Site,
  round: Round<RopeInput>,
  barns: BarnRound[],
  draft: RoundDraft,
  today: string | undefined,
): SiteRound {
  const dueOn = resultsDueOn(round.endOn, site.program.resultGraceDays);
  const state = roundState(
    barns.reduce((sum, barn) => sum + barn.ropesHung, 0),
    barns.reduce((sum, barn) => sum + barn.ropesReturned, 0),
    dueOn,
    today,
  );
  // Before the round is closed a rope without a result is awaited, not missing.
  if (state !== 'complete') {
    for (const barn of barns) {
      barn.awaitingSampleIds = barn.missingSampleIds;
      barn.missingSampleIds = [];
      barn.plannedMissing = [];
    }
  }
  const assayList = [...draft.assays].sort();
  for (const barn of barns) for (const assay of assayList) barn.byAssay[assay] ??= emptyTally();
  const sources: SourceDrafts = new Map();
  for (const barn of barns) for (const source of barn.sources) addSource(sources, source, barn.barnId);
  return {
    siteId: site.id,
    number: round.number,
    id: round.id,
    startOn: round.startOn,
    endOn: round.endOn,
    state,
    resultsDueOn: dueOn,
    assays: assayList,
    measures: Object.fromEntries(assayList.map((assayId) => [assayId, draft.measures[assayId] ?? 'ct'])),
    barns,
    sources: sortedSources(sources),
    cutoffs: sortedCutoffs(draft.cutoffs),
    disagreements: draft.disagreements,
    replaced: draft.replaced,
  };
}
