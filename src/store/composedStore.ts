/**
 * What both stores share: a store is its writer and its reader over one connection, and answers
 * every StoreWriter and StoreReader question by handing it to them (SQLite: store.ts, PostgreSQL:
 * pg/store.ts). A backend adds how it opens and closes, and its tidy facts and site locks.
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
  RopeHorizon,
  SampleChoice,
  SiteChange,
  SiteFacts,
  SiteInputs,
  SiteOutline,
  StoreBackend,
  StoreCounts,
  StoredFileCounts,
  StoreReader,
  StoreWriter,
  TidyCells,
  TidyRange,
  TidyView,
} from '../domain/store.js';

export abstract class ComposedStore implements StoreBackend {
  constructor(
    protected readonly writer: StoreWriter,
    protected readonly reader: StoreReader,
  ) {}

  abstract close(): void;
  abstract replaceSiteFacts(siteId: string, facts: SiteFacts, fromRound?: number): void;
  abstract tidyRows(view: TidyView, siteId: string, range?: TidyRange): TidyCells;
  abstract lockSites(siteIds: readonly string[]): () => void;

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
  bumpSiteVersions(changes: readonly SiteChange[]): void {
    this.writer.bumpSiteVersions(changes);
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
  siteInputsChosen(
    siteId: string,
    choose: SampleChoice,
    horizon?: RopeHorizon,
  ): { outline: SiteOutline; inputs: SiteInputs } {
    return this.reader.siteInputsChosen(siteId, choose, horizon);
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
}
