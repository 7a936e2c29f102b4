/**
 * The PostgreSQL store's read queries (`StoreReader`, src/domain/store.ts) on the synchronous
 * connection: the same questions as the SQLite reader (src/store/reader.ts) asked in PostgreSQL's
 * dialect, giving the same values in the same order. Text is ordered by its bytes (COLLATE "C"),
 * as SQLite's BINARY collation orders it, so both stores list rows alike whatever the server's
 * locale. `siteInputs` reads one site's inputs in one REPEATABLE READ snapshot.
 */
import type {
  MistypedRefusal,
  PlannedRope,
  ReplacedReport,
  StoredFile,
  StoredResult,
  StoredRope,
  Supersession,
} from '../../domain/records.js';
import type { RowRejection } from '../../domain/rejections.js';
import type {
  OpenRefusal,
  RopeHorizon,
  SampleChoice,
  SiteChangesSince,
  SiteInputs,
  SiteOutline,
  StoreCounts,
  StoredFileCounts,
  StoreReader,
} from '../../domain/store.js';
import type { SqlValue, SyncConnection } from './syncConnection.js';
import { chosenInputs, siteInputsOf } from '../chosenInputs.js';
import { replacedReportOfRow } from '../replacedRows.js';
import { storedResult, type ReadingFields } from '../readings.js';

const FILE_COLUMNS = `id, name, sha256, kind, lab_id AS "labId", received_at AS "receivedAt", status, reason_code AS "reasonCode", reason`;
const PLANNED_COLUMNS = `sample_id AS "sampleId", site_id AS "siteId", barn_id AS "barnId", pen_id AS "penId", side, reason,
  due_on AS "dueOn", planned_at AS "plannedAt", after_round AS "afterRound", pool_id AS "poolId"`;

/** The samples of a site: its ropes, the pools they were tested in, its planned ropes and their pools. */
const SITE_SAMPLE_IDS = `SELECT s.sample_id FROM ropes h JOIN samples s ON s.id = h.sample WHERE h.site_id = $1
  UNION SELECT s.sample_id FROM ropes h JOIN samples s ON s.id = h.pool WHERE h.site_id = $1
  UNION SELECT sample_id FROM planned_ropes WHERE site_id = $1
  UNION SELECT pool_id FROM planned_ropes WHERE site_id = $1 AND pool_id IS NOT NULL`;

/** The samples of a site's ropes, their pools and its planned ropes (and pools), as a condition on r.sample ($1: the site). */
const SITE_RESULT_SAMPLES = siteResultSamples('');

/** SITE_RESULT_SAMPLES with the ropes narrowed by `ropeCondition` (on the ropes' columns). */
function siteResultSamples(ropeCondition: string): string {
  return `r.sample IN (SELECT sample FROM ropes WHERE site_id = $1 ${ropeCondition}
   UNION SELECT pool FROM ropes WHERE site_id = $1 AND pool IS NOT NULL ${ropeCondition}
   UNION SELECT s.id FROM planned_ropes p JOIN samples s ON s.sample_id = p.sample_id OR s.sample_id = p.pool_id WHERE p.site_id = $1)`;
}

/** SITE_RESULT_SAMPLES of the ropes hung on or after $2 (days compared by their bytes, as SQLite compares them). */
const SITE_RESULT_SAMPLES_FROM = siteResultSamples('AND hung_on COLLATE "C" >= $2');

/** A current result as its row holds it: the reason's text, the reading by id (src/store/readings.ts). */
type ResultFields = Pick<
  StoredResult,
  | 'id'
  | 'fileId'
  | 'labId'
  | 'sampleId'
  | 'assayId'
  | 'ct'
  | 'sp'
  | 'ctRaw'
  | 'accession'
  | 'collectedOn'
  | 'reportedOn'
  | 'reason'
> & { reading: number };

export class PgStoreReader implements StoreReader {
  private snapshots = 0;

  /** @param inTransaction whether the connection is inside a transaction already (then reads see it). */
  constructor(
    private readonly conn: SyncConnection,
    private readonly inTransaction: () => boolean = () => false,
  ) {}

