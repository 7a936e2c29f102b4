/**
 * Stores the rows of the open file: samples, results, ropes, refusals, and the links between
 * reports. What a row means is decided elsewhere: the `RowRules` ingest hands to `beginFile`
 * decide which report governs and where a rope may hang, from the facts looked up here. Both
 * backends run this one flow: the facts and the writes go through a `RowSink` (rowSink.ts).
 */
import type { ResultRow, RopeLocation, RopeRow, RowList } from '../domain/records.js';
import { locationKey } from '../domain/records.js';
import type { RowRejection } from '../domain/rejections.js';
import {
  emptyCounts,
  RECEIPT_LIST_LIMIT,
  type InsertCounts,
  type RowRules,
  type SampleRopeState,
  type SiteChange,
} from '../domain/store.js';
import type { RowSink, StoredSample } from './rowSink.js';

/** What the open file knows of one sample. */
interface SampleInFile extends SampleRopeState {
  key: number;
  /** The store held results for it before this file. */
  hadResults: boolean;
  /** Assay and lab of each row this file has stored for it, in pairs (a sample has a few assays). */
  reported: string[];
  ropeSiteId: string | undefined;
  /** The day its rope hangs on (with ropeSiteId). */
  ropeHungOn: string | undefined;
  /** The file stored a result for it, and counted it for the receipt. */
  counted: boolean;
}

/** What the open file changed, gathered while it is stored (for its receipt and outputs). */
export interface FileEffects {
  sites: Set<string>;
  /**
   * By site, the earliest day among the ropes the file hung and the ropes of the samples it
   * reported (SiteChange.fromDay; pools and plans are found by the store at the end of the file).
   */
  fromDay: Map<string, string>;
  /** Samples with results before this file that its ropes placed (the first ones by ID, bounded). */
  resolved: string[];
}

/** The earlier of two ISO days, either of which may be missing. */
function earlierDay(a: string | null, b: string | null): string | null {
  return a === null || (b !== null && b < a) ? b : a;
}

/**
 * The sites a file touched, and what it changed of each (OpenFileEffects): the days the flow
 * noted, with the sites and days the store found for pools and plans at the end of the file
 * (`found`: a day of null names a site only).
 */
export function siteChanges(
  effects: FileEffects,
  found: readonly { id: string; day: string | null }[],
): { sites: string[]; changes: SiteChange[] } {
  const fromDay = new Map<string, string | null>();
  for (const site of effects.sites) fromDay.set(site, effects.fromDay.get(site) ?? null);
  for (const { id, day } of found) fromDay.set(id, earlierDay(fromDay.get(id) ?? null, day));
  const sites = [...fromDay.keys()].sort();
  return { sites, changes: sites.map((siteId) => ({ siteId, fromDay: fromDay.get(siteId)! })) };
}

/** Samples remembered per file; rows of one sample usually sit together. */
const SAMPLES_REMEMBERED = 10_000;

export class RowWriter {
  /**
   * Samples the open file has met (sample ID -> state), bounded: a sample's rows usually sit
   * together. A sample dropped from here is looked up again, never assumed new.
   */
  private readonly samplesThisFile = new Map<string, SampleInFile>();
  /** Whether the last sample met was new to the store: files are mostly one or the other. */
  private lastSampleWasNew = false;
  /** The last sample met and its ID (two fields, no pair object per sample): a sample's assays come on neighbouring rows. */
  private lastSampleId: string | undefined;
  private lastSample: SampleInFile | undefined;
  effects: FileEffects = { sites: new Set(), fromDay: new Map(), resolved: [] };
  /** The last encoded rope met, and its location key (ropeKey). */
  private lastRope: RopeLocation | undefined;
  private lastRopeKey = '';

  constructor(private readonly sink: RowSink) {}

  /** Forgets what the last file met. */
  startFile(): void {
    this.samplesThisFile.clear();
    this.lastSampleId = undefined;
    this.lastSample = undefined;
    this.lastRope = undefined;
    this.effects = { sites: new Set(), fromDay: new Map(), resolved: [] };
  }

  /** Ends the file; after a rollback, reasons first stored by it are gone with it. */
  endFile(rolledBack: boolean): void {
    if (rolledBack) this.sink.forgetFile();
    this.samplesThisFile.clear();
    this.lastSampleId = undefined;
    this.lastSample = undefined;
  }

  /**
   * The open file's record of a sample, creating the sample when it is new to the store. A sample
   * new to the store has no earlier report to supersede, which spares the look-up on most rows.
   */
  private sampleInFile(sampleId: string): SampleInFile {
    if (sampleId === this.lastSampleId) return this.lastSample!;
    const sample = this.samplesThisFile.get(sampleId) ?? this.meetSample(sampleId);
    this.lastSampleId = sampleId;
    this.lastSample = sample;
    return sample;
  }

