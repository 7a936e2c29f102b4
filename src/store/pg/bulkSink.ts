/**
 * The PostgreSQL backend of the per-row flow (src/store/rowSink.ts), in bulk: `beginBatch` looks
 * up what the batch needs (batchFacts.ts), each call of the flow is answered from those facts and
 * from what the batch decided before it, and `endBatch` writes the batch (bulkFlush.ts).
 *
 * Rows created in a batch get provisional keys (above any stored id, in row order, one range per
 * table) so that supersession links can be formed before the flush; the flush takes that many ids
 * from each table's sequence in one round trip, in order, and puts them in. A sample's key
 * outlives its batch (the flow remembers samples across a file's batches): provisional sample
 * keys are mapped to their ids for the rest of the file.
 *
 * A reading (src/store/readings.ts) belongs to no batch: a row read in a way not met before has
 * its reading found or stored at once (readingRows.ts), so that readings are numbered in the order
 * rows are stored, as in the SQLite store; a store holds few, and each is remembered.
 */
import type { ResultRow, RopeLocation, RopeRow } from '../../domain/records.js';
import type { RowRejection } from '../../domain/rejections.js';
import type { EarlierReport, SupersessionLink } from '../../domain/store.js';
import { ReadingIds } from '../readings.js';
import { type BatchPreview, rejectionValues, type RowSink, type StoredSample } from '../rowSink.js';
import { type BatchFacts, lookUpBatch, penKey, type RopeFact, reportKey } from './batchFacts.js';
import { type BatchWrites, PROVISIONAL, resultValues, writeBatch } from './bulkFlush.js';
import { findOrStoreReading } from './readingRows.js';
import { noteTaken, type Sequences, type TakenMax, takeIds } from './sequences.js';
import type { SyncConnection } from './syncConnection.js';

/** Reason texts remembered between batches and files. */
const REASONS_REMEMBERED = 50_000;

function emptyWrites(): BatchWrites {
  return { samples: [], reasons: [], results: [], supersessions: [], ropes: [], rejections: [] };
}

export class PgBulkSink implements RowSink {
  private facts: BatchFacts | undefined;
  private writes: BatchWrites = emptyWrites();
  /** Samples created in this batch, by ID: their provisional keys. */
  private readonly createdSamples = new Map<string, number>();
  /** Samples with a result stored in this batch. */
  private readonly resultsStored = new Set<number>();
  /** The current report each stored-or-batch report key names, by result id. */
  private readonly currentKeyOf = new Map<number, string>();
  /** Provisional reason keys of this batch, by text. */
  private readonly batchReasons = new Map<string, number>();
  /** Reason text -> id, stored (committed or in this file). */
  private readonly reasonIds = new Map<string, number>();
  /** Each row's reading, stored (committed or in this file); forgotten on rollback like the reasons. */
  private readonly readingIds: ReadingIds;
  /** Ids of the samples this file created, by provisional key minus the range's start (-1: not flushed yet). */
  private fileSamples: number[] = [];
  /** Samples the open file stored results for that hang in no pen yet (their keys). */
  private unplaced: number[] = [];
  /** The largest id the open file took from each sequence. */
  taken: TakenMax = {};

  constructor(
    private readonly conn: SyncConnection,
    private readonly sequences: Sequences,
  ) {
    this.readingIds = new ReadingIds((values) => {
      const reading = findOrStoreReading(this.conn, values);
      if (reading.stored) noteTaken(this.taken, 'readings', [reading.id]);
      return reading.id;
    });
  }

  /** Forgets the file's state (a new file begins). */
  startFile(): void {
    this.fileSamples = [];
    this.unplaced = [];
    this.taken = {};
    this.dropBatch();
  }

  beginBatch(batch: BatchPreview): void {
    this.dropBatch();
    this.facts = lookUpBatch(this.conn, batch, (text) => this.reasonIds.has(text));
    for (const [text, id] of this.facts.reasons) this.rememberReason(text, id);
    for (const [key, list] of this.facts.current) for (const report of list) this.currentKeyOf.set(report.id, key);
  }

