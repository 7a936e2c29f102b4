/**
 * What one batch of a file needs from the PostgreSQL store before its rows are decided, looked
 * up in a few set-based queries (never one per row): its samples by ID (`= ANY($1::text[])`)
 * with their rope and whether they have results; every report of the samples that had results
 * (the content keys a duplicate is told by, and the current ones a reissue supersedes); the ropes
 * at the batch's pens and days; which of its samples are pools; the reason texts it names; and,
 * for a file read again, the refusals it stored before.
 */
import type { ResultRow, RopeLocation, RopeRow } from '../../domain/records.js';
import type { EarlierReport } from '../../domain/store.js';
import type { BatchPreview } from '../rowSink.js';
import type { SyncConnection } from './syncConnection.js';

/** A rope as the batch's decisions read it. */
export interface RopeFact extends RopeLocation {
  sample: number;
  sampleId: string;
}

export interface BatchFacts {
  /** Stored samples by ID: key and whether results were stored for it. */
  samples: Map<string, { id: number; hasResults: boolean }>;
  ropeBySample: Map<number, RopeFact>;
  /** By penKey. */
  ropeAt: Map<string, RopeFact>;
  /** Samples that are the pool of some rope. */
  pools: Set<number>;
  /** reportKey + content key of every stored report of the batch's samples. */
  contentKeys: Set<string>;
  /** The current reports by reportKey, oldest first. */
  current: Map<string, EarlierReport[]>;
  /** Reason text -> id, of the texts the batch names. */
  reasons: Map<string, number>;
  /** line + code of refusals stored before (a file read again). */
  refusals: Set<string>;
}

/** The key of a pen on a day (the ropes_pen_day unique key). */
export const penKey = (at: RopeLocation): string => `${at.siteId}\u0000${at.barnId}\u0000${at.penId}\u0000${at.hungOn}`;
/** The key of a sample's reports of one assay from one lab. */
export const reportKey = (sample: number, assayId: string, labId: string): string =>
  `${sample}\u0000${assayId}\u0000${labId}`;

function previewed(batch: BatchPreview): { sampleIds: Set<string>; pens: RopeLocation[]; reasonTexts: Set<string> } {
  const sampleIds = new Set<string>();
  const pens: RopeLocation[] = [];
  const reasonTexts = new Set<string>();
  const results = batch.results;
  if (results !== undefined) {
    let lastRope: RopeLocation | undefined;
    for (let i = 0; i < results.length; i++) {
      const row = results.at(i) as ResultRow;
      sampleIds.add(row.sampleId);
      reasonTexts.add(row.reason);
      if (row.encodedRope !== undefined && row.encodedRope !== lastRope) pens.push((lastRope = row.encodedRope));
    }
  }
  for (const row of batch.ropes ?? ([] as RopeRow[])) {
    sampleIds.add(row.sampleId);
    if (row.poolId != null) sampleIds.add(row.poolId);
    pens.push(row);
  }
  return { sampleIds, pens, reasonTexts };
}

interface SampleRow {
  id: number;
  sampleId: string;
  hasResults: boolean;
  siteId: string | null;
  barnId: string | null;
  penId: string | null;
  hungOn: string | null;
  isPool: boolean;
}

interface ReportRow extends EarlierReport {
  sample: number;
  assayId: string;
  labId: string;
  contentKey: number;
  isCurrent: boolean;
}

/**
 * Looks up what the batch needs. `knownReasons` tells which reason texts need no look-up.
 * Reads what is committed and what this transaction wrote (READ COMMITTED).
 */