  private all<Row>(text: string, params: readonly SqlValue[] = []): Row[] {
    return this.conn.query<Row>(text, params).rows;
  }

  /** Runs `read` in one REPEATABLE READ, READ ONLY transaction: every query in it sees the same committed state. */
  snapshot<T>(read: () => T): T {
    if (this.inTransaction() || this.snapshots > 0) return read();
    this.snapshots += 1;
    try {
      return this.conn.transaction(read, 'BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY');
    } finally {
      this.snapshots -= 1;
    }
  }

  siteInputsChosen(
    siteId: string,
    choose: SampleChoice,
    horizon?: RopeHorizon,
  ): { outline: SiteOutline; inputs: SiteInputs } {
    return chosenInputs(this, siteId, choose, horizon);
  }

  /**
   * The site's samples (of the ropes hung on or after `fromDay` when it is given) and their
   * reports' keys (SiteOutline.reportKeys), as the SQLite reader gives them.
   */
  reportKeys(siteId: string, fromDay?: string): Map<string, string> {
    const rows = this.all<{ sampleId: string; key: string }>(
      `SELECT s.sample_id AS "sampleId", count(*) || '/' || max(r.id) || '/' || count(o.old_result_id) AS key
         FROM results r JOIN samples s ON s.id = r.sample LEFT JOIN supersessions o ON o.old_result_id = r.id
        WHERE ${fromDay === undefined ? SITE_RESULT_SAMPLES : SITE_RESULT_SAMPLES_FROM}
        GROUP BY s.sample_id`,
      fromDay === undefined ? [siteId] : [siteId, fromDay],
    );
    return new Map(rows.map((row) => [row.sampleId, row.key]));
  }

  siteInputs(siteId: string): SiteInputs {
    return siteInputsOf(this, siteId);
  }

  findFileByHash(sha256: string): StoredFile | undefined {
    return this.all<StoredFile>(`SELECT ${FILE_COLUMNS} FROM files WHERE sha256 = $1`, [sha256])[0];
  }

  getMeta(key: string): string | undefined {
    return this.all<{ value: string }>('SELECT value FROM meta WHERE key = $1', [key])[0]?.value;
  }

  openRefusals(fileId: number): OpenRefusal[] {
    return this.all<OpenRefusal>(
      `SELECT j.line, j.code, j.value FROM rejected_rows j
        WHERE j.file_id = $1
          AND NOT EXISTS (SELECT 1 FROM results r WHERE r.file_id = j.file_id AND r.line = j.line)
          AND NOT EXISTS (SELECT 1 FROM ropes h WHERE h.file_id = j.file_id AND h.line = j.line)
        ORDER BY j.line`,
      [fileId],
    );
  }

  siteVersion(siteId: string): number {
    return (
      this.all<{ version: number }>('SELECT version FROM site_versions WHERE site_id = $1', [siteId])[0]?.version ?? 0
    );
  }

  outputsBuilt(outbox: string, siteId: string): { siteVersion: number; configDigest: string } | undefined {
    return this.all<{ siteVersion: number; configDigest: string }>(
      'SELECT site_version AS "siteVersion", config_digest AS "configDigest" FROM outputs_built WHERE outbox = $1 AND site_id = $2',
      [outbox, siteId],
    )[0];
  }

