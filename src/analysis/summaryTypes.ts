/**
 * The per-round summary as a plain value (summary.json): its types and version tag, apart from
 * the code that builds it (roundSummary.ts), so that its readers (the writers and pages in
 * src/report) need not import the builder.
 */
import type { DesignPrevalence, Measure } from '../config/types.js';
import type {
  AssayTally,
  CallDisagreement,
  CtHistoryPoint,
  MistypedRope,
  PenAssayResult,
  ResultSource,
  RoundCutoff,
  RoundReplacement,
} from '../rounds/roundModel.js';
import type { RoundState } from '../rounds/rounds.js';
import type { GroupRef } from '../rounds/pigGroups.js';
import type { BarnConfidence, SiteConfidence } from './confidence.js';

export const SUMMARY_SCHEMA = 'ropewatch.round-summary/2';

/**
 * How many rounds, this one included, a round's summary shows of each pen's history. A round's
 * files stay the same size however long the site has been sampled, and a round already written
 * need not change when later rounds come (results.csv holds every pen's whole history, once per
 * site). Eight rounds: two months of weekly sampling, most of a finishing group sampled monthly.
 */
export const PEN_HISTORY_ROUNDS = 8;

/** How many earlier rounds a round's cluster review draws as small maps beside it. */
export const EARLIER_MAPS = 5;

/**
 * How far back a round's files read the pens of earlier rounds (their history and small maps):
 * a build that writes round i needs the pens of the rounds from i - LOOKBACK_ROUNDS on only.
 */
export const LOOKBACK_ROUNDS = Math.max(PEN_HISTORY_ROUNDS, EARLIER_MAPS);

export interface PenSummary {
  barnId: string;
  penId: string;
  side: string;
  sampleIds: string[];
  returned: boolean;
  /** Per assay: the result standing for the pen this round, and its Ct over the last PEN_HISTORY_ROUNDS rounds. */
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
  /** The threshold in words (src/report/summaryNotices.ts). */
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

/** A notice of a round summary as facts (src/report/summaryNotices.ts words it). */
export type SummaryNotice =
  | { kind: 'notifiable'; assayName: string }
  | { kind: 'antibody-meaning'; assayName: string; pcrName: string | null }
  | { kind: 'antibody-positive'; assayId: string; barns: string[]; siteName: string; pcrName: string | null }
  | {
      kind: 'positive';
      assayId: string;
      barns: string[];
      siteName: string;
      sinceRound: number | null;
      clearAfter: number;
    };

/** The round summary as summariseSite returns it: its notices coded, no cautions yet. */
export type SummaryFacts = Omit<RoundSummary, 'notices' | 'cautions' | 'assays' | 'sequencing'> & {
  sequencing: Omit<SequencingCandidates, 'reading'>[];
  assays: (Omit<RoundSummary['assays'][number], 'siteFigures'> & { siteFigures: SiteFigureFacts[] })[];
  notices: SummaryNotice[];
};

/** Which reading of the site's detection a figure is, coded (src/report/summaryNotices.ts words it). */
export type SiteFigureLabel =
  | { kind: 'every-barn'; design: DesignPrevalence }
  | { kind: 'few-barns'; infectedBarns: number; barns: number };

/** A site figure as summariseSite returns it: its label coded. */
export type SiteFigureFacts = Omit<SiteFigure, 'label'> & { label: SiteFigureLabel };

/** One reading of the site's detection: with every barn infected, or with only a few. */
export interface SiteFigure {
  /** "if every barn were infected at 10% of pens", "if only one barn were infected", ... */
  label: string;
  detection: number;
  infectedBarns: number;
  freedom: boolean;
}