  /** A sample the open file has not met yet (or has forgotten): looked up or created. */
  private meetSample(sampleId: string): SampleInFile {
    // One statement for the common case: after a new sample try inserting first, after a known
    // one look it up first (a lab export of new samples; results for ropes already on a sheet).
    let created = this.lastSampleWasNew ? this.createSample(sampleId) : undefined;
    let stored: StoredSample | undefined;
    if (created === undefined) {
      stored = this.sink.findSample(sampleId);
      if (stored === undefined) created = this.createSample(sampleId)!;
    }
    this.lastSampleWasNew = created !== undefined;
    const sample: SampleInFile = {
      key: created ?? stored!.id,
      hadResults: stored !== undefined && (stored.hasResults === true || stored.hasResults === 1),
      reported: [],
      ropedAt: stored?.siteId == null ? undefined : locationKey(stored as RopeLocation),
      ropeSiteId: stored?.siteId ?? undefined,
      ropeHungOn: stored?.hungOn ?? undefined,
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
    return this.sink.createSample(sampleId);
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
    this.sink.beginBatch({ fileId, results: rows });
    for (let index = 0; index < rows.length; index++) {
      const row = rows.at(index)!;
      const sample = this.sampleInFile(row.sampleId);
      const rope = row.encodedRope;
      if (rope !== undefined && !this.placeEncodedRope(fileId, sample, row, rope, rules, sampleIdField, counts))
        continue;
      noteRow(row, counts);
      const resultId = this.sink.insertResult(fileId, row, sample.key, this.sink.reasonId(row.reason));
      if (resultId === undefined) {
        counts.duplicates++;
        continue;
      }
      counts.inserted++;
      // Only a sample with earlier results in the store, or an earlier row of this assay and
      // lab in this file, can have a report for this row to supersede.
      if (sample.hadResults || reportedBefore(sample.reported, row.assayId, row.labId))
        this.linkSupersessions(resultId, sample.key, row, rules, counts);
      else sample.reported.push(row.assayId, row.labId);
      if (!sample.counted) {
        sample.counted = true;
        if (sample.ropeSiteId !== undefined) this.noteChange(sample.ropeSiteId, sample.ropeHungOn!);
        else this.sink.noteUnplaced(sample.key);
      }
    }
    this.sink.endBatch();
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
    const earlier = this.sink.currentBefore(sampleKey, row.assayId, row.labId, newId);
    const { links, notes } = rules.supersede(earlier, row, newId);
    counts.superseded += notes.length;
    counts.supersessions.push(...notes);
    for (const link of links) this.sink.insertSupersession(link);
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
    if (this.sink.insertRope(fileId, sampleKey, row, source, poolKey)) {
      if (source === 'sheet') counts.inserted++;
      if (row.warning) counts.warnings.push(`line ${row.line}: ${row.warning}`);
      sample.ropedAt = location;
      sample.ropeSiteId = row.siteId;
      sample.ropeHungOn = row.hungOn;
      this.noteChange(row.siteId, row.hungOn);
      if (sample.hadResults) {
        this.effects.resolved.push(row.sampleId);
        if (this.effects.resolved.length >= 2 * RECEIPT_LIST_LIMIT)
          this.effects.resolved = this.effects.resolved.sort().slice(0, RECEIPT_LIST_LIMIT);
      }
      return;
    }
    const existing = this.sink.ropeBySample(sampleKey);
    const clashSampleId = existing === undefined ? this.sink.ropeInPenOnDay(row, sampleKey) : undefined;
    const conflict = rules.ropeConflict(row, source, { existing, clashSampleId });
    if (conflict.kind === 'already-hung') counts.duplicates += source === 'sheet' ? 1 : 0;
    else counts.rejections.push(conflict.rejection);
  }

  /** The file changed the rounds of `siteId` from the one holding `day` on. */
  private noteChange(siteId: string, day: string): void {
    this.effects.sites.add(siteId);
    this.effects.fromDay.set(siteId, earlierDay(this.effects.fromDay.get(siteId) ?? null, day)!);
  }

  /** Stores a batch of rope-sheet rows. */
  insertRopes(fileId: number, rows: readonly RopeRow[], rules: RowRules): InsertCounts {
    const counts = emptyCounts();
    this.sink.beginBatch({ fileId, ropes: rows });
    for (const row of rows) {
      const sample = this.sampleInFile(row.sampleId);
      const poolId = row.poolId ?? null;
      if (poolId === null) {
        const sampleNamesPool = this.sink.ropeInPool(sample.key);
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
    this.sink.endBatch();
    return counts;
  }

  /** Stores refused rows; a file read again does not store a refusal it stored before. */
  insertRejections(fileId: number, rejections: readonly RowRejection[], reopened: boolean): void {
    this.sink.beginBatch({ fileId, rejections, reopened });
    for (const r of rejections) {
      if (reopened && this.sink.rejectionExists(fileId, r.line, r.code)) continue;
      this.sink.insertRejection(fileId, r);
    }
    this.sink.endBatch();
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
