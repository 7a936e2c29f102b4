/**
 * What a store does, apart from how: a unit of work per input file (`StoreWriter`: beginFile ...
 * commit) and the read queries (`StoreReader`), so that a second backend can take the SQLite
 * one's place. The rules that decide a row (which report governs, where a rope may hang) are not
 * the store's: ingest hands them to `beginFile` as `RowRules`, and the store applies them to what
 * it finds stored.
 */
import type { RowRejection } from './rejections.js';
import type {
  MistypedRefusal,
  PlannedRope,
  ReplacedReport,
  ReportReading,
  ResultRow,
  RopeLocation,
  RopeRow,
  RowList,
  StoredFile,
  StoredResult,
  StoredRope,
  Supersession,
  SupersessionKind,
} from './records.js';
import type { CallClass, ReportStatusKind } from '../config/types.js';
import type { ResultClass } from '../interpret/classify.js';

/** Sample IDs and refused rows listed in a receipt (all are counted, and all are in the store). */
export const RECEIPT_LIST_LIMIT = 500;

/** One report that replaced another, with both readings (for the receipt). */
export interface SupersessionNote {
  /** The line of this file whose row took part. */
  line: number;
  sampleId: string;
  assayId: string;
  labId: string;
  kind: SupersessionKind;
  /** Whether this file's row is the one now current (false: a report stored before stays current). */
  thisFileCurrent: boolean;
  /** The report no longer current. */
  replaced: ReportReading;
  /** The report current in its place. */
  current: ReportReading;
  reason: string;
}

/** A row this file's batch read as invalid, with the reason (for the receipt). */
export interface InvalidNote {
  line: number;
  sampleId: string;
  assayId: string;
  reason: string;
}

/** A row whose lab call names another class than its value gives (for the receipt). */
export interface CallDisagreement {
  line: number;
  sampleId: string;
  assayId: string;
  labCall: string;
  labCallClass: CallClass;
  resultClass: ResultClass;
  ctRaw: string;
}

/** A row read under another sample ID because a person confirmed the correction (config/corrections.yaml). */
export interface IdCorrectionNote {
  line: number;
  written: string;
  meant: string;
}

/** What storing one batch did, for the receipt. */
export interface InsertCounts {
  inserted: number;
  duplicates: number;
  superseded: number;
  rejections: RowRejection[];
  warnings: string[];
  supersessions: SupersessionNote[];
  invalid: InvalidNote[];
  callDisagreements: CallDisagreement[];
  idCorrections: IdCorrectionNote[];
}

export function emptyCounts(): InsertCounts {
  return {
    inserted: 0,
    duplicates: 0,
    superseded: 0,
    rejections: [],
    warnings: [],
    supersessions: [],
    invalid: [],
    callDisagreements: [],
    idCorrections: [],
  };
}

/** The same bytes were stored (by another process) while this one waited for the write lock. */
export class FileAlreadyStoredError extends Error {
  override readonly name = 'FileAlreadyStoredError';
  constructor(readonly known: StoredFile) {
    super(`the same bytes were stored as ${known.name} on ${known.receivedAt}`);
  }
}

// ---- The rules a file's rows are stored by (pure; ingest implements them) -----------------------

/** A report as the supersession rule reads it. */
export interface ReportFacts {
  reportedOn: string | null;
  status: ReportStatusKind | null;
  /** The word that gave the status (as configured), or the status cell. */
  statusWord: string | null;
}

export interface SupersessionDecision {
  /** Which report stays current: the one stored before (`old`) or the one arriving (`next`). */
  current: 'old' | 'next';
  kind: SupersessionKind;
  reason: string;
}

/** A stored report of the same sample, assay and lab that is still current when a row arrives. */
export type EarlierReport = ReportFacts & ReportReading & { id: number };

/** A link the store writes: `oldResultId` is no longer current, `newResultId` is in its place. */
export interface SupersessionLink {
  oldResultId: number;
  newResultId: number;
  reason: string;
  kind: SupersessionKind;
}

/** What the open file knows of where a sample's rope hangs (for the placement rules). */
export interface SampleRopeState {
  /** Where its rope hangs ("site/barn/pen/day"), stored before or placed by this file. */
  ropedAt: string | undefined;
  /** The location its sample ID encodes that this file tried to place it at. */
  patternTriedAt: string | undefined;
  /** Why its encoded location was refused, when it was: every row of the sample is refused alike. */
  patternRefusal: Omit<RowRejection, 'line'> | undefined;
}