  /**
   * Every rope with a known location: rope sheets, sample patterns, and planned ropes whose
   * results came back; with `fromDay`, those hung on or after it.
   */
  ropes(siteId?: string, fromDay?: string): StoredRope[] {
    const params: string[] = [];
    const site = siteId === undefined ? undefined : `$${params.push(siteId)}`;
    const from = fromDay === undefined ? undefined : `$${params.push(fromDay)}`;
    const hungWhere = [
      ...(site === undefined ? [] : [`h.site_id = ${site}`]),
      ...(from === undefined ? [] : [`h.hung_on COLLATE "C" >= ${from}`]),
    ];
    const hung = this.all<StoredRope>(
      `SELECT s.sample_id AS "sampleId", h.site_id AS "siteId", h.barn_id AS "barnId", h.pen_id AS "penId", h.hung_on AS "hungOn",
              h.source, ps.sample_id AS "poolId"
         FROM ropes h JOIN samples s ON s.id = h.sample LEFT JOIN samples ps ON ps.id = h.pool
        ${hungWhere.length === 0 ? '' : `WHERE ${hungWhere.join(' AND ')}`}
        ORDER BY h.hung_on COLLATE "C", h.site_id COLLATE "C", h.barn_id COLLATE "C", h.pen_id COLLATE "C"`,
      params,
    );
    // A planned rope counts as hung once a result for it (or for the pool the plan put it in,
    // unless a rope sheet names that pool) arrives: on its collection date, else its due date.
    const planned = this.all<StoredRope>(
      `SELECT p.sample_id AS "sampleId", p.site_id AS "siteId", p.barn_id AS "barnId", p.pen_id AS "penId",
              COALESCE(MIN(r.collected_on COLLATE "C"), p.due_on) AS "hungOn", 'plan' AS source, p.pool_id AS "poolId"
         FROM planned_ropes p LEFT JOIN samples s ON s.sample_id = p.sample_id LEFT JOIN samples ps ON ps.sample_id = p.pool_id
         JOIN results r ON r.sample = s.id OR (r.sample = ps.id AND NOT EXISTS (SELECT 1 FROM ropes h2 WHERE h2.pool = ps.id))
        WHERE NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample = s.id) ${site === undefined ? '' : `AND p.site_id = ${site}`}
        GROUP BY p.sample_id ${from === undefined ? '' : `HAVING COALESCE(MIN(r.collected_on COLLATE "C"), p.due_on) >= ${from}`}
        ORDER BY p.sample_id COLLATE "C"`,
      params,
    );
    return [...hung, ...planned];
  }

  /** Results no later report supersedes; with a site, those of the site's samples. */
  currentResults(siteId?: string): StoredResult[] {
    return siteId === undefined ? this.resultRows('', []) : this.resultRows(`AND ${SITE_RESULT_SAMPLES}`, [siteId]);
  }

  /** Current results of the named samples. */
  currentResultsOf(sampleIds: readonly string[]): StoredResult[] {
    return this.resultRows('AND s.sample_id IN (SELECT json_array_elements_text($1::json))', [
      JSON.stringify(sampleIds),
    ]);
  }

  private resultRows(where: string, params: readonly SqlValue[]): StoredResult[] {
    // The hottest read of a rebuild (every result of the site's history): each row as it is
    // stored, its reading by id, and each reading's fields read once (as the SQLite reader).
    const rows = this.all<ResultFields>(
      `SELECT r.id, r.file_id AS "fileId", r.lab_id AS "labId", s.sample_id AS "sampleId", r.assay_id AS "assayId",
              r.ct, r.sp, r.ct_raw AS "ctRaw", r.accession, r.collected_on AS "collectedOn", r.reported_on AS "reportedOn",
              x.text AS reason, r.reading
         FROM results r JOIN samples s ON s.id = r.sample JOIN reasons x ON x.id = r.reason
        WHERE NOT EXISTS (SELECT 1 FROM supersessions o WHERE o.old_result_id = r.id) ${where}
        ORDER BY r.id`,
      params,
    );
    const readingOf = this.readingFields(rows);
    return rows.map((row) =>
      storedResult(
        [
          row.id,
          row.fileId,
          row.labId,
          row.sampleId,
          row.assayId,
          row.ct,
          row.sp,
          row.ctRaw,
          row.accession,
          row.collectedOn,
          row.reportedOn,
        ],
        row.reason,
        readingOf(row.reading),
      ),
    );
  }

