/**
 * The per-round summary: one plain, JSON-ready value per site and round, combining the round
 * model (ropes, results, classes) with what the round proved (confidence, freedom). Its notices
 * are coded facts; src/report/summaryNotices.ts words them and adds the cautions, and the
 * writers in src/report turn it into summary.json and summary.csv without computing anything.
 */
import { penIdsOf } from '../rounds/penIds.js';
import type { Assay, Config, Site } from '../config/types.js';
import { barnCtHistory, type CtHistoryPoint, type PenAssayResult, type SiteRound } from '../rounds/roundModel.js';
import type { RoundConfidence, SiteConfidence } from './confidence.js';

import type {
  AssayPair,
  BarnSummary,
  CutoffDefaults,
  PenResultSummary,
  PenSummary,
  SiteFigureFacts,
  SummaryFacts,
  SummaryNotice,
} from './summaryTypes.js';
import { PEN_HISTORY_ROUNDS, SUMMARY_SCHEMA } from './summaryTypes.js';

export * from './summaryTypes.js';

/**
 * The two site figures of an assay, their labels coded: every barn infected at the design prevalence
 * (1 - prod(1 - p)), and only D barns infected (two-stage; D from barnDesignPrevalence, one barn
 * without it). The first figure drives freedom unless the program sets fewer barns.
 */
export function siteFiguresOf(site: Site, confidence: SiteConfidence): SiteFigureFacts[] {
  const few = confidence.fewInfectedBarns;
  return [
    {
      label: { kind: 'every-barn', design: site.program.designPrevalence },
      detection: confidence.detectionIfEveryBarn,
      infectedBarns: confidence.barns,
      freedom: confidence.infectedBarns === confidence.barns,
    },
    {
      label: { kind: 'few-barns', infectedBarns: few, barns: confidence.barns },
      detection: confidence.detectionIfFewBarns,
      infectedBarns: few,
      freedom: confidence.infectedBarns !== confidence.barns,
    },
  ];
}

/** The barn-level design value in words: "every barn", "1 barn", "20% of barns". */
export function describeBarnDesignPrevalence(site: Site): string {
  const design = site.program.barnDesignPrevalence;
  if (design === undefined) return 'every barn';
  return design.kind === 'barns'
    ? `${design.value} barn${design.value === 1 ? '' : 's'}`
    : `${Math.round(design.value * 1000) / 10}% of barns`;
}

export function describeDesignPrevalence(site: Site): string {
  const design = site.program.designPrevalence;
  return design.kind === 'pens'
    ? `${design.value} pen${design.value === 1 ? '' : 's'}`
    : `${Math.round(design.value * 1000) / 10}% of pens`;
}

/** The defaults in assays.yaml of an assay's cutoffs, by its measure. */
export function cutoffDefaults(assay: Assay): CutoffDefaults {
  return assay.measure === 'ct'
    ? {
        positiveBelow: assay.positiveBelow,
        suspectBelow: assay.suspectBelow,
        cycleLimit: assay.cycleLimit,
        positiveAtOrAbove: null,
        suspectAtOrAbove: null,
      }
    : {
        positiveBelow: null,
        suspectBelow: null,
        cycleLimit: null,
        positiveAtOrAbove: assay.positiveAtOrAbove,
        suspectAtOrAbove: assay.suspectAtOrAbove ?? null,
      };
}

/** The sequencing threshold of a Ct assay; an antibody assay has none (an S/P says nothing of viral RNA). */
function sequencingBelowOf(assay: Assay | undefined): number | undefined {
  return assay?.measure === 'ct' ? assay.sequencingBelow : undefined;
}

/** Positive, with a Ct below the assay's sequencing threshold (when one is configured). */
export function isSequencingCandidate(
  result: { resultClass: string; ct: number | null },
  sequencingBelow: number | undefined,
): boolean {
  return (
    sequencingBelow !== undefined &&
    result.resultClass === 'positive' &&
    result.ct !== null &&
    result.ct < sequencingBelow
  );
}

/** The notices of a round, as facts: notifiable assays, what each antibody assay means, and each reset of freedom. */
function roundNotices(config: Config, site: Site, round: SiteRound, roundConfidence: RoundConfidence): SummaryNotice[] {
  const notices: SummaryNotice[] = round.assays
    .map((id) => config.assayById.get(id))
    .filter((assay) => assay?.notifiable)
    .map((assay) => ({ kind: 'notifiable', assayName: assay!.name }));
  for (const entry of roundConfidence.sites) {
    const assay = config.assayById.get(entry.assayId);
    if (assay?.measure === 'sp-ratio') {
      const pcrName =
        assay.pairedWith === undefined ? null : (config.assayById.get(assay.pairedWith)?.name ?? assay.pairedWith);
      notices.push({ kind: 'antibody-meaning', assayName: assay.name, pcrName });
      if (entry.freedomReset)
        notices.push({
          kind: 'antibody-positive',
          assayId: entry.assayId,
          barns: entry.positiveBarns,
          siteName: site.name,
          pcrName,
        });
      continue;
    }
    if (entry.freedomReset)
      notices.push({
        kind: 'positive',
        assayId: entry.assayId,
        barns: entry.positiveBarns,
        siteName: site.name,
        sinceRound: entry.status?.state === 'positive' ? entry.status.sinceRound : null,
        clearAfter: site.program.clearAfterNegativeRounds,
      });
  }
  return notices;
}

