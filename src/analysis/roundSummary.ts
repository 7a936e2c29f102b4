/**
 * The per-round summary: one plain, JSON-ready value per site and round, combining the round
 * model (ropes, results, classes) with what the round proved (confidence, freedom). The writers
 * in src/report turn it into summary.json and summary.csv without computing anything.
 */
import type { Assay, Config, Measure, Site } from '../config/types.js';
import {
  ctHistory,
  type AssayTally,
  type CallDisagreement,
  type CtHistoryPoint,
  type MistypedRope,
  type PenAssayResult,
  type ResultSource,
  type RoundCutoff,
  type RoundReplacement,
  type SiteRound,
} from '../rounds/roundModel.js';
import type { RoundState } from '../rounds/rounds.js';
import type { GroupRef } from '../rounds/pigGroups.js';
import { CAUTIONS, notifiableNotice } from '../report/cautions.js';
import type { BarnConfidence, RoundConfidence, SiteConfidence } from './confidence.js';

export const SUMMARY_SCHEMA = 'ropewatch.round-summary/1';

export interface PenSummary {
  barnId: string;
  penId: string;
  side: string;
  sampleIds: string[];
  returned: boolean;
  /** Per assay: the result standing for the pen this round, and its Ct across rounds so far. */
  results: Record<string, PenResultSummary>;
}

export type PenResultSummary = Omit<PenAssayResult, 'assayId' | 'otherSampleIds'> & {
  /** The name of the lab that reported it (its id when the lab is no longer configured). */
  labName: string;
  /** Positive with a Ct below the assay's `sequencingBelow`. */
  sequencingCandidate: boolean;
  history: (CtHistoryPoint & { labName: string })[];
};

/** A lab report behind the round, with the lab's name. */
export type SourceSummary = ResultSource & { labName: string; barnIds: string[] };

/** The cutoffs of an assay in assays.yaml: those of its measure, null the others. */
export interface CutoffDefaults {
  positiveBelow: number | null;
  suspectBelow: number | null;
  cycleLimit: number | null;
  positiveAtOrAbove: number | null;
  suspectAtOrAbove: number | null;
}

/** Cutoffs a lab used for an assay this round, beside the assay's defaults in assays.yaml. */
export type CutoffSummary = RoundCutoff & {
  labName: string;
  defaults: CutoffDefaults | null;
};

/** An antibody assay of the round and the PCR assay of the same pathogen it pairs with (assays.yaml `pairedWith`). */
export interface AssayPair {
  antibody: string;
  pcr: string;
}

/** A sequencing candidate: a positive pen whose Ct is below the assay's sequencing threshold. */
export interface SequencingCandidates {
  assayId: string;
  sequencingBelow: number;
  reading: string;
  pens: { barnId: string; penId: string; sampleId: string; ct: number; labId: string; labName: string }[];
}

/** The round model's tally of one assay in a barn, with the tested count and what it proved. */
export interface BarnAssaySummary extends Omit<AssayTally, 'testedPens'> {
  assayId: string;
  tested: number;
  confidence: BarnConfidence;
}

export interface BarnSummary {
  barnId: string;
  name: string;
  /** The group of pigs in the barn this round (null: not run by groups, or empty). */
  group: GroupRef | null;
  /** Empty this round (between a group's close-out and the next placement): no figure, nothing missing. */
  empty: boolean;
  pensInUse: number;
  ropesHung: number;
  ropesReturned: number;
  /** Every rope without a result stored once the round is closed, including those in `mistyped`. */
  missingSampleIds: string[];
  /** Before the round is closed: ropes out whose results are not yet due (not missing). */
  awaitingSampleIds: string[];
  /** The pen of each rope without a result (sample ID to pen). */
  missingPens: Record<string, string>;
  /** Ropes without a result for which a row came back under a mistyped sample ID (refused, waiting for a person to confirm the ID). */
  mistyped: MistypedRope[];
  sampledPens: string[];
  assays: BarnAssaySummary[];
  /** The lab reports behind this barn's results. */
  sources: (ResultSource & { labName: string })[];
}