  endBatch(): void {
    const writes = this.writes;
    const ids = takeIds(this.conn, this.sequences, {
      samples: writes.samples.length,
      reasons: writes.reasons.length,
      results: writes.results.length,
      rejections: writes.rejections.length,
    });
    noteTaken(this.taken, 'samples', ids.samples);
    noteTaken(this.taken, 'reasons', ids.reasons);
    noteTaken(this.taken, 'results', ids.results);
    noteTaken(this.taken, 'rejected_rows', ids.rejections);
    ids.samples.forEach((id, index) => {
      this.fileSamples[(writes.samples[index]![0] as number) - PROVISIONAL.samples] = id;
    });
    writeBatch(this.conn, writes, ids, (key) => this.sampleKey(key));
    ids.reasons.forEach((id, index) => this.rememberReason(writes.reasons[index]![1] as string, id));
    this.dropBatch();
  }

  /** The samples the open file stored results for that hang in no pen yet (ids; every batch flushed). */
  unplacedSamples(): number[] {
    return this.unplaced.map((key) => this.sampleKey(key));
  }

  private dropBatch(): void {
    this.facts = undefined;
    this.writes = emptyWrites();
    this.createdSamples.clear();
    this.resultsStored.clear();
    this.currentKeyOf.clear();
    this.batchReasons.clear();
  }

  private rememberReason(text: string, id: number): void {
    if (this.reasonIds.size >= REASONS_REMEMBERED) this.reasonIds.clear();
    this.reasonIds.set(text, id);
  }

  private get batch(): BatchFacts {
    if (this.facts === undefined) throw new Error('no batch is open: the flow calls beginBatch first');
    return this.facts;
  }

  /** A sample key as the batch's facts know it: the id once flushed, else the provisional key. */
  private sampleKey(key: number): number {
    if (key < PROVISIONAL.samples || key >= PROVISIONAL.results) return key;
    const id = this.fileSamples[key - PROVISIONAL.samples];
    return id === undefined || id < 0 ? key : id;
  }

  findSample(sampleId: string): StoredSample | undefined {
    const created = this.createdSamples.get(sampleId);
    const stored = created === undefined ? this.batch.samples.get(sampleId) : undefined;
    if (created === undefined && stored === undefined) return undefined;
    const id = created ?? stored!.id;
    const rope = this.batch.ropeBySample.get(id);
    return {
      id,
      hasResults: stored?.hasResults === true || this.resultsStored.has(id),
      siteId: rope?.siteId ?? null,
      barnId: rope?.barnId ?? null,
      penId: rope?.penId ?? null,
      hungOn: rope?.hungOn ?? null,
    };
  }

  createSample(sampleId: string): number | undefined {
    if (this.createdSamples.has(sampleId) || this.batch.samples.has(sampleId)) return undefined;
    const key = PROVISIONAL.samples + this.fileSamples.length;
    this.fileSamples.push(-1);
    this.createdSamples.set(sampleId, key);
    this.writes.samples.push([key, sampleId]);
    return key;
  }

  reasonId(text: string): number {
    const known = this.reasonIds.get(text) ?? this.batchReasons.get(text);
    if (known !== undefined) return known;
    const key = PROVISIONAL.reasons + this.writes.reasons.length;
    this.batchReasons.set(text, key);
    this.writes.reasons.push([key, text]);
    return key;
  }