function barnSummaries(
  site: Site,
  round: SiteRound,
  roundConfidence: RoundConfidence,
  labName: (labId: string) => string,
): BarnSummary[] {
  return round.barns.map((barnRound) => {
    const barn = site.barnById.get(barnRound.barnId.toUpperCase())!;
    return {
      barnId: barn.id,
      name: barn.name,
      group: barnRound.group,
      empty: barnRound.empty,
      pensInUse: barnRound.pensInUse,
      ropesHung: barnRound.ropesHung,
      ropesReturned: barnRound.ropesReturned,
      missingSampleIds: barnRound.missingSampleIds,
      awaitingSampleIds: barnRound.awaitingSampleIds,
      missingPens: barnRound.missingPens,
      mistyped: barnRound.mistyped,
      sampledPens: penIdsOf(barnRound),
      assays: round.assays.map((assayId) => {
        const { testedPens, ...tally } = barnRound.byAssay[assayId]!;
        return {
          assayId,
          tested: testedPens.length,
          ...tally,
          confidence: roundConfidence.barns.find((entry) => entry.barnId === barn.id && entry.assayId === assayId)!,
        };
      }),
      sources: barnRound.sources.map((source) => ({ ...source, labName: labName(source.labId) })),
    };
  });
}

function penSummaries(
  config: Config,
  rounds: readonly SiteRound[],
  index: number,
  labName: (labId: string) => string,
): PenSummary[] {
  return rounds[index]!.barns.flatMap((barnRound) => {
    // A pen's history is that of the pigs now in the barn: rounds of the same group only (a new group starts it afresh).
    const sameGroup = rounds.slice(Math.max(0, index + 1 - PEN_HISTORY_ROUNDS), index + 1).filter((earlier) => {
      const then = earlier.barns.find((barn) => barn.barnId === barnRound.barnId);
      return then !== undefined && !then.empty && (then.group?.id ?? null) === (barnRound.group?.id ?? null);
    });
    const historyOf = barnCtHistory(sameGroup, barnRound.barnId);
    return barnRound.pens.map((pen) => {
      const results: Record<string, PenResultSummary> = {};
      for (const assayId in pen.results) {
        const result = pen.results[assayId]!;
        results[assayId] = penResultSummary(
          result,
          labName(result.labId),
          isSequencingCandidate(result, sequencingBelowOf(config.assayById.get(assayId))),
          historyOf(pen.penId, assayId).map((point) => historyPointSummary(point, labName(point.labId))),
        );
      }
      return {
        barnId: barnRound.barnId,
        penId: pen.penId,
        side: pen.rowLabel,
        sampleIds: pen.sampleIds,
        returned: pen.returned,
        results,
      };
    });
  });
}

/**
 * A pen's result as the summary shows it: the result without its assay id and other samples,
 * then the lab's name, the sequencing mark and the history. Copied field by field, in the order
 * of PenAssayResult (the order summary.json writes them): the pens are most of a summary, and a
 * rest-and-spread copy of each result cost several times more.
 */
function penResultSummary(
  result: PenAssayResult,
  labName: string,
  sequencingCandidate: boolean,
  history: PenResultSummary['history'],
): PenResultSummary {
  const summary: PenResultSummary = {
    measure: result.measure,
    resultClass: result.resultClass,
    ct: result.ct,
    sp: result.sp,
    loadBand: result.loadBand,
    load: result.load,
    reason: result.reason,
    sampleId: result.sampleId,
    labId: result.labId,
    labCall: result.labCall,
    callDiffers: result.callDiffers,
    ctRaw: result.ctRaw,
    positiveBelow: result.positiveBelow,
    suspectBelow: result.suspectBelow,
    cycleLimit: result.cycleLimit,
    positiveAtOrAbove: result.positiveAtOrAbove,
    suspectAtOrAbove: result.suspectAtOrAbove,
    accession: result.accession,
    collectedOn: result.collectedOn,
    reportedOn: result.reportedOn,
  } as PenResultSummary;
  if (result.pool !== undefined) summary.pool = result.pool;
  summary.labName = labName;
  summary.sequencingCandidate = sequencingCandidate;
  summary.history = history;
  return summary;
}