/** What to do with a result row whose sample ID encodes its pen and day. */
export type EncodedRopeStep =
  /** The rope hangs there already (or its first row was placed): store the row. */
  | { kind: 'store' }
  /** The sample hangs elsewhere by an earlier rope: store the row there, with a warning. */
  | { kind: 'store-elsewhere'; warning: string }
  /** Place the rope first; store the row only if it goes in. */
  | { kind: 'place' }
  /** The location was refused for an earlier row of the sample: refuse this one alike. */
  | { kind: 'refuse'; rejection: RowRejection };

/** Why a rope could not go in, from what the store holds. */
export type RopeConflict =
  /** The same sample hangs in the same place already: nothing to add. */
  { kind: 'already-hung' } | { kind: 'refused'; rejection: RowRejection };

/** What the store found where a rope would not go in. */
export interface RopeConflictFacts {
  /** Where the same sample hangs already, if it does. */
  existing: RopeLocation | undefined;
  /** The sample whose rope holds the pen that day, if one does. */
  clashSampleId: string | undefined;
}

/** What the store knows of a rope-sheet row's sample and pool. */
export interface PoolFacts {
  /** The row has no pool, and its sample ID is already the ID of a pool of earlier ropes. */
  sampleNamesPool: boolean;
  /** Where a rope whose sample ID is the row's pool ID hangs, if one does. */
  poolRopedAt: string | undefined;
}

/** The decisions a file's rows are stored by. Pure functions of what the store finds. */
export interface RowRules {
  /** Links an arriving result to the current reports of its sample, assay and lab (oldest first). */
  supersede(
    earlier: readonly EarlierReport[],
    row: ResultRow,
    newResultId: number,
  ): { links: SupersessionLink[]; notes: SupersessionNote[] };
  /** The step for a result row whose sample ID encodes `location` (a locationKey). */
  encodedRope(sample: SampleRopeState, row: ResultRow, location: string): EncodedRopeStep;
  /** A refusal of the encoded rope, restated for the result row (it names the sample ID cell). */
  encodedRopeRefusal(refusal: RowRejection, sampleIdField: string, sampleId: string): RowRejection;
  /** Why a rope did not go in: it hangs there already, or a refusal. */
  ropeConflict(row: RopeRow, source: 'sheet' | 'sample-pattern', found: RopeConflictFacts): RopeConflict;
  /** A refusal of a rope-sheet row for its pool, or undefined when the pool is fine. */
  poolRefusal(row: RopeRow, facts: PoolFacts): RowRejection | undefined;
}

// ---- The store's interfaces ---------------------------------------------------------------------

/** An accepted file as `beginFile` records it. */
export interface FileToStore {
  name: string;
  sha256: string;
  kind: 'results' | 'ropes';
  labId: string | null;
  receivedAt: string;
  encodingNote: string;
  byteLength: number;
}

/** A refused file as it is recorded (with its bytes, when kept). */
export interface RejectedFile {
  name: string;
  /** What the file was recognised as before it was refused, when it got that far. */
  kind?: 'results' | 'ropes' | 'unknown';
  sha256: string;
  receivedAt: string;
  reasonCode: string;
  reason: string;
  line: number | undefined;
  field: string | undefined;
  bytes: Buffer | undefined;
  byteLength: number;
  labId: string | null;
}

/** What the open file changed, for its receipt. */
export interface OpenFileEffects {
  /** Its result samples with no rope yet (the first RECEIPT_LIST_LIMIT by ID). */
  unresolved: string[];
  unresolvedCount: number;
  /** Earlier results its ropes now place. */
  resolved: string[];
  /** The sites it touched. */
  sites: string[];
  /** What it changed of each site it touched, in the order of `sites`. */
  changes: SiteChange[];
}

/**
 * What one committed file changed of a site's rounds, logged under the site version it made: a
 * build whose outputs show an earlier version re-forms only the rounds these changes can reach
 * (src/rounds/roundHorizon.ts).
 */
export interface SiteChange {
  siteId: string;
  /**
   * The earliest day among the ropes the file hung, the ropes whose sample or pool it reported and
   * the planned ropes it reported or hung (their due date, or the collection date when earlier): a
   * round that started before the round holding this day is unchanged. null: the file changed no
   * rope of any round (plans without results are read whole by every build).
   */
  fromDay: string | null;
}

/** What the change log holds for a site after a version. */
export interface SiteChangesSince {
  /** How many commits it logs after the version (the log is whole when it is the versions between). */
  commits: number;
  /** The earliest fromDay among them (null when none names a day). */
  fromDay: string | null;
}

/** A refused row of a stored file that nothing of that file has taken the place of. */
export interface OpenRefusal {
  line: number;
  code: string;
  value: string | null;
}

