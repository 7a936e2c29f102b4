/** Normalised configuration: what the rest of ropewatch reads. Built once by `loadConfig`, frozen. */
import type { BarnLayout, Pen, PenContacts } from '../domain/layout.js';
import type { Hl7Profile } from './hl7Types.js';
import type { ConfiguredPattern } from './pattern.js';
import type { HerdStatus, SiteAlerts } from './siteNotices.js';

export type { HerdStatus, SiteAlerts } from './siteNotices.js';

export type DesignPrevalence = { kind: 'proportion'; value: number } | { kind: 'pens'; value: number };

/** Barn-level design value: a proportion of the site's barns (rounded up) or a number of barns. */
export type BarnDesignPrevalence = { kind: 'proportion'; value: number } | { kind: 'barns'; value: number };

/** Per-assay (and per-age-group) probability with a default. */
export interface PerAssayValue {
  default: number;
  byAssay: Readonly<Record<string, number | { default?: number; byAgeGroup: Readonly<Record<string, number>> }>>;
}

export interface Program {
  designPrevalence: DesignPrevalence;
  targetConfidence: number;
  ropeSensitivity: PerAssayValue;
  ropeSpecificity: PerAssayValue;
  roundWindowDays: number;
  intervalDays: number;
  priorFreedom: number;
  introductionPerInterval: number;
  ropeBudget: number | undefined;
  followUpRadius: number;
  followUpRopes: number | undefined;
  sizeFor: 'barn' | 'site';
  /** Days after a round's last rope date until its results are due: before then a rope without a result is awaited, not missing. */
  resultGraceDays: number;
  /**
   * Infected barns at the site's design value (Cameron & Baldock 1998, two-stage); undefined:
   * every barn infected at the design prevalence.
   */
  barnDesignPrevalence: BarnDesignPrevalence | undefined;
  /** Negative rounds in a row that end a barn's positive state for a PCR assay (default 2). */
  clearAfterNegativeRounds: number;
  /** Ropes of the fixed tracking set in a positive barn (default 4). */
  trackingRopes: number;
  /** Pooled testing: undefined when the program plans no pools (pools on a rope sheet then count with the rope's own accuracy). */
  pooling: Pooling | undefined;
}

/** Several ropes tested in one PCR: the plan's pool size and the pool-level accuracy. */
export interface Pooling {
  poolSize: number;
  poolSensitivity: number;
  /** 1 unless configured. */
  poolSpecificity: number;
}

export interface AnalysisSettings {
  seed: number;
  permutations: number;
  alpha: number;
  spreadRealisations: number;
  spreadTransmission: number;
  spreadBackground: number;
  sizingModel: 'spatial' | 'hypergeometric';
}

/**
 * One group of pigs in a barn run all-in/all-out: the barn is filled on `placedOn` and emptied on
 * `closedOn` (null: still in the barn). Dates are yyyy-MM-dd, both days inside the group.
 */
export interface BarnGroup {
  id: string;
  /** As printed on pages (the id when the configuration gives none). */
  label: string;
  placedOn: string;
  closedOn: string | null;
}

export interface Barn {
  id: string;
  name: string;
  position: { x: number; y: number };
  ageGroup: string | undefined;
  layout: BarnLayout;
  /** Groups of pigs in placement order (empty: the barn is not run by groups). They never overlap. */
  groups: readonly BarnGroup[];
  pens: readonly Pen[];
  penById: ReadonlyMap<string, Pen>;
  /** Pens by canonical label key ("A01" and "a1" both find A1). */
  penByKey: ReadonlyMap<string, Pen>;
  contacts: PenContacts;
}

export interface Site {
  id: string;
  name: string;
  code: string;
  program: Program;
  /** Sample IDs that carry their barn, pen and date (named groups), matched in linear time. */
  samplePattern: ConfiguredPattern | undefined;
  barns: readonly Barn[];
  barnById: ReadonlyMap<string, Barn>;
  /** Where alerts go besides outbox/alerts.jsonl (undefined: the feed only). */
  alerts: SiteAlerts | undefined;
  /** The veterinarian's status of the herd (undefined: none configured). */
  herdStatus: HerdStatus | undefined;
}

export interface LoadBand {
  name: string;
  below: number;
}

/** An S/P band: S/P at or above `atOrAbove` (bands highest first). */
export interface SpLoadBand {
  name: string;
  atOrAbove: number;
}

/**
 * What an assay's numeric result is: `ct`, a PCR cycle threshold (lower = more nucleic acid), or
 * `sp-ratio`, an antibody ELISA's sample-to-positive ratio (higher = more antibody).
 */
export type Measure = 'ct' | 'sp-ratio';

interface AssayBase {
  id: string;
  name: string;
  target: string | undefined;
  notifiable: boolean;
  source: string | undefined;
}

/** A PCR assay read by Ct. */
export interface CtAssay extends AssayBase {
  measure: 'ct';
  positiveBelow: number;
  suspectBelow: number;
  cycleLimit: number;
  loadBands: readonly LoadBand[];
  sequencingBelow: number | undefined;
}

/**
 * An antibody ELISA read by S/P ratio: positive at or above `positiveAtOrAbove`, suspect from
 * `suspectAtOrAbove` (when given) up to it. A positive means exposure, not necessarily current
 * infection.
 */