/** A point of a pen's history with its lab's name, field by field in CtHistoryPoint's order (see penResultSummary). */
function historyPointSummary(point: CtHistoryPoint, labName: string): PenResultSummary['history'][number] {
  return {
    round: point.round,
    roundId: point.roundId,
    startOn: point.startOn,
    resultClass: point.resultClass,
    measure: point.measure,
    ct: point.ct,
    sp: point.sp,
    labId: point.labId,
    positiveBelow: point.positiveBelow,
    cycleLimit: point.cycleLimit,
    positiveAtOrAbove: point.positiveAtOrAbove,
    labName,
  };
}

function sequencingOf(
  config: Config,
  assayIds: readonly string[],
  pens: readonly PenSummary[],
): SummaryFacts['sequencing'] {
  return assayIds.flatMap((assayId): SummaryFacts['sequencing'] => {
    const below = sequencingBelowOf(config.assayById.get(assayId));
    if (below === undefined) return [];
    const candidates = pens.flatMap((pen) => {
      const result = pen.results[assayId];
      return result?.sequencingCandidate
        ? [
            {
              barnId: pen.barnId,
              penId: pen.penId,
              sampleId: result.sampleId,
              ct: result.ct!,
              labId: result.labId,
              labName: result.labName,
            },
          ]
        : [];
    });
    return [{ assayId, sequencingBelow: below, pens: candidates }];
  });
}

function assaySummaries(
  config: Config,
  site: Site,
  round: SiteRound,
  roundConfidence: RoundConfidence,
): Pick<SummaryFacts, 'assays' | 'pairs'> {
  return {
    assays: round.assays.map((id) => {
      const assay = config.assayById.get(id);
      const siteEntry = roundConfidence.sites.find((entry) => entry.assayId === id)!;
      return {
        id,
        name: assay?.name ?? id,
        notifiable: assay?.notifiable ?? false,
        measure: assay?.measure ?? round.measures[id] ?? 'ct',
        pairedWith: assay?.measure === 'sp-ratio' ? (assay.pairedWith ?? null) : null,
        site: siteEntry,
        siteFigures: siteFiguresOf(site, siteEntry),
      };
    }),
    pairs: round.assays.flatMap((id): AssayPair[] => {
      const assay = config.assayById.get(id);
      return assay?.measure === 'sp-ratio' && assay.pairedWith !== undefined
        ? [{ antibody: id, pcr: assay.pairedWith }]
        : [];
    }),
  };
}

function programSummary(site: Site): SummaryFacts['program'] {
  return {
    designPrevalence: describeDesignPrevalence(site),
    barnDesignPrevalence: describeBarnDesignPrevalence(site),
    targetConfidence: site.program.targetConfidence,
    roundWindowDays: site.program.roundWindowDays,
    intervalDays: site.program.intervalDays,
    priorFreedom: site.program.priorFreedom,
    introductionPerInterval: site.program.introductionPerInterval,
    clearAfterNegativeRounds: site.program.clearAfterNegativeRounds,
  };
}

/**
 * Builds the summaries of every round of a site; src/report/summaryNotices.ts words their notices.
 * @param detailFrom the first round (index) summarised with its pens (and sequencing list); the
 *   rounds before it are outlines (`pens` and `sequencing` empty), read only by the rounds after
 *   them looking back (positive barns, freedom resets, the site's list of rounds), never written
 */
export function summariseSite(
  config: Config,
  site: Site,
  rounds: readonly SiteRound[],
  confidence: readonly RoundConfidence[],
  detailFrom = 0,
): SummaryFacts[] {
  const labName = (labId: string) => config.labById.get(labId)?.name ?? labId;
  return rounds.map((round, index) => {
    const roundConfidence = confidence[index]!;
    const notices = roundNotices(config, site, round, roundConfidence);
    const barns = barnSummaries(site, round, roundConfidence, labName);
    const pens = index >= detailFrom ? penSummaries(config, rounds, index, labName) : [];
    const { assays, pairs } = assaySummaries(config, site, round, roundConfidence);
    return {
      schema: SUMMARY_SCHEMA,
      site: { id: site.id, name: site.name },
      round: {
        number: round.number,
        id: round.id,
        startOn: round.startOn,
        endOn: round.endOn,
        state: round.state,
        resultsDueOn: round.resultsDueOn,
      },
      program: programSummary(site),
      assays,
      pairs,
      barns,
      pens,
      sources: round.sources.map((source) => ({ ...source, labName: labName(source.labId) })),
      cutoffs: round.cutoffs.map((cutoff) => {
        const assay = config.assayById.get(cutoff.assayId);
        return {
          ...cutoff,
          labName: labName(cutoff.labId),
          defaults: assay ? cutoffDefaults(assay) : null,
        };
      }),
      disagreements: round.disagreements.map((entry) => ({ ...entry, labName: labName(entry.labId) })),
      replaced: round.replaced.map((entry) => ({ ...entry, labName: labName(entry.labId) })),
      sequencing: sequencingOf(config, round.assays, pens),
      notices,
    };
  });
}
