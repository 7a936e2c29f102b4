/**
 * Stores the rows of the open file: samples, results, ropes, refusals, and the links between
 * reports. What a row means is decided elsewhere: the `RowRules` ingest hands to `beginFile`
 * decide which report governs and where a rope may hang, from the facts looked up here.
 */
import type { ResultRow, RopeLocation, RopeRow, RowList, StoredRope } from '../domain/records.js';
import { locationKey } from '../domain/records.js';
import type { RowRejection } from '../domain/rejections.js';
import {
  emptyCounts,
  RECEIPT_LIST_LIMIT,
  type EarlierReport,
  type InsertCounts,
  type RowRules,
  type SampleRopeState,
} from '../domain/store.js';
import { runInsertResult, type RowStatements } from './rowStatements.js';

/** A sample as the store holds it, with its rope if it hangs in a pen. */
interface StoredSample {
  id: number;
  hasResults: number;
  siteId: string | null;
  barnId: string | null;
  penId: string | null;
  hungOn: string | null;
}

/** What the open file knows of one sample. */
interface SampleInFile extends SampleRopeState {
  key: number;
  /** The store held results for it before this file. */
  hadResults: boolean;
  /** Assay and lab of each row this file has stored for it, in pairs (a sample has a few assays). */
  reported: string[];
  ropeSiteId: string | undefined;
  /** The file stored a result for it, and counted it for the receipt. */
  counted: boolean;
}

/** What the open file changed, gathered while it is stored (for its receipt and outputs). */
export interface FileEffects {
  sites: Set<string>;
  /** Samples with results before this file that its ropes placed (the first ones by ID, bounded). */
  resolved: string[];
}

/** Samples remembered per file; rows of one sample usually sit together. */
const SAMPLES_REMEMBERED = 10_000;
/** Reason texts remembered: a few per Ct value and assay. */
const REASONS_REMEMBERED = 50_000;

export class RowWriter {
  /**
   * Samples the open file has met (sample ID -> state), bounded: a sample's rows usually sit
   * together. A sample dropped from here is looked up again, never assumed new.
   */
  private readonly samplesThisFile = new Map<string, SampleInFile>();
  /** Whether the last sample met was new to the store: files are mostly one or the other. */
  private lastSampleWasNew = false;
  /** The last sample met, by its ID: a sample's assays come on neighbouring rows. */
  private lastSample: { sampleId: string; sample: SampleInFile } | undefined;
  /** Reason text -> id in `reasons`; forgotten on rollback (the rows it names may be gone). */
  private readonly reasonIds = new Map<string, number>();
  effects: FileEffects = { sites: new Set(), resolved: [] };
  /** The last encoded rope met, and its location key (ropeKey). */
  private lastRope: RopeLocation | undefined;
  private lastRopeKey = '';

  constructor(private readonly statements: RowStatements) {}

  /** Forgets what the last file met. */
  startFile(): void {
    this.samplesThisFile.clear();
    this.lastSample = undefined;
    this.lastRope = undefined;
    this.effects = { sites: new Set(), resolved: [] };
  }

  /** Ends the file; after a rollback, reasons first stored by it are gone with it. */
  endFile(rolledBack: boolean): void {
    if (rolledBack) this.reasonIds.clear();
    this.samplesThisFile.clear();
    this.lastSample = undefined;
  }

  /**
   * The open file's record of a sample, creating the sample when it is new to the store. A sample
   * new to the store has no earlier report to supersede, which spares the look-up on most rows.
   */
  private sampleInFile(sampleId: string): SampleInFile {
    const last = this.lastSample;
    if (last !== undefined && last.sampleId === sampleId) return last.sample;
    const sample = this.samplesThisFile.get(sampleId) ?? this.meetSample(sampleId);
    this.lastSample = { sampleId, sample };
    return sample;
  }

  /** A sample the open file has not met yet (or has forgotten): looked up or created. */
  private meetSample(sampleId: string): SampleInFile {
    // One statement for the common case: after a new sample try inserting first, after a known
    // one look it up first (a lab export of new samples; results for ropes already on a sheet).
    let created = this.lastSampleWasNew ? this.createSample(sampleId) : undefined;
    let stored: StoredSample | undefined;
    if (created === undefined) {
      stored = this.statements.sampleByText.get(sampleId) as StoredSample | undefined;
      if (stored === undefined) created = this.createSample(sampleId)!;
    }
    this.lastSampleWasNew = created !== undefined;
    const sample: SampleInFile = {
      key: created ?? stored!.id,
      hadResults: stored?.hasResults === 1,
      reported: [],
      ropedAt: stored?.siteId == null ? undefined : locationKey(stored as RopeLocation),
      ropeSiteId: stored?.siteId ?? undefined,
      patternTriedAt: undefined,
      patternRefusal: undefined,
      counted: false,
    };
    if (this.samplesThisFile.size >= SAMPLES_REMEMBERED) this.samplesThisFile.clear();
    this.samplesThisFile.set(sampleId, sample);
    return sample;
  }

