/**
 * The SQLite backend of the per-row flow (rowSink.ts): each call one prepared statement
 * (rowStatements.ts), run at once inside the file's transaction; batches need no preparation.
 */
import type { ResultRow, RopeLocation, RopeRow } from '../domain/records.js';
import type { RowRejection } from '../domain/rejections.js';
import type { EarlierReport, SupersessionLink } from '../domain/store.js';
import { rejectionValues, type RowSink, type StoredSample } from './rowSink.js';
import { ReadingIds } from './readings.js';
import { findOrInsertReading, runInsertResult, type RowStatements } from './rowStatements.js';

/** Reason texts remembered: a few per Ct value and assay. */
const REASONS_REMEMBERED = 50_000;

export class SqliteRowSink implements RowSink {
  /** Reason text -> id in `reasons`; forgotten on rollback (the rows it names may be gone). */
  private readonly reasonIds = new Map<string, number>();

  /** Each row's reading (readings.ts); forgotten on rollback like the reasons. */
  private readonly readingIds: ReadingIds;

  constructor(private readonly statements: RowStatements) {
    this.readingIds = new ReadingIds((values) => findOrInsertReading(statements, values));
  }

  beginBatch(): void {}
  endBatch(): void {}

  findSample(sampleId: string): StoredSample | undefined {
    return this.statements.sampleByText.get(sampleId) as StoredSample | undefined;
  }

  createSample(sampleId: string): number | undefined {
    const info = this.statements.insertSample.run(sampleId);
    return info.changes === 1 ? Number(info.lastInsertRowid) : undefined;
  }

  reasonId(text: string): number {
    let id = this.reasonIds.get(text);
    if (id === undefined) {
      id =
        (this.statements.reasonByText.get(text) as number | undefined) ??
        Number(this.statements.insertReason.run(text).lastInsertRowid);
      if (this.reasonIds.size >= REASONS_REMEMBERED) this.reasonIds.clear();
      this.reasonIds.set(text, id);
    }
    return id;
  }

  insertResult(fileId: number, row: ResultRow, sampleKey: number, reasonId: number): number | undefined {
    const info = runInsertResult(this.statements, fileId, row, sampleKey, reasonId, this.readingIds.idOf(row));
    return info.changes === 0 ? undefined : Number(info.lastInsertRowid);
  }

  currentBefore(sampleKey: number, assayId: string, labId: string, newId: number): EarlierReport[] {
    return this.statements.currentBefore.all(sampleKey, assayId, labId, newId) as EarlierReport[];
  }

  insertSupersession(link: SupersessionLink): void {
    this.statements.insertSupersession.run(link.oldResultId, link.newResultId, link.reason, link.kind);
  }

  insertRope(
    fileId: number,
    sampleKey: number,
    row: RopeRow,
    source: 'sheet' | 'sample-pattern',
    poolKey: number | null,
  ): boolean {
    const info = this.statements.insertRope.run(
      sampleKey,
      row.siteId,
      row.barnId,
      row.penId,
      row.hungOn,
      source,
      fileId,
      row.line,
      row.note,
      poolKey,
    );
    return info.changes === 1;
  }

  ropeBySample(sampleKey: number): RopeLocation | undefined {
    return this.statements.ropeBySample.get(sampleKey) as RopeLocation | undefined;
  }

  ropeInPenOnDay(at: RopeLocation, sampleKey: number): string | undefined {
    const clash = this.statements.ropeInPenOnDay.get(at.siteId, at.barnId, at.penId, at.hungOn, sampleKey) as
      | { sampleId: string }
      | undefined;
    return clash?.sampleId;
  }

  ropeInPool(sampleKey: number): boolean {
    return this.statements.ropeInPool.get(sampleKey) !== undefined;
  }

  noteUnplaced(sampleKey: number): void {
    this.statements.noteUnplaced.run(sampleKey);
  }

  rejectionExists(fileId: number, line: number, code: string): boolean {
    return this.statements.rejectionExists.get(fileId, line, code) !== undefined;
  }

  insertRejection(fileId: number, r: RowRejection): void {
    this.statements.insertRejection.run(...rejectionValues(fileId, r));
  }

  forgetFile(): void {
    this.reasonIds.clear();
    this.readingIds.forget();
  }
}
