/**
 * The PostgreSQL store as one object (`StoreBackend`, src/domain/store.ts), composed as the
 * SQLite one is (src/store/store.ts): one synchronous connection (syncConnection.ts), its schema
 * brought up to date (migrations.ts), the writer (writer.ts) and the reader (reader.ts) on it.
 * Reads inside an open file see that file's rows.
 */
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
} from '../../domain/records.js';
import type { RowRejection } from '../../domain/rejections.js';
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
} from '../../domain/store.js';
import { redactedLocation } from '../location.js';
import { StoreOpenError, type StoreOptions } from '../open.js';
import { migratePg, pgSchemaVersion } from './migrations.js';
import { PgStoreReader } from './reader.js';
import { PgError, SyncConnection } from './syncConnection.js';
import { lockSitesPg, replaceSiteFactsPg, tidyRowsPg } from './tidyFacts.js';
import { PgWriter } from './writer.js';

export class PgStore implements StoreBackend {
  private readonly writer: PgWriter;
  private readonly reader: PgStoreReader;

  /** On an open connection whose schema is up to date (see openPgStore). */
  constructor(readonly conn: SyncConnection) {
    this.reader = new PgStoreReader(conn, () => this.writer.fileOpen);
    this.writer = new PgWriter(conn, (sha256) => this.reader.findFileByHash(sha256));
  }

  /** Rolls back an open file and ends the connection. */
  close(): void {
    try {
      this.writer.rollback();
    } finally {
      this.conn.close();
    }
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

  // ---- Tidy facts and site locks (tidyFacts.ts) ----------------------------------------------

  replaceSiteFacts(siteId: string, facts: SiteFacts, fromRound = 1): void {
    replaceSiteFactsPg(this.conn, siteId, facts, fromRound);
  }
  tidyRows(view: TidyView, siteId: string, range: TidyRange = {}): Record<string, unknown>[] {
    return tidyRowsPg(this.conn, view, siteId, range);
  }
  lockSites(siteIds: readonly string[]): () => void {
    return lockSitesPg(this.conn, siteIds);
  }
}

/**
 * Opens the PostgreSQL store at `url` and brings its schema up to date; with `create: false`, a
 * database without the store's schema is refused rather than given one.
 * @throws StoreOpenError naming the store (never its password) when it cannot be reached or used.
 */
export function openPgStore(url: string, options: StoreOptions = {}): StoreBackend {
  const shown = redactedLocation(url);
  let conn: SyncConnection | undefined;
  try {
    conn = new SyncConnection(url);
    if (options.create === false && pgSchemaVersion(conn) === 0)
      throw new StoreOpenError(shown, 'holds no ropewatch store (no schema); nothing was created');
    migratePg(conn);
    return new PgStore(conn);
  } catch (error) {
    conn?.close();
    if (!(error instanceof PgError)) throw error;
    throw new StoreOpenError(shown, `cannot be opened (PostgreSQL ${error.code}: ${error.message})`);
  }
}