export function lookUpBatch(
  conn: SyncConnection,
  batch: BatchPreview,
  knownReasons: (text: string) => boolean,
): BatchFacts {
  const { sampleIds, pens, reasonTexts } = previewed(batch);
  const facts: BatchFacts = {
    samples: new Map(),
    ropeBySample: new Map(),
    ropeAt: new Map(),
    pools: new Set(),
    contentKeys: new Set(),
    current: new Map(),
    reasons: new Map(),
    refusals: new Set(),
  };
  const withResults: number[] = [];
  if (sampleIds.size > 0) {
    const rows = conn.query<SampleRow>(
      `SELECT s.id, s.sample_id AS "sampleId", EXISTS (SELECT 1 FROM results r WHERE r.sample = s.id) AS "hasResults",
              h.site_id AS "siteId", h.barn_id AS "barnId", h.pen_id AS "penId", h.hung_on AS "hungOn",
              EXISTS (SELECT 1 FROM ropes p WHERE p.pool = s.id) AS "isPool"
         FROM samples s LEFT JOIN ropes h ON h.sample = s.id WHERE s.sample_id = ANY($1::text[])`,
      [[...sampleIds]],
    ).rows;
    for (const row of rows) {
      facts.samples.set(row.sampleId, { id: row.id, hasResults: row.hasResults });
      if (row.hasResults) withResults.push(row.id);
      if (row.isPool) facts.pools.add(row.id);
      if (row.siteId !== null) {
        const rope: RopeFact = {
          siteId: row.siteId,
          barnId: row.barnId as string,
          penId: row.penId as string,
          hungOn: row.hungOn as string,
          sample: row.id,
          sampleId: row.sampleId,
        };
        facts.ropeBySample.set(row.id, rope);
        facts.ropeAt.set(penKey(rope), rope);
      }
    }
  }
  if (withResults.length > 0) lookUpReports(conn, withResults, facts);
  if (pens.length > 0) lookUpPens(conn, pens, facts);
  const texts = [...reasonTexts].filter((text) => !knownReasons(text));
  if (texts.length > 0) {
    for (const row of conn.query<{ id: number; text: string }>(
      'SELECT id, text FROM reasons WHERE text = ANY($1::text[])',
      [texts],
    ).rows)
      facts.reasons.set(row.text, row.id);
  }
  if (batch.reopened === true && (batch.rejections?.length ?? 0) > 0) {
    for (const row of conn.query<{ line: number; code: string }>(
      'SELECT line, code FROM rejected_rows WHERE file_id = $1',
      [batch.fileId],
    ).rows)
      facts.refusals.add(`${row.line}\u0000${row.code}`);
  }
  return facts;
}

function lookUpReports(conn: SyncConnection, samples: number[], facts: BatchFacts): void {
  const rows = conn.query<ReportRow>(
    `SELECT r.sample, r.assay_id AS "assayId", r.lab_id AS "labId", r.content_key AS "contentKey",
            NOT EXISTS (SELECT 1 FROM supersessions s WHERE s.old_result_id = r.id) AS "isCurrent",
            r.id, r.reported_on AS "reportedOn", r.status_kind AS status, r.status_word AS "statusWord", r.class AS "resultClass",
            r.ct_raw AS "ctRaw", r.lab_call AS "labCall"
       FROM results_read r WHERE r.sample = ANY($1::bigint[]) ORDER BY r.id`,
    [samples],
  ).rows;
  for (const row of rows) {
    const key = reportKey(row.sample, row.assayId, row.labId);
    facts.contentKeys.add(`${key}\u0000${row.contentKey}`);
    if (!row.isCurrent) continue;
    const report: EarlierReport = {
      id: row.id,
      reportedOn: row.reportedOn,
      status: row.status,
      statusWord: row.statusWord,
      resultClass: row.resultClass,
      ctRaw: row.ctRaw,
      labCall: row.labCall,
    };
    const list = facts.current.get(key);
    if (list === undefined) facts.current.set(key, [report]);
    else list.push(report);
  }
}

function lookUpPens(conn: SyncConnection, pens: RopeLocation[], facts: BatchFacts): void {
  const rows = conn.query<RopeFact>(
    `SELECT h.sample, s.sample_id AS "sampleId", h.site_id AS "siteId", h.barn_id AS "barnId", h.pen_id AS "penId", h.hung_on AS "hungOn"
       FROM unnest($1::text[], $2::text[], $3::text[], $4::text[]) AS p(site_id, barn_id, pen_id, hung_on)
       JOIN ropes h ON h.site_id = p.site_id AND h.hung_on = p.hung_on AND h.barn_id = p.barn_id AND h.pen_id = p.pen_id
       JOIN samples s ON s.id = h.sample`,
    [pens.map((p) => p.siteId), pens.map((p) => p.barnId), pens.map((p) => p.penId), pens.map((p) => p.hungOn)],
  ).rows;
  for (const rope of rows) {
    facts.ropeAt.set(penKey(rope), rope);
    facts.ropeBySample.set(rope.sample, rope);
  }
}