  insertResult(fileId: number, row: ResultRow, sampleKey: number, reasonId: number): number | undefined {
    // Before the duplicate check, as the SQLite store finds it for an INSERT that may take
    // nothing: a row stored before, read with new cutoffs, still stores its new reading.
    const readingId = this.readingIds.idOf(row);
    const sample = this.sampleKey(sampleKey);
    const key = reportKey(sample, row.assayId, row.labId);
    const contentKey = `${key}\u0000${row.contentKey}`;
    const facts = this.batch;
    if (facts.contentKeys.has(contentKey)) return undefined;
    facts.contentKeys.add(contentKey);
    const id = PROVISIONAL.results + this.writes.results.length;
    this.writes.results.push(resultValues(id, fileId, row, sample, reasonId, readingId));
    this.resultsStored.add(sample);
    const report: EarlierReport = {
      id,
      reportedOn: row.reportedOn,
      status: row.statusKind,
      statusWord: row.statusWord,
      resultClass: row.resultClass,
      ctRaw: row.ctRaw,
      labCall: row.labCall,
    };
    const list = facts.current.get(key);
    if (list === undefined) facts.current.set(key, [report]);
    else list.push(report);
    this.currentKeyOf.set(id, key);
    return id;
  }

  currentBefore(sampleKey: number, assayId: string, labId: string, newId: number): EarlierReport[] {
    const list = this.batch.current.get(reportKey(this.sampleKey(sampleKey), assayId, labId));
    return list === undefined ? [] : list.filter((report) => report.id < newId);
  }

  insertSupersession(link: SupersessionLink): void {
    this.writes.supersessions.push([link.oldResultId, link.newResultId, link.reason, link.kind]);
    const key = this.currentKeyOf.get(link.oldResultId);
    if (key === undefined) return;
    this.currentKeyOf.delete(link.oldResultId);
    const list = this.batch.current.get(key);
    if (list !== undefined)
      this.batch.current.set(
        key,
        list.filter((report) => report.id !== link.oldResultId),
      );
  }

  insertRope(
    fileId: number,
    sampleKey: number,
    row: RopeRow,
    source: 'sheet' | 'sample-pattern',
    poolKey: number | null,
  ): boolean {
    const sample = this.sampleKey(sampleKey);
    const facts = this.batch;
    const at = penKey(row);
    if (facts.ropeBySample.has(sample) || facts.ropeAt.has(at)) return false;
    const rope: RopeFact = {
      siteId: row.siteId,
      barnId: row.barnId,
      penId: row.penId,
      hungOn: row.hungOn,
      sample,
      sampleId: row.sampleId,
    };
    facts.ropeBySample.set(sample, rope);
    facts.ropeAt.set(at, rope);
    const pool = poolKey === null ? null : this.sampleKey(poolKey);
    if (pool !== null) facts.pools.add(pool);
    this.writes.ropes.push([
      sample,
      row.siteId,
      row.barnId,
      row.penId,
      row.hungOn,
      source,
      fileId,
      row.line,
      row.note,
      pool,
    ]);
    return true;
  }

  ropeBySample(sampleKey: number): RopeLocation | undefined {
    const rope = this.batch.ropeBySample.get(this.sampleKey(sampleKey));
    return rope === undefined
      ? undefined
      : { siteId: rope.siteId, barnId: rope.barnId, penId: rope.penId, hungOn: rope.hungOn };
  }

  ropeInPenOnDay(at: RopeLocation, sampleKey: number): string | undefined {
    const rope = this.batch.ropeAt.get(penKey(at));
    return rope === undefined || rope.sample === this.sampleKey(sampleKey) ? undefined : rope.sampleId;
  }

  ropeInPool(sampleKey: number): boolean {
    return this.batch.pools.has(this.sampleKey(sampleKey));
  }

  noteUnplaced(sampleKey: number): void {
    this.unplaced.push(sampleKey);
  }

  rejectionExists(_fileId: number, line: number, code: string): boolean {
    return this.batch.refusals.has(`${line}\u0000${code}`);
  }

  insertRejection(fileId: number, r: RowRejection): void {
    this.writes.rejections.push([
      PROVISIONAL.rejections + this.writes.rejections.length,
      ...rejectionValues(fileId, r),
    ]);
  }

  /** The file was rolled back (its ids are given back by the writer, from `taken`, before the next file). */
  forgetFile(): void {
    this.reasonIds.clear();
    this.readingIds.forget();
  }
}