/** The work on one open file: everything goes in at `commit`, or nothing at `rollback`. */
export interface FileWriter {
  /** Stores a batch of result rows, placing encoded ropes and linking reissues by `rules`. */
  insertResults(fileId: number, rows: RowList<ResultRow>, sampleIdField?: string): InsertCounts;
  /** Stores a batch of rope-sheet rows. */
  insertRopes(fileId: number, rows: readonly RopeRow[]): InsertCounts;
  insertRejections(fileId: number, rejections: readonly RowRejection[]): void;
  finishFile(fileId: number, counts: { accepted: number; rejected: number; duplicate: number }): void;
  openFileEffects(): OpenFileEffects;
  /**
   * Counts up the version of each site the open file changed (their outputs are now behind) and
   * logs what it changed under the new version.
   */
  bumpSiteVersions(changes: readonly SiteChange[]): void;
  commit(): void;
  rollback(): void;
}

export interface BeginFileOptions {
  /** The id of the accepted record of the same bytes, read again (for rows a correction now covers). */
  reopen?: number;
  /** Sites an earlier attempt at the file touched before a StoreConflictError: locked first (a backend with row-level writers). */
  lockSites?: readonly string[];
}

/** The writing side of a store: one file open at a time, plus the writes outside a file. */
export interface StoreWriter extends FileWriter {
  /**
   * Opens the file's unit of work (taking the write lock) and records the file; returns its id.
   * @throws FileAlreadyStoredError when the same bytes are found stored once the lock is held.
   */
  beginFile(file: FileToStore, rules: RowRules, options?: BeginFileOptions): number;
  readonly fileOpen: boolean;
  recordRejectedFile(file: RejectedFile): void;
  /** Replaces a site's plan for the round after `afterRound` (ropes with results stay). */
  replacePlan(siteId: string, afterRound: number, ropes: readonly PlannedRope[]): void;
  markOutputsBuilt(outbox: string, siteId: string, siteVersion: number, configDigest: string): void;
  setMeta(key: string, value: string): void;
}

/** Everything the analysis of one site reads, loaded at once from one committed state. */
export interface SiteInputs {
  /** How many committed files have changed the site (0 for none). */
  version: number;
  ropes: StoredRope[];
  /** Current results of the site's ropes, pools and planned ropes. */
  results: StoredResult[];
  planned: PlannedRope[];
  plannedWithoutResults: PlannedRope[];
  replaced: ReplacedReport[];
  mistyped: MistypedRefusal[];
}

/**
 * What a build reads of a site before its ropes: the plans and refusals (few rows) whole, and the
 * change log, from which it decides the day to read ropes from (RopeHorizon).
 */
export interface OutlineHead {
  version: number;
  planned: PlannedRope[];
  plannedWithoutResults: PlannedRope[];
  /** The sample IDs of planned ropes without results that hang as ropes of the site. */
  plannedPlaced: string[];
  mistyped: MistypedRefusal[];
}

/**
 * What tells whether a round's inputs changed, without its results' contents: the site's ropes
 * (as `SiteInputs.ropes`) from `ropesFrom` on, the reports of each of their samples as keys, and
 * the plans and refusals whole.
 */
export interface SiteOutline extends OutlineHead {
  /** The ropes hung on or after `ropesFrom` (every rope when it is undefined). */
  ropes: StoredRope[];
  ropesFrom: string | undefined;
  /**
   * By sample ID (those ropes, their pools, and the site's planned ropes): how many reports it
   * has, the newest one's id and how many of them another replaced ("3/1520/2"). Reports and the
   * links between them are only ever added, so a new report, a correction or a new link changes it.
   */
  reportKeys: ReadonlyMap<string, string>;
}

/**
 * A site's inputs of the ropes a build re-forms: `choose` reads the outline and returns the
 * sample IDs whose results and replaced reports are read (undefined: all of the site's).
 */
export type SampleChoice = (outline: SiteOutline) => readonly string[] | undefined;

/**
 * The day from which a build reads a site's ropes (undefined: all of them), decided from the
 * outline's head and the change log after a version (`changesSince`), in the same committed state.
 */
export type RopeHorizon = (
  head: OutlineHead,
  changesSince: (version: number) => SiteChangesSince,
) => string | undefined;

/** A stored file with its row counts. */
export type StoredFileCounts = StoredFile & { rowsAccepted: number; rowsRejected: number; rowsDuplicate: number };