export interface RoundSummary {
  schema: typeof SUMMARY_SCHEMA;
  site: { id: string; name: string };
  round: {
    number: number;
    id: string;
    startOn: string;
    endOn: string;
    roundsOnSite: number;
    /** `awaiting-results` (no detection figure yet), `partial`, or `complete` (closed: ropes still without a result are missing). */
    state: RoundState;
    /** The last day results are awaited (last rope date plus the program's `resultGraceDays`). */
    resultsDueOn: string;
  };
  program: {
    designPrevalence: string;
    /** Barns assumed infected when the site is judged as a whole (barnDesignPrevalence). */
    barnDesignPrevalence: string;
    targetConfidence: number;
    roundWindowDays: number;
    intervalDays: number;
    priorFreedom: number;
    introductionPerInterval: number;
    /** Negative rounds in a row that clear a positive barn (per PCR assay). */
    clearAfterNegativeRounds: number;
  };
  assays: {
    id: string;
    name: string;
    notifiable: boolean;
    /** `sp-ratio`: an antibody assay; its detection and freedom are of exposure, not of current infection. */
    measure: Measure;
    /** An antibody assay: the PCR assay it pairs with (assays.yaml `pairedWith`), else null. */
    pairedWith: string | null;
    site: SiteConfidence;
    /** The site's detection read two ways, each with its plain label; `freedom` marks the one the probability of freedom is built on. */
    siteFigures: SiteFigure[];
  }[];
  /** Antibody assays of the round paired with a PCR assay: both are shown per pen. */
  pairs: AssayPair[];
  barns: BarnSummary[];
  pens: PenSummary[];
  /** Where the results came from: lab, case number, collection and report dates. */
  sources: SourceSummary[];
  /** The cutoffs each lab's results were read with. */
  cutoffs: CutoffSummary[];
  /** Every result whose lab call differs from its reading with the lab's cutoffs. */
  disagreements: (CallDisagreement & { labName: string })[];
  /** Every report of the round's ropes that a correction or a later report took the place of, with both readings. */
  replaced: (RoundReplacement & { labName: string })[];
  /** Per assay with a sequencing threshold configured. */
  sequencing: SequencingCandidates[];
  notices: string[];
  cautions: readonly string[];
}

/** One reading of the site's detection: with every barn infected, or with only a few. */
export interface SiteFigure {
  /** "if every barn were infected at 10% of pens", "if only one barn were infected", ... */
  label: string;
  detection: number;
  infectedBarns: number;
  freedom: boolean;
}

const SMALL_NUMBERS = ['no', 'one', 'two', 'three', 'four', 'five', 'six', 'seven', 'eight', 'nine', 'ten'];

/**
 * The two site figures of an assay in plain words: every barn infected at the design prevalence
 * (1 - prod(1 - p)), and only D barns infected (two-stage; D from barnDesignPrevalence, one barn
 * without it). The first figure drives freedom unless the program sets fewer barns.
 */