  /** Looks up the readings `rows` name, each once, in one query (readings are only ever added, never changed). */
  private readingFields(rows: readonly { reading: number }[]): (id: number) => ReadingFields {
    const ids = [...new Set(rows.map((row) => row.reading))];
    const byId = new Map<number, ReadingFields>();
    if (ids.length > 0) {
      for (const { id, callDiffers, ...fields } of this.conn.query<
        Omit<ReadingFields, 'callDiffers'> & {
          id: number;
          callDiffers: number;
        }
      >(
        `SELECT id, measure, lab_call AS "labCall", class AS "resultClass", load_band AS "loadBand",
                CASE WHEN measure = 'ct' THEN positive_below END AS "positiveBelow",
                CASE WHEN measure = 'ct' THEN suspect_below END AS "suspectBelow",
                CASE WHEN measure = 'ct' THEN cycle_limit END AS "cycleLimit",
                positive_at_or_above AS "positiveAtOrAbove", suspect_at_or_above AS "suspectAtOrAbove", call_differs AS "callDiffers"
           FROM readings WHERE id = ANY($1::bigint[])`,
        [ids],
      ).rows)
        byId.set(id, { ...fields, callDiffers: Boolean(callDiffers) });
    }
    return (id) => {
      const fields = byId.get(id);
      if (fields === undefined) throw new Error(`reading ${id} is not in the store`);
      return fields;
    };
  }

  supersessions(): Supersession[] {
    return this.all<Supersession>(
      'SELECT old_result_id AS "oldResultId", new_result_id AS "newResultId", reason FROM supersessions ORDER BY old_result_id',
    );
  }

  /** Every link between two reports of one of the site's samples, with both readings, in the order the links were made. */
  replacedReports(siteId: string, sampleIds?: readonly string[]): ReplacedReport[] {
    const rows = this.all<Record<string, string | number | null>>(
      `SELECT v.sample_id AS "sampleId", v.assay_id AS "assayId", v.lab_id AS "labId", v.kind, v.reason,
              v.old_class AS "oldClass", v.old_ct AS "oldCt", v.old_ct_raw AS "oldCtRaw", v.old_lab_call AS "oldLabCall",
              v.old_reported_on AS "oldReportedOn", v.old_report_status AS "oldReportStatus", v.old_status_kind AS "oldStatus",
              (SELECT o.status_word FROM results_read o WHERE o.id = v.old_result_id) AS "oldStatusWord",
              v.new_class AS "newClass", v.new_ct AS "newCt", v.new_ct_raw AS "newCtRaw", v.new_lab_call AS "newLabCall",
              v.new_reported_on AS "newReportedOn", v.new_report_status AS "newReportStatus", v.new_status_kind AS "newStatus",
              v.new_status_word AS "newStatusWord"
         FROM supersession_readings v
        WHERE v.sample_id IN (${SITE_SAMPLE_IDS}) ${sampleIds === undefined ? '' : 'AND v.sample_id IN (SELECT json_array_elements_text($2::json))'}
        ORDER BY GREATEST(v.old_result_id, v.new_result_id), LEAST(v.old_result_id, v.new_result_id)`,
      sampleIds === undefined ? [siteId] : [siteId, JSON.stringify(sampleIds)],
    );
    return rows.map(replacedReportOfRow);
  }

  /** Refused rows with a bad check character that name a planned rope of the site still waiting, by file and line. */
  mistypedRefusals(siteId: string): MistypedRefusal[] {
    return this.all<MistypedRefusal>(
      `WITH waiting AS MATERIALIZED (
         SELECT j.id, j.file_id, j.line, j.value, j.suggested_id
           FROM rejected_rows j JOIN planned_ropes p ON p.sample_id = j.suggested_id
          WHERE j.code = 'bad-check-character' AND p.site_id = $1
            AND NOT EXISTS (SELECT 1 FROM samples s JOIN results r ON r.sample = s.id WHERE s.sample_id = p.sample_id)
       )
       SELECT COALESCE(w.value, '') AS written, w.suggested_id AS "suggestedId", f.name AS "fileName", w.line
         FROM waiting w JOIN files f ON f.id = w.file_id
        WHERE NOT EXISTS (SELECT 1 FROM results r WHERE r.file_id = w.file_id AND r.line = w.line)
        ORDER BY w.file_id, w.line, w.id`,
      [siteId],
    );
  }