/** The read queries of a store. */
export interface StoreReader {
  /** Runs `read` against one committed state. */
  snapshot<T>(read: () => T): T;
  siteInputs(siteId: string): SiteInputs;
  /**
   * The site's outline and, from the same committed state, its inputs with the results and
   * replaced reports of the samples `choose` names only.
   */
  siteInputsChosen(
    siteId: string,
    choose: SampleChoice,
    horizon?: RopeHorizon,
  ): { outline: SiteOutline; inputs: SiteInputs };
  findFileByHash(sha256: string): StoredFile | undefined;
  openRefusals(fileId: number): OpenRefusal[];
  getMeta(key: string): string | undefined;
  siteVersion(siteId: string): number;
  outputsBuilt(outbox: string, siteId: string): { siteVersion: number; configDigest: string } | undefined;
  ropes(siteId?: string): StoredRope[];
  currentResults(siteId?: string): StoredResult[];
  supersessions(): Supersession[];
  replacedReports(siteId: string, sampleIds?: readonly string[]): ReplacedReport[];
  mistypedRefusals(siteId: string): MistypedRefusal[];
  unresolvedSampleIds(): string[];
  plannedRopes(siteId?: string): PlannedRope[];
  plannedWithoutResults(siteId: string): PlannedRope[];
  files(): StoredFileCounts[];
  rejectedRows(fileId: number): RowRejection[];
  counts(): StoreCounts;
}

export interface StoreCounts {
  files: number;
  rejectedFiles: number;
  results: number;
  currentResults: number;
  ropes: number;
  rejectedRows: number;
  planned: number;
}

// ---- The tidy facts (the outputs give them to the store; its views join them to the results) ----

export type FactValue = string | number | boolean | null;

/** A rope's round as the outputs formed it: what the store's results view joins on. */
export interface RopeRound {
  sampleId: string;
  round: number;
  roundId: string;
  roundStart: string;
  groupId: string | null;
  barnId: string;
  penId: string;
  /** The pool the rope was tested in (its results are the pool's), else null. */
  poolId: string | null;
}

/** A site's facts of some of its rounds: each rope's round, the rounds' figures, the alerts. */
export interface SiteFacts {
  ropeRounds: readonly RopeRound[];
  rounds: readonly Record<string, FactValue>[];
  alerts: readonly Record<string, FactValue>[];
}

/** The store's read-only views of the tidy tables, by table. */
export const TIDY_VIEWS = { results: 'tidy_results', rounds: 'tidy_rounds', alerts: 'tidy_alerts' } as const;
export type TidyView = keyof typeof TIDY_VIEWS;

/**
 * Which rows of a view: rounds that began in [from, to] (ISO dates; either may be left open) and,
 * with `fromRound`, that round or a later one.
 */
export interface TidyRange {
  from?: string | undefined;
  to?: string | undefined;
  fromRound?: number | undefined;
}

/**
 * A view's rows as cells, each row in the order of `names`: the outputs read every cell of every
 * row once, and an object per row (keyed by some thirty column names) costs more to build and to
 * read than the row itself.
 */
export interface TidyCells {
  /** The view's column names (empty when no row came back to name them: the PostgreSQL store). */
  readonly names: readonly string[];
  readonly rows: readonly (readonly unknown[])[];
}

/** The tidy facts of a store: written by each build of a site's outputs, read back through the views. */
export interface StoreFacts {
  /** Replaces a site's facts of round `fromRound` on (all of them by default) in one short write. */
  replaceSiteFacts(siteId: string, facts: SiteFacts, fromRound?: number): void;
  /** A view's rows for one site in `range`, by round, then what the row is about. */
  tidyRows(view: TidyView, siteId: string, range?: TidyRange): TidyCells;
  /**
   * Holds the store's lock on each site until the returned function is called, so that two
   * processes sharing one store never build one site's outputs and plan at once (taken in one
   * fixed order, so two holders of several sites never wait on each other).
   */
  lockSites(siteIds: readonly string[]): () => void;
}

/** A store: its writer, its reader and its tidy facts over one connection. */
export interface StoreBackend extends StoreWriter, StoreReader, StoreFacts {
  close(): void;
}

/**
 * Another process held the store's write lock longer than this one would wait (SQLite's
 * SQLITE_BUSY after the busy timeout). Nothing of the file was stored; it stays where it was.
 */
export class StoreBusyError extends Error {
  override readonly name = 'StoreBusyError';
  readonly code = 'store-busy';
  constructor(readonly waitedMs: number) {
    super(`another process held the store's write lock for more than ${Math.round(waitedMs / 1000)} s`);
  }
}

/**
 * Another process stored rows this file's writes met first (a sample, a report, a rope or a link
 * it had not seen when it decided its rows), or the server gave up one of two transactions
 * (deadlock, serialization failure). Nothing of the file was stored: the transaction was rolled
 * back, and storing the file again decides its rows afresh. `sites` are the sites the attempt
 * touched, to be locked (in sorted order) by the next attempt (beginFile's `lockSites`).
 */
export class StoreConflictError extends Error {
  override readonly name = 'StoreConflictError';
  readonly code = 'store-conflict';
  constructor(
    readonly sites: readonly string[],
    readonly detail: string,
  ) {
    super(`another process stored rows this file meets (${detail}); nothing of the file was stored`);
  }
}
