/**
 * The SQLite store (better-sqlite3 12), as one object: its writer (writer.ts: one transaction
 * per input file, beginFile ... commit) and its reader (reader.ts: the read queries) over one
 * connection opened by open.ts. It implements `StoreBackend` (src/domain/store.ts), the
 * interface another backend would implement too; ingest and the outputs know only that.
 */
import type Database from 'better-sqlite3';
import type {
  MistypedRefusal,
  PlannedRope,
  ReplacedReport,
  ResultRow,
  RopeRow,
  RowList,
  StoredFile,
  StoredResult,
  StoredRope,
  Supersession,
} from '../domain/records.js';
import type { RowRejection } from '../domain/rejections.js';
import type {
  BeginFileOptions,
  FileToStore,
  InsertCounts,
  OpenFileEffects,
  OpenRefusal,
  RejectedFile,
  RowRules,
  SampleChoice,
  SiteFacts,
  SiteInputs,
  SiteOutline,
  StoreBackend,
  StoreCounts,
  StoredFileCounts,
  TidyRange,
  TidyView,
} from '../domain/store.js';
import { openDatabase, type StoreOptions } from './open.js';
import { SqliteReader } from './reader.js';
import { readTidyView, replaceSiteFacts } from './tidyFacts.js';
import { SqliteWriter } from './writer.js';

export type {
  CallDisagreement,
  IdCorrectionNote,
  InsertCounts,
  InvalidNote,
  SupersessionNote,
} from '../domain/store.js';
export { FileAlreadyStoredError, RECEIPT_LIST_LIMIT } from '../domain/store.js';
export type {
  MistypedRefusal,
  PlannedRope,
  ReplacedReport,
  ReportReading,
  StoredFile,
  StoredReading,
  StoredResult,
  StoredRope,
  Supersession,
} from '../domain/records.js';
export { StoreOpenError, type StoreOptions } from './open.js';

export class Store implements StoreBackend {
  readonly db: Database.Database;
  private readonly writer: SqliteWriter;
  private readonly reader: SqliteReader;

  /**
   * Opens (or, unless `create` is false, creates) the store and brings its schema up to date.
   * @throws StoreOpenError naming the file when it is missing (and may not be created), a folder,
   *   not SQLite, damaged, or a SQLite database of another program.
   */
  constructor(file: string, options: StoreOptions = {}) {
    this.db = openDatabase(file, options);
    this.writer = new SqliteWriter(this.db);
    this.reader = new SqliteReader(this.db, () => this.writer.fileOpen);
  }

  close(): void {
    this.writer.rollback();
    this.db.close();
  }

  // ---- Writing (writer.ts) -------------------------------------------------------------------

  get fileOpen(): boolean {
    return this.writer.fileOpen;
  }
  beginFile(file: FileToStore, rules: RowRules, options: BeginFileOptions = {}): number {
    return this.writer.beginFile(file, rules, options);
  }
  insertResults(fileId: number, rows: RowList<ResultRow>, sampleIdField?: string): InsertCounts {
    return this.writer.insertResults(fileId, rows, sampleIdField);
  }
  insertRopes(fileId: number, rows: readonly RopeRow[]): InsertCounts {
    return this.writer.insertRopes(fileId, rows);
  }
  insertRejections(fileId: number, rejections: readonly RowRejection[]): void {
    this.writer.insertRejections(fileId, rejections);
  }
  finishFile(fileId: number, counts: { accepted: number; rejected: number; duplicate: number }): void {
    this.writer.finishFile(fileId, counts);
  }
  openFileEffects(): OpenFileEffects {
    return this.writer.openFileEffects();
  }
  bumpSiteVersions(siteIds: readonly string[]): void {
    this.writer.bumpSiteVersions(siteIds);
  }
  commit(): void {
    this.writer.commit();
  }
  rollback(): void {
    this.writer.rollback();
  }
  recordRejectedFile(file: RejectedFile): void {
    this.writer.recordRejectedFile(file);
  }
  replacePlan(siteId: string, afterRound: number, ropes: readonly PlannedRope[]): void {
    this.writer.replacePlan(siteId, afterRound, ropes);
  }
  markOutputsBuilt(outbox: string, siteId: string, siteVersion: number, configDigest: string): void {
    this.writer.markOutputsBuilt(outbox, siteId, siteVersion, configDigest);
  }
  setMeta(key: string, value: string): void {
    this.writer.setMeta(key, value);
  }

  // ---- Reading (reader.ts) -------------------------------------------------------------------

  snapshot<T>(read: () => T): T {
    return this.reader.snapshot(read);
  }
  siteInputs(siteId: string): SiteInputs {
    return this.reader.siteInputs(siteId);
  }
  siteInputsChosen(siteId: string, choose: SampleChoice): { outline: SiteOutline; inputs: SiteInputs } {
    return this.reader.siteInputsChosen(siteId, choose);
  }
  findFileByHash(sha256: string): StoredFile | undefined {
    return this.reader.findFileByHash(sha256);
  }
  openRefusals(fileId: number): OpenRefusal[] {
    return this.reader.openRefusals(fileId);
  }
  getMeta(key: string): string | undefined {
    return this.reader.getMeta(key);
  }
  siteVersion(siteId: string): number {
    return this.reader.siteVersion(siteId);
  }
  outputsBuilt(outbox: string, siteId: string): { siteVersion: number; configDigest: string } | undefined {
    return this.reader.outputsBuilt(outbox, siteId);
  }
  ropes(siteId?: string): StoredRope[] {
    return this.reader.ropes(siteId);
  }
  currentResults(siteId?: string): StoredResult[] {
    return this.reader.currentResults(siteId);
  }
  supersessions(): Supersession[] {
    return this.reader.supersessions();
  }
  replacedReports(siteId: string, sampleIds?: readonly string[]): ReplacedReport[] {
    return this.reader.replacedReports(siteId, sampleIds);
  }
  mistypedRefusals(siteId: string): MistypedRefusal[] {
    return this.reader.mistypedRefusals(siteId);
  }
  unresolvedSampleIds(): string[] {
    return this.reader.unresolvedSampleIds();
  }
  plannedRopes(siteId?: string): PlannedRope[] {
    return this.reader.plannedRopes(siteId);
  }
  plannedWithoutResults(siteId: string): PlannedRope[] {
    return this.reader.plannedWithoutResults(siteId);
  }
  files(): StoredFileCounts[] {
    return this.reader.files();
  }
  rejectedRows(fileId: number): RowRejection[] {
    return this.reader.rejectedRows(fileId);
  }
  counts(): StoreCounts {
    return this.reader.counts();
  }

  // ---- Tidy facts (tidyFacts.ts) -------------------------------------------------------------

  replaceSiteFacts(siteId: string, facts: SiteFacts, fromRound = 1): void {
    replaceSiteFacts(this.db, siteId, facts, fromRound);
  }
  tidyRows(view: TidyView, siteId: string, range: TidyRange = {}): Record<string, unknown>[] {
    return readTidyView(this.db, view, siteId, range);
  }
  /** Nothing to take: SQLite's write lock and the outbox's lock file per site (src/outputs.ts) serve. */
  lockSites(_siteIds: readonly string[]): () => void {
    return () => {};
  }
}