  unresolvedSampleIds(): string[] {
    return this.all<{ sampleId: string }>(
      `SELECT s.sample_id AS "sampleId" FROM samples s
        WHERE EXISTS (SELECT 1 FROM results r WHERE r.sample = s.id)
          AND NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample = s.id)
          AND NOT EXISTS (SELECT 1 FROM planned_ropes p WHERE p.sample_id = s.sample_id)
        ORDER BY s.sample_id COLLATE "C"`,
    ).map((row) => row.sampleId);
  }

  plannedRopes(siteId?: string): PlannedRope[] {
    return this.all<PlannedRope>(
      `SELECT ${PLANNED_COLUMNS} FROM planned_ropes ${siteId === undefined ? '' : 'WHERE site_id = $1'} ORDER BY sample_id COLLATE "C"`,
      siteId === undefined ? [] : [siteId],
    );
  }

  plannedWithoutResults(siteId: string): PlannedRope[] {
    return this.all<PlannedRope>(
      `SELECT ${PLANNED_COLUMNS} FROM planned_ropes p
        WHERE site_id = $1
          AND NOT EXISTS (SELECT 1 FROM samples s JOIN results r ON r.sample = s.id WHERE s.sample_id = p.sample_id OR s.sample_id = p.pool_id)
        ORDER BY sample_id COLLATE "C"`,
      [siteId],
    );
  }

  /** OutlineHead.plannedPlaced. */
  plannedPlaced(siteId: string): string[] {
    return this.all<{ sampleId: string }>(
      `SELECT p.sample_id AS "sampleId" FROM planned_ropes p JOIN samples s ON s.sample_id = p.sample_id JOIN ropes h ON h.sample = s.id
        WHERE p.site_id = $1 AND h.site_id = p.site_id
          AND NOT EXISTS (SELECT 1 FROM samples s2 JOIN results r ON r.sample = s2.id WHERE s2.sample_id = p.sample_id OR s2.sample_id = p.pool_id)
        ORDER BY p.sample_id COLLATE "C"`,
      [siteId],
    ).map((row) => row.sampleId);
  }

  /** The site's change log after `version`: how many commits, and the earliest day they name. */
  siteChangesSince(siteId: string, version: number): SiteChangesSince {
    const row = this.all<SiteChangesSince>(
      `SELECT count(*) AS commits, min(from_day COLLATE "C") AS "fromDay" FROM site_changes WHERE site_id = $1 AND version > $2`,
      [siteId, version],
    )[0];
    if (row === undefined) throw new Error('siteChangesSince: no row');
    return row;
  }

  files(): StoredFileCounts[] {
    return this.all<StoredFileCounts>(
      `SELECT ${FILE_COLUMNS}, rows_accepted AS "rowsAccepted", rows_rejected AS "rowsRejected", rows_duplicate AS "rowsDuplicate"
         FROM files ORDER BY id`,
    );
  }

  rejectedRows(fileId: number): RowRejection[] {
    return this.all<RowRejection>(
      'SELECT line, field, code, value, message FROM rejected_rows WHERE file_id = $1 ORDER BY line, id',
      [fileId],
    );
  }

  counts(): StoreCounts {
    const row = this.all<StoreCounts>(
      `SELECT (SELECT count(*) FROM files) AS files,
              (SELECT count(*) FROM files WHERE status = 'rejected') AS "rejectedFiles",
              (SELECT count(*) FROM results) AS results,
              (SELECT count(*) FROM results r WHERE NOT EXISTS (SELECT 1 FROM supersessions s WHERE s.old_result_id = r.id)) AS "currentResults",
              (SELECT count(*) FROM ropes) AS ropes,
              (SELECT count(*) FROM rejected_rows) AS "rejectedRows",
              (SELECT count(*) FROM planned_ropes) AS planned`,
    )[0];
    if (row === undefined) throw new Error('counts: no row');
    return row;
  }
}