  /** Creates the sample and returns its key, or undefined when it exists already. */
  private createSample(sampleId: string): number | undefined {
    const info = this.statements.insertSample.run(sampleId);
    return info.changes === 1 ? Number(info.lastInsertRowid) : undefined;
  }

  private reasonId(text: string): number {
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

  /**
   * The location key of a rope a sample ID encodes. A sample's rows come together and share one
   * decoded location, so the key of the last one is kept: one string per rope, not per row, and
   * the same string each time (compared by identity before by characters).
   */
  private ropeKey(rope: RopeLocation): string {
    if (rope !== this.lastRope) {
      this.lastRope = rope;
      this.lastRopeKey = locationKey(rope);
    }
    return this.lastRopeKey;
  }

  /**
   * Stores a batch of result rows; links reissues to what they supersede (by `rules.supersede`).
   *
   * A row whose sample ID encodes its pen and day (site sample pattern) is placed before it is
   * stored, so that each row is counted once: stored and placed, or refused and not stored
   * (`rules.encodedRope` decides from what the store holds).
   * @param sampleIdField the file's header for the sample ID, named in refusals.
   */
  insertResults(fileId: number, rows: RowList<ResultRow>, rules: RowRules, sampleIdField: string): InsertCounts {
    const counts = emptyCounts();
    for (let index = 0; index < rows.length; index++) {
      const row = rows.at(index)!;
      const sample = this.sampleInFile(row.sampleId);
      const rope = row.encodedRope;
      if (rope !== undefined && !this.placeEncodedRope(fileId, sample, row, rope, rules, sampleIdField, counts))
        continue;
      noteRow(row, counts);
      const info = runInsertResult(this.statements, fileId, row, sample.key, this.reasonId(row.reason));
      if (info.changes === 0) {
        counts.duplicates++;
        continue;
      }
      counts.inserted++;
      // Only a sample with earlier results in the store, or an earlier row of this assay and
      // lab in this file, can have a report for this row to supersede.
      if (sample.hadResults || reportedBefore(sample.reported, row.assayId, row.labId))
        this.linkSupersessions(Number(info.lastInsertRowid), sample.key, row, rules, counts);
      else sample.reported.push(row.assayId, row.labId);
      if (!sample.counted) {
        sample.counted = true;
        if (sample.ropeSiteId !== undefined) this.effects.sites.add(sample.ropeSiteId);
        else this.statements.noteUnplaced.run(sample.key);
      }
    }
    return counts;
  }

  /**
   * Places the rope a result row's sample ID encodes, or refuses the row (pushed to `counts`).
   * Returns whether the row may be stored.
   */
  private placeEncodedRope(
    fileId: number,
    sample: SampleInFile,
    row: ResultRow,
    rope: RopeLocation,
    rules: RowRules,
    sampleIdField: string,
    counts: InsertCounts,
  ): boolean {
    const location = this.ropeKey(rope);
    const step = rules.encodedRope(sample, row, location);
    if (step.kind === 'store') return true;
    if (step.kind === 'refuse') {
      counts.rejections.push(step.rejection);
      return false;
    }
    sample.patternTriedAt = location;
    if (step.kind === 'store-elsewhere') {
      counts.warnings.push(step.warning);
      return true;
    }
    const before = counts.rejections.length;
    const ropeRow: RopeRow = {
      siteId: rope.siteId,
      barnId: rope.barnId,
      penId: rope.penId,
      hungOn: rope.hungOn,
      sampleId: row.sampleId,
      line: row.line,
      note: null,
      sampleIdAsWritten: null,
      warning: undefined,
    };
    this.insertRopeRow(fileId, sample, ropeRow, 'sample-pattern', rules, counts, null, location);
    if (counts.rejections.length === before) return true;
    const refusal = rules.encodedRopeRefusal(counts.rejections[before]!, sampleIdField, row.sampleId);
    counts.rejections[before] = refusal;
    const { line: _line, ...forEveryRow } = refusal;
    sample.patternRefusal = forEveryRow;
    return false;
  }

  /**
   * Links a new row to the current rows of the same sample, assay and lab stored before it, as
   * `rules.supersede` decides; every link is named in the receipt with both readings.
   */
  private linkSupersessions(
    newId: number,
    sampleKey: number,
    row: ResultRow,
    rules: RowRules,
    counts: InsertCounts,
  ): void {
    const earlier = this.statements.currentBefore.all(sampleKey, row.assayId, row.labId, newId) as EarlierReport[];
    const { links, notes } = rules.supersede(earlier, row, newId);
    counts.superseded += notes.length;
    counts.supersessions.push(...notes);
    for (const link of links)
      this.statements.insertSupersession.run(link.oldResultId, link.newResultId, link.reason, link.kind);
  }

  private insertRopeRow(
    fileId: number,
    sample: SampleInFile,
    row: RopeRow,
    source: 'sheet' | 'sample-pattern',
    rules: RowRules,
    counts: InsertCounts,
    poolKey: number | null = null,
    location: string = locationKey(row),
  ): void {
    const sampleKey = sample.key;
    // The common case is a new rope in a free pen: insert first, explain a refusal afterwards.
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
    if (info.changes === 1) {
      if (source === 'sheet') counts.inserted++;
      if (row.warning) counts.warnings.push(`line ${row.line}: ${row.warning}`);
      sample.ropedAt = location;
      sample.ropeSiteId = row.siteId;
      this.effects.sites.add(row.siteId);
      if (sample.hadResults) {
        this.effects.resolved.push(row.sampleId);
        if (this.effects.resolved.length >= 2 * RECEIPT_LIST_LIMIT)
          this.effects.resolved = this.effects.resolved.sort().slice(0, RECEIPT_LIST_LIMIT);
      }
      return;
    }
    const existing = this.statements.ropeBySample.get(sampleKey) as Omit<StoredRope, 'sampleId' | 'source'> | undefined;
    const clash =
      existing === undefined
        ? (this.statements.ropeInPenOnDay.get(row.siteId, row.barnId, row.penId, row.hungOn, sampleKey) as
            | { sampleId: string }
            | undefined)
        : undefined;
    const conflict = rules.ropeConflict(row, source, { existing, clashSampleId: clash?.sampleId });
    if (conflict.kind === 'already-hung') counts.duplicates += source === 'sheet' ? 1 : 0;
    else counts.rejections.push(conflict.rejection);
  }

  /** Stores a batch of rope-sheet rows. */
  insertRopes(fileId: number, rows: readonly RopeRow[], rules: RowRules): InsertCounts {
    const counts = emptyCounts();
    for (const row of rows) {
      const sample = this.sampleInFile(row.sampleId);
      const poolId = row.poolId ?? null;
      if (poolId === null) {
        const sampleNamesPool = this.statements.ropeInPool.get(sample.key) !== undefined;
        const refusal = rules.poolRefusal(row, { sampleNamesPool, poolRopedAt: undefined });
        if (refusal) counts.rejections.push(refusal);
        else this.insertRopeRow(fileId, sample, row, 'sheet', rules, counts);
        continue;
      }
      const pool = this.sampleInFile(poolId);
      const refusal = rules.poolRefusal(row, { sampleNamesPool: false, poolRopedAt: pool.ropedAt });
      if (refusal) {
        counts.rejections.push(refusal);
        continue;
      }
      this.insertRopeRow(fileId, sample, row, 'sheet', rules, counts, pool.key);
      // Results reported under the pool ID before this sheet now have their ropes.
      if (pool.hadResults && !this.effects.resolved.includes(poolId)) this.effects.resolved.push(poolId);
    }
    return counts;
  }

  /** Stores refused rows; a file read again does not store a refusal it stored before. */
  insertRejections(fileId: number, rejections: readonly RowRejection[], reopened: boolean): void {
    for (const r of rejections) {
      if (reopened && this.statements.rejectionExists.get(fileId, r.line, r.code) !== undefined) continue;
      this.statements.insertRejection.run(
        fileId,
        r.line,
        r.field ?? null,
        r.code,
        r.value ?? null,
        r.message,
        r.suggestedId ?? null,
        r.candidateIds?.join(' ') ?? null,
      );
    }
  }
}

/**
 * What the receipt names row by row: the few rows read as invalid, called otherwise by the lab,
 * or read under a corrected sample ID (stored now or before).
 */
function noteRow(row: ResultRow, counts: InsertCounts): void {
  if (row.resultClass === 'invalid')
    counts.invalid.push({ line: row.line, sampleId: row.sampleId, assayId: row.assayId, reason: row.reason });
  if (row.callDiffers && row.labCall !== null && row.labCallClass !== null) {
    counts.callDisagreements.push({
      line: row.line,
      sampleId: row.sampleId,
      assayId: row.assayId,
      labCall: row.labCall,
      labCallClass: row.labCallClass,
      resultClass: row.resultClass,
      ctRaw: row.ctRaw,
    });
  }
  if (row.sampleIdAsWritten !== null)
    counts.idCorrections.push({ line: row.line, written: row.sampleIdAsWritten, meant: row.sampleId });
}

/** Whether the file stored a row of this assay and lab for the sample before (`reported` holds assay, lab pairs). */
function reportedBefore(reported: readonly string[], assayId: string, labId: string): boolean {
  for (let i = 0; i < reported.length; i += 2) if (reported[i] === assayId && reported[i + 1] === labId) return true;
  return false;
}