export interface SpAssay extends AssayBase {
  measure: 'sp-ratio';
  positiveAtOrAbove: number;
  suspectAtOrAbove: number | undefined;
  /** Optional S/P bands, highest first; empty when none is configured. */
  loadBands: readonly SpLoadBand[];
  /** The PCR assay of the same pathogen, shown beside this one per pen. */
  pairedWith: string | undefined;
}

export type Assay = CtAssay | SpAssay;

/** The classes a lab's own call can name (the same as ropewatch's result classes). */
export type CallClass = 'positive' | 'suspect' | 'negative' | 'invalid';

/**
 * The state of a lab report: a preliminary report never replaces a final one; a corrected
 * report replaces what it corrects.
 */
export type ReportStatusKind = 'preliminary' | 'final' | 'corrected';

/**
 * A sample ID that a person confirmed as mistyped (config/corrections.yaml), and the ID it meant.
 * Applies to rows whose sample ID, normalised, is `written`; only in `file` when given, and only
 * on `line` of it when given.
 */
export interface SampleIdCorrection {
  /** Normalised (capitals, no spaces). */
  written: string;
  /** Canonical: a planned ID in its canonical spelling, any other ID normalised. */
  meant: string;
  file: string | undefined;
  line: number | undefined;
  note: string | undefined;
}

/** One lab's validated reading of one of its PCR assays. */
export interface CtLabAssay {
  labAssayName: string;
  assayId: string;
  measure: 'ct';
  positiveBelow: number;
  suspectBelow: number;
  cycleLimit: number;
}

/** One lab's validated reading of one of its antibody ELISAs (S/P ratio). */
export interface SpLabAssay {
  labAssayName: string;
  assayId: string;
  measure: 'sp-ratio';
  positiveAtOrAbove: number;
  /** Undefined: no suspect band (below the positive cutoff is negative). */
  suspectAtOrAbove: number | undefined;
}

/** One lab's validated reading of one of its assays. */
export type LabAssay = CtLabAssay | SpLabAssay;

export interface LabProfile {
  id: string;
  name: string;
  fileNamePattern: ConfiguredPattern | undefined;
  delimiter: ',' | ';' | '\t' | '|' | 'auto';
  decimal: '.' | ',';
  encoding: 'utf-8' | 'latin1' | 'utf-16le' | 'auto';
  dateFormat: string;
  skipLines: number;
  /**
   * `long`: one row per sample and assay (assay and Ct columns). `wide`: one row per sample and
   * one value column per lab assay, headed by its name (the keys of `assays`).
   */
  layout: 'long' | 'wide';
  /** Wide exports: value cells (folded) that mean the assay was not run; a blank cell always does. */
  notTestedTokens: ReadonlySet<string>;
  /** Excel workbooks from this lab: the sheet (undefined: the first visible one) and the header's row number. */
  workbook: { sheet: string | undefined; headerRow: number };
  columns: {
    sampleId: string;
    /** Long layout: the assay column (undefined in a wide layout). */
    assay: string | undefined;
    /** Long layout: the numeric result column, a Ct or an S/P ratio by the assay's measure (`result`, or `ct`, in the profile); undefined in a wide layout. */
    result: string | undefined;
    call: string | undefined;
    accession: string | undefined;
    collectedOn: string | undefined;
    reportedOn: string | undefined;
    internalControl: string | undefined;
    reportStatus: string | undefined;
  };
  notDetectedTokens: ReadonlySet<string>;
  blankIsNotDetected: boolean;
  notDetectedCodes: readonly number[];
  cycleLimitIsNotDetected: boolean;
  /**
   * Words that mean the internal (or extraction) control failed: found as whole words in the
   * internal-control, call and status cells, the result is invalid, never negative.
   */
  controlFailedTokens: readonly string[];
  /** The lab's words for its own call, per class (English words unless the profile gives its own). */
  callWords: Readonly<Record<CallClass, readonly string[]>>;
  /** The lab's words for the state of a report (reissueTokens count as corrected). */
  statusWords: Readonly<Record<ReportStatusKind, readonly string[]>>;
  /** Header names of the columns searched for status words (default: report status and call). */
  statusColumns: readonly string[];
  /** Keyed by the lab's assay name, lower-cased and trimmed. */
  assays: ReadonlyMap<string, LabAssay>;
  /** How the lab's HL7 v2 result messages read (undefined: the lab sends none). */
  hl7: Hl7Profile | undefined;
}

/** The columns of a rope sheet (`notes` and `pool` are optional; the others are required). */
export type RopeSheetColumn = 'sampleId' | 'site' | 'barn' | 'pen' | 'hungOn' | 'notes' | 'pool';

/**
 * The header names a rope sheet may give each column, as configured (matched ignoring case,
 * spaces and punctuation): the column's own name first, then the configured names or the
 * default synonyms.
 */
export type RopeSheetColumns = Readonly<Record<RopeSheetColumn, readonly string[]>>;

export interface Config {
  dir: string;
  organisation: string | undefined;
  analysis: AnalysisSettings;
  sites: readonly Site[];
  siteById: ReadonlyMap<string, Site>;
  assays: readonly Assay[];
  assayById: ReadonlyMap<string, Assay>;
  labs: readonly LabProfile[];
  labById: ReadonlyMap<string, LabProfile>;
  /** Confirmed sample-ID corrections (config/corrections.yaml; empty without it). */
  corrections: readonly SampleIdCorrection[];
  /** Which header names a rope sheet's columns may carry (sites.yaml `ropeSheet.columns`). */
  ropeSheet: { columns: RopeSheetColumns };
}