export function siteFiguresOf(site: Site, confidence: SiteConfidence): SiteFigure[] {
  const within = describeDesignPrevalence(site);
  const few = confidence.fewInfectedBarns;
  const fewWords =
    few === 1
      ? 'if only one barn were infected'
      : `if only ${SMALL_NUMBERS[few] ?? String(few)} of the ${confidence.barns} barns were infected`;
  return [
    {
      label: `if every barn were infected at ${within}`,
      detection: confidence.detectionIfEveryBarn,
      infectedBarns: confidence.barns,
      freedom: confidence.infectedBarns === confidence.barns,
    },
    {
      label: fewWords,
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

/**
 * The plain reading of a sequencing candidate. Labs commonly attempt sequencing only below a Ct
 * threshold: common practice, no published source; the lab's own threshold governs.
 */
export function sequencingReading(below: number): string {
  return `Ct below ${below}: enough viral RNA that sequencing is likely to succeed (common practice, no published source).`;
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

/**
 * What an antibody result means, printed with every antibody assay: an oral-fluid antibody
 * positive means exposure (infection or vaccination), and an unexpected one is retested by PCR
 * (common practice, no source).
 */
export function antibodyMeaning(assayName: string, pcrName: string | null): string {
  return (
    `${assayName} detects antibodies (S/P ratio, higher = more antibody): a positive means exposure (infection or vaccination), not necessarily current infection. ` +
    `Its detection and freedom figures are of exposure; it never resets the freedom of ${pcrName ?? 'a PCR assay'}, and an unexpected positive is retested by PCR.`
  );
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

/** Builds the summaries of every round of a site. */
export function summariseSite(
  config: Config,
  site: Site,
  rounds: readonly SiteRound[],
  confidence: readonly RoundConfidence[],
): RoundSummary[] {
  const labName = (labId: string) => config.labById.get(labId)?.name ?? labId;
  return rounds.map((round, index) => {
    const roundConfidence = confidence[index]!;
    const assayIds = round.assays;
    const notices = assayIds
      .map((id) => config.assayById.get(id))
      .filter((assay) => assay?.notifiable)
      .map((assay) => notifiableNotice(assay!.name));
    for (const entry of roundConfidence.sites) {
      const assay = config.assayById.get(entry.assayId);
      if (assay?.measure === 'sp-ratio') {
        const pcr =
          assay.pairedWith === undefined ? null : (config.assayById.get(assay.pairedWith)?.name ?? assay.pairedWith);
        notices.push(antibodyMeaning(assay.name, pcr));
        if (entry.freedomReset) {
          notices.push(
            `${entry.assayId} antibody positive in barn${entry.positiveBarns.length === 1 ? '' : 's'} ${entry.positiveBarns.join(', ')}: exposure, not necessarily current infection. ` +
              `The probability of freedom from exposure for ${site.name} is reset to 0; ${pcr === null ? 'the PCR freedom' : `the freedom of ${pcr}`} is not reset (retest the positive pens by PCR).`,
          );
        }
        continue;
      }
      if (entry.freedomReset) {
        const rounds = site.program.clearAfterNegativeRounds;
        notices.push(
          `${entry.assayId} positive in barn${entry.positiveBarns.length === 1 ? '' : 's'} ${entry.positiveBarns.join(', ')}: ${site.name} is positive` +
            (entry.status?.state === 'positive' ? ` since round ${entry.status.sinceRound}` : '') +
            `. Positive barns are monitored, not surveyed, until ${rounds} negative round${rounds === 1 ? '' : 's'} in a row clear them; the probability of freedom then builds up again from the prior.`,
        );
      }
    }
    const barns: BarnSummary[] = round.barns.map((barnRound) => {
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
        sampledPens: barnRound.pens.map((pen) => pen.penId),
        assays: assayIds.map((assayId) => {
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
    const pens: PenSummary[] = round.barns.flatMap((barnRound) => {
      // A pen's history is that of the pigs now in the barn: rounds of the same group only (a new group starts it afresh).
      const sameGroup = rounds.slice(0, index + 1).filter((earlier) => {
        const then = earlier.barns.find((barn) => barn.barnId === barnRound.barnId);
        return then !== undefined && !then.empty && (then.group?.id ?? null) === (barnRound.group?.id ?? null);
      });
      return barnRound.pens.map((pen) => ({
        barnId: barnRound.barnId,
        penId: pen.penId,
        side: pen.rowLabel,
        sampleIds: pen.sampleIds,
        returned: pen.returned,
        results: Object.fromEntries(
          Object.entries(pen.results).map(([assayId, result]) => [
            assayId,
            (({ assayId: _assay, otherSampleIds: _others, ...kept }): PenResultSummary => ({
              ...kept,
              labName: labName(result.labId),
              sequencingCandidate: isSequencingCandidate(result, sequencingBelowOf(config.assayById.get(assayId))),
              history: ctHistory(sameGroup, barnRound.barnId, pen.penId, assayId).map((point) => ({
                ...point,
                labName: labName(point.labId),
              })),
            }))(result),
          ]),
        ),
      }));
    });
    const sequencing = assayIds.flatMap((assayId): SequencingCandidates[] => {
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
      return [{ assayId, sequencingBelow: below, reading: sequencingReading(below), pens: candidates }];
    });
    return {
      schema: SUMMARY_SCHEMA,
      site: { id: site.id, name: site.name },
      round: {
        number: round.number,
        id: round.id,
        startOn: round.startOn,
        endOn: round.endOn,
        roundsOnSite: rounds.length,
        state: round.state,
        resultsDueOn: round.resultsDueOn,
      },
      program: {
        designPrevalence: describeDesignPrevalence(site),
        barnDesignPrevalence: describeBarnDesignPrevalence(site),
        targetConfidence: site.program.targetConfidence,
        roundWindowDays: site.program.roundWindowDays,
        intervalDays: site.program.intervalDays,
        priorFreedom: site.program.priorFreedom,
        introductionPerInterval: site.program.introductionPerInterval,
        clearAfterNegativeRounds: site.program.clearAfterNegativeRounds,
      },
      assays: assayIds.map((id) => {
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
      pairs: assayIds.flatMap((id): AssayPair[] => {
        const assay = config.assayById.get(id);
        return assay?.measure === 'sp-ratio' && assay.pairedWith !== undefined
          ? [{ antibody: id, pcr: assay.pairedWith }]
          : [];
      }),
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
      sequencing,
      notices,
      cautions: CAUTIONS,
    };
  });
}
