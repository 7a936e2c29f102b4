/**
 * The SQLite store's read queries. Each sees committed data (or, inside the open file, what the
 * file has stored so far); `snapshot` runs several against one committed state, and `siteInputs`
 * loads everything one site's analysis reads in one such snapshot.
 */
import type Database from 'better-sqlite3';
import type {
  MistypedRefusal,
  PlannedRope,
  ReplacedReport,
  StoredFile,
  StoredResult,
  StoredRope,
  Supersession,
} from '../domain/records.js';
import type { RowRejection } from '../domain/rejections.js';
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
} from '../domain/store.js';
import type { ResultClass } from '../interpret/classify.js';
import { chosenInputs, siteInputsOf } from './chosenInputs.js';
import { replacedReportOfRow } from './replacedRows.js';
import { storedResult, type OwnResultValues, type ReadingFields } from './readings.js';

/** A row of `ropes` (hung ropes) as the columns come. */
type RopeCells = [string, string, string, string, string, StoredRope['source'], string | null];

function ropeOfCells(cells: RopeCells): StoredRope {
  return {
    sampleId: cells[0],
    siteId: cells[1],
    barnId: cells[2],
    penId: cells[3],
    hungOn: cells[4],
    source: cells[5],
    poolId: cells[6],
  };
}

/**
 * A row of `currentResults` as the columns come: id, file, lab, sample ID, assay, Ct, S/P, the
 * result as written, case number, collected, reported, and the reason and reading as their ids.
 */
type ResultCells = [...OwnResultValues, number, number];

type ReadingCells = [
  StoredResult['measure'],
  string | null,
  ResultClass,
  string | null,
  number | null,
  number | null,
  number | null,
  number | null,
  number | null,
  number,
];

/**
 * The samples of a site's ropes, of the pools they were tested in and of its planned ropes (and
 * their pools): a condition on `r.sample` with the parameter @siteId.
 */
const SITE_SAMPLES = siteSamples('');

/** SITE_SAMPLES with the ropes narrowed by `ropeCondition` (on the ropes' columns). */
function siteSamples(ropeCondition: string): string {
  return `r.sample IN (SELECT sample FROM ropes WHERE site_id = @siteId ${ropeCondition}
   UNION SELECT pool FROM ropes WHERE site_id = @siteId AND pool IS NOT NULL ${ropeCondition}
   UNION SELECT s.id FROM planned_ropes p JOIN samples s ON s.sample_id = p.sample_id OR s.sample_id = p.pool_id WHERE p.site_id = @siteId)`;
}

/** SITE_SAMPLES of the ropes hung on or after @fromDay (the site's index on site and day finds them). */
const SITE_SAMPLES_FROM = siteSamples('AND hung_on >= @fromDay');

export class SqliteReader implements StoreReader {
  /** @param fileOpen whether the connection is inside a file's transaction (then reads see it). */
  constructor(
    private readonly db: Database.Database,
    private readonly fileOpen: () => boolean,
  ) {}

  /**
   * Everything one site's analysis reads, from one committed state: its version, ropes, current
   * results, plans, replaced reports and mistyped refusals.
   */
  siteInputs(siteId: string): SiteInputs {
    return siteInputsOf(this, siteId);
  }

  siteInputsChosen(
    siteId: string,
    choose: SampleChoice,
    horizon?: RopeHorizon,
  ): { outline: SiteOutline; inputs: SiteInputs } {
    return chosenInputs(this, siteId, choose, horizon);
  }

  /**
   * The site's samples (as `currentResults` chooses them; of the ropes hung on or after `fromDay`
   * when it is given) and their reports' keys (SiteOutline.reportKeys).
   */
  reportKeys(siteId: string, fromDay?: string): Map<string, string> {
    // Reports are only added (never changed or removed) and links too: the count of reports, the
    // newest id and the count of replaced ones change with every change to a sample's reports.
    const rows = this.db
      .prepare(
        `SELECT s.sample_id, count(*) || '/' || max(r.id) || '/' || count(o.old_result_id)
         FROM results r JOIN samples s ON s.id = r.sample LEFT JOIN supersessions o ON o.old_result_id = r.id
         WHERE ${fromDay === undefined ? SITE_SAMPLES : SITE_SAMPLES_FROM}
         GROUP BY r.sample`,
      )
      .raw(true)
      .all({ siteId, fromDay }) as [string, string][];
    return new Map(rows);
  }

  /** Current results of the named samples, as `currentResults` gives them. */
  currentResultsOf(sampleIds: readonly string[]): StoredResult[] {
    return this.resultRows('AND s.sample_id IN (SELECT value FROM json_each(@samples))', {
      samples: JSON.stringify(sampleIds),
    });
  }

  findFileByHash(sha256: string): StoredFile | undefined {
    return this.db
      .prepare(
        'SELECT id, name, sha256, kind, lab_id AS labId, received_at AS receivedAt, status, reason_code AS reasonCode, reason FROM files WHERE sha256 = ?',
      )
      .get(sha256) as StoredFile | undefined;
  }

  getMeta(key: string): string | undefined {
    return (this.db.prepare('SELECT value FROM meta WHERE key = ?').get(key) as { value: string } | undefined)?.value;
  }

  /**
   * The refused rows of a stored file that no result or rope of that file has taken the place
   * of since: what a confirmed sample-ID correction may let in when the file is read again.
   */
  openRefusals(fileId: number): OpenRefusal[] {
    return this.db
      .prepare(
        `SELECT j.line, j.code, j.value FROM rejected_rows j
         WHERE j.file_id = ?
           AND NOT EXISTS (SELECT 1 FROM results r WHERE r.file_id = j.file_id AND r.line = j.line)
           AND NOT EXISTS (SELECT 1 FROM ropes h WHERE h.file_id = j.file_id AND h.line = j.line)
         ORDER BY j.line`,
      )
      .all(fileId) as OpenRefusal[];
  }

  /**
   * Runs `read` in one read transaction: every query in it sees the same committed state, while
   * other processes go on writing (SQLite WAL readers never block the writer).
   */
  snapshot<T>(read: () => T): T {
    if (this.fileOpen()) return read();
    return this.db.transaction(read).deferred();
  }

  /** How many committed files have changed the site (0 for none). */
  siteVersion(siteId: string): number {
    return (
      (this.db.prepare('SELECT version FROM site_versions WHERE site_id = ?').pluck().get(siteId) as
        | number
        | undefined) ?? 0
    );
  }

  /** What `outbox` shows of the site, or undefined when its outputs were never built there. */
  outputsBuilt(outbox: string, siteId: string): { siteVersion: number; configDigest: string } | undefined {
    return this.db
      .prepare(
        'SELECT site_version AS siteVersion, config_digest AS configDigest FROM outputs_built WHERE outbox = ? AND site_id = ?',
      )
      .get(outbox, siteId) as { siteVersion: number; configDigest: string } | undefined;
  }

  /**
   * Every rope with a known location: rope sheets, sample patterns, and planned ropes whose
   * results came back; with `fromDay`, those hung on or after it.
   */
  ropes(siteId?: string, fromDay?: string): StoredRope[] {
    const conditions = [
      ...(siteId === undefined ? [] : ['h.site_id = @siteId']),
      ...(fromDay === undefined ? [] : ['h.hung_on >= @fromDay']),
    ];
    const where = conditions.length === 0 ? '' : `WHERE ${conditions.join(' AND ')}`;
    // Rows come as arrays and become objects of one shape here: better-sqlite3's row objects are
    // several times slower to build and to copy on a site's whole history.
    const hung = (
      this.db
        .prepare(
          `SELECT s.sample_id, h.site_id, h.barn_id, h.pen_id, h.hung_on, h.source, ps.sample_id
           FROM ropes h JOIN samples s ON s.id = h.sample LEFT JOIN samples ps ON ps.id = h.pool ${where} ORDER BY h.hung_on, h.site_id, h.barn_id, h.pen_id`,
        )
        .raw(true)
        .all({ siteId, fromDay }) as RopeCells[]
    ).map(ropeOfCells);
    // A planned rope counts as hung once a result for it (or for the pool the plan put it in,
    // unless a rope sheet names that pool) arrives: on its collection date, else its due date.
    const planned = this.db
      .prepare(
        `SELECT p.sample_id AS sampleId, p.site_id AS siteId, p.barn_id AS barnId, p.pen_id AS penId,
                COALESCE(MIN(r.collected_on), p.due_on) AS hungOn, 'plan' AS source, p.pool_id AS poolId
         FROM planned_ropes p LEFT JOIN samples s ON s.sample_id = p.sample_id LEFT JOIN samples ps ON ps.sample_id = p.pool_id
           -- A pool that a rope sheet names holds the sheet's ropes: the sheet says what was hung.
           JOIN results r ON r.sample = s.id OR (r.sample = ps.id AND NOT EXISTS (SELECT 1 FROM ropes h2 WHERE h2.pool = ps.id))
         WHERE NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample = s.id) ${siteId === undefined ? '' : 'AND p.site_id = @siteId'}
         GROUP BY p.sample_id ${fromDay === undefined ? '' : 'HAVING hungOn >= @fromDay'}`,
      )
      .all({ siteId, fromDay }) as StoredRope[];
    return [...hung, ...planned];
  }

  /**
   * Results that no later report supersedes; with a site, only those whose sample is one of the
   * site's ropes or planned ropes (so rewriting one site's outputs never reads the whole store).
   */
  currentResults(siteId?: string): StoredResult[] {
    return siteId === undefined ? this.resultRows('', {}) : this.resultRows(`AND ${SITE_SAMPLES}`, { siteId });
  }

  /** Current results under the extra condition `where` (on r and s), in id order. */
  private resultRows(where: string, params: Record<string, string>): StoredResult[] {
    // The hottest read of a rebuild (every result of the site's history): rows as arrays, made
    // into objects of one shape by `storedResult` (readings.ts; see `ropes`); a reason's text and a reading's
    // fields are read once per reason and reading, not once per row.
    const reasonText = this.reasonTexts();
    const readingOf = this.readingFields();
    return (
      this.db
        .prepare(
          `SELECT r.id, r.file_id, r.lab_id, s.sample_id, r.assay_id, r.ct, r.sp, r.ct_raw,
                  r.accession, r.collected_on, r.reported_on, r.reason, r.reading
           FROM results r JOIN samples s ON s.id = r.sample
           WHERE NOT EXISTS (SELECT 1 FROM supersessions o WHERE o.old_result_id = r.id) ${where}
           ORDER BY r.id`,
        )
        .raw(true)
        .all(params) as ResultCells[]
    ).map((cells) => storedResult(cells, reasonText(cells[11]), readingOf(cells[12])));
  }

  /** Looks up readings by id, each once (readings are only ever added, never changed). */
  private readingFields(): (id: number) => ReadingFields {
    const byId = new Map<number, ReadingFields>();
    const select = this.db
      .prepare(
        `SELECT measure, lab_call, class, load_band, CASE WHEN measure = 'ct' THEN positive_below END,
                CASE WHEN measure = 'ct' THEN suspect_below END, CASE WHEN measure = 'ct' THEN cycle_limit END,
                positive_at_or_above, suspect_at_or_above, call_differs
         FROM readings WHERE id = ?`,
      )
      .raw(true);
    return (id) => {
      let fields = byId.get(id);
      if (fields === undefined) {
        const cells = select.get(id) as ReadingCells | undefined;
        if (cells === undefined) throw new Error(`reading ${id} is not in the store`);
        fields = {
          measure: cells[0],
          labCall: cells[1],
          resultClass: cells[2],
          loadBand: cells[3],
          positiveBelow: cells[4],
          suspectBelow: cells[5],
          cycleLimit: cells[6],
          positiveAtOrAbove: cells[7],
          suspectAtOrAbove: cells[8],
          callDiffers: Boolean(cells[9]),
        };
        byId.set(id, fields);
      }
      return fields;
    };
  }

  /** Looks up reason texts by id, each once (reasons are only ever added, never changed). */
  private reasonTexts(): (id: number) => string {
    const byId = new Map<number, string>();
    const select = this.db.prepare('SELECT text FROM reasons WHERE id = ?').pluck();
    return (id) => {
      let text = byId.get(id);
      if (text === undefined) {
        text = select.get(id) as string | undefined;
        if (text === undefined) throw new Error(`reason ${id} is not in the store`);
        byId.set(id, text);
      }
      return text;
    };
  }

  supersessions(): Supersession[] {
    return this.db
      .prepare('SELECT old_result_id AS oldResultId, new_result_id AS newResultId, reason FROM supersessions')
      .all() as Supersession[];
  }

  /**
   * Every link between two reports of one of the site's samples (a rope or a planned rope of the
   * site, or the pool one was tested in), with both readings, from the view `supersession_readings`: `replaced` is the report
   * no longer current, `inPlace` the one current in its place at the time of the link. In the
   * order the links were made.
   */
  replacedReports(siteId: string, sampleIds?: readonly string[]): ReplacedReport[] {
    const chosen = sampleIds === undefined ? '' : 'AND v.sample_id IN (SELECT value FROM json_each(@samples))';
    const rows = this.db
      .prepare(
        `SELECT v.sample_id AS sampleId, v.assay_id AS assayId, v.lab_id AS labId, v.kind, v.reason,
                v.old_class AS oldClass, v.old_ct AS oldCt, v.old_ct_raw AS oldCtRaw, v.old_lab_call AS oldLabCall, v.old_reported_on AS oldReportedOn,
                v.old_report_status AS oldReportStatus, v.old_status_kind AS oldStatus, (SELECT o.status_word FROM results_read o WHERE o.id = v.old_result_id) AS oldStatusWord,
                v.new_class AS newClass, v.new_ct AS newCt, v.new_ct_raw AS newCtRaw, v.new_lab_call AS newLabCall, v.new_reported_on AS newReportedOn,
                v.new_report_status AS newReportStatus, v.new_status_kind AS newStatus, v.new_status_word AS newStatusWord
         FROM supersession_readings v
         WHERE v.sample_id IN (SELECT s.sample_id FROM ropes h JOIN samples s ON s.id = h.sample WHERE h.site_id = @siteId
                               UNION SELECT s.sample_id FROM ropes h JOIN samples s ON s.id = h.pool WHERE h.site_id = @siteId
                               UNION SELECT sample_id FROM planned_ropes WHERE site_id = @siteId
                               UNION SELECT pool_id FROM planned_ropes WHERE site_id = @siteId AND pool_id IS NOT NULL)
           ${chosen}
         ORDER BY MAX(v.old_result_id, v.new_result_id), MIN(v.old_result_id, v.new_result_id)`,
      )
      .all(sampleIds === undefined ? { siteId } : { siteId, samples: JSON.stringify(sampleIds) }) as Record<
      string,
      string | number | null
    >[];
    return rows.map(replacedReportOfRow);
  }

  /**
   * Refused rows whose sample ID failed its check character and that name, as the ID they most
   * likely meant (`suggested_id`), a planned rope of the site still without a result, and that
   * no row of their file has taken the place of since (a confirmed correction read in again
   * stores a result on that line, possibly under another planned ID). By file and line.
   */
  mistypedRefusals(siteId: string): MistypedRefusal[] {
    // The planned rope's result is looked up by sample (indexed) first; results have no index by
    // file and line, so that scan runs only for the few refusals still waiting.
    return this.db
      .prepare(
        `WITH waiting AS MATERIALIZED (
           SELECT j.id, j.file_id, j.line, j.value, j.suggested_id
           FROM rejected_rows j JOIN planned_ropes p ON p.sample_id = j.suggested_id
           WHERE j.code = 'bad-check-character' AND p.site_id = ?
             AND NOT EXISTS (SELECT 1 FROM samples s JOIN results r ON r.sample = s.id WHERE s.sample_id = p.sample_id)
         )
         SELECT COALESCE(w.value, '') AS written, w.suggested_id AS suggestedId, f.name AS fileName, w.line
         FROM waiting w JOIN files f ON f.id = w.file_id
         WHERE NOT EXISTS (SELECT 1 FROM results r WHERE r.file_id = w.file_id AND r.line = w.line)
         ORDER BY w.file_id, w.line, w.id`,
      )
      .all(siteId) as MistypedRefusal[];
  }

  /** Sample IDs of current results with no known rope (not on any sheet, pattern or plan). */
  unresolvedSampleIds(): string[] {
    return (
      this.db
        .prepare(
          `SELECT s.sample_id AS sampleId FROM samples s
           WHERE EXISTS (SELECT 1 FROM results r WHERE r.sample = s.id)
             AND NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample = s.id)
             AND NOT EXISTS (SELECT 1 FROM planned_ropes p WHERE p.sample_id = s.sample_id)
           ORDER BY s.sample_id`,
        )
        .all() as { sampleId: string }[]
    ).map((row) => row.sampleId);
  }

  plannedRopes(siteId?: string): PlannedRope[] {
    return this.db
      .prepare(
        `SELECT sample_id AS sampleId, site_id AS siteId, barn_id AS barnId, pen_id AS penId, side, reason, due_on AS dueOn,
                planned_at AS plannedAt, after_round AS afterRound, pool_id AS poolId FROM planned_ropes ${siteId === undefined ? '' : 'WHERE site_id = ?'} ORDER BY sample_id`,
      )
      .all(...(siteId === undefined ? [] : [siteId])) as PlannedRope[];
  }

  /** Sample IDs of planned ropes for which no result has come back. */
  plannedWithoutResults(siteId: string): PlannedRope[] {
    return this.db
      .prepare(
        `SELECT sample_id AS sampleId, site_id AS siteId, barn_id AS barnId, pen_id AS penId, side, reason, due_on AS dueOn,
                planned_at AS plannedAt, after_round AS afterRound, pool_id AS poolId
         FROM planned_ropes p WHERE site_id = ? AND NOT EXISTS (SELECT 1 FROM samples s JOIN results r ON r.sample = s.id WHERE s.sample_id = p.sample_id OR s.sample_id = p.pool_id)
         ORDER BY sample_id`,
      )
      .all(siteId) as PlannedRope[];
  }

  /** OutlineHead.plannedPlaced. */
  plannedPlaced(siteId: string): string[] {
    return this.db
      .prepare(
        `SELECT p.sample_id FROM planned_ropes p JOIN samples s ON s.sample_id = p.sample_id JOIN ropes h ON h.sample = s.id
         WHERE p.site_id = ? AND h.site_id = p.site_id
           AND NOT EXISTS (SELECT 1 FROM samples s2 JOIN results r ON r.sample = s2.id WHERE s2.sample_id = p.sample_id OR s2.sample_id = p.pool_id)
         ORDER BY p.sample_id`,
      )
      .pluck()
      .all(siteId) as string[];
  }

  /** The site's change log after `version`: how many commits, and the earliest day they name. */
  siteChangesSince(siteId: string, version: number): SiteChangesSince {
    return this.db
      .prepare(
        'SELECT count(*) AS commits, min(from_day) AS fromDay FROM site_changes WHERE site_id = ? AND version > ?',
      )
      .get(siteId, version) as SiteChangesSince;
  }

  files(): StoredFileCounts[] {
    return this.db
      .prepare(
        `SELECT id, name, sha256, kind, lab_id AS labId, received_at AS receivedAt, status, reason_code AS reasonCode, reason,
                rows_accepted AS rowsAccepted, rows_rejected AS rowsRejected, rows_duplicate AS rowsDuplicate FROM files ORDER BY id`,
      )
      .all() as StoredFileCounts[];
  }

  rejectedRows(fileId: number): RowRejection[] {
    return this.db
      .prepare('SELECT line, field, code, value, message FROM rejected_rows WHERE file_id = ? ORDER BY line')
      .all(fileId) as RowRejection[];
  }

  counts(): StoreCounts {
    const one = (sql: string) => (this.db.prepare(sql).get() as { n: number }).n;
    return {
      files: one('SELECT COUNT(*) AS n FROM files'),
      rejectedFiles: one("SELECT COUNT(*) AS n FROM files WHERE status = 'rejected'"),
      results: one('SELECT COUNT(*) AS n FROM results'),
      currentResults: one(
        'SELECT COUNT(*) AS n FROM results r WHERE NOT EXISTS (SELECT 1 FROM supersessions s WHERE s.old_result_id = r.id)',
      ),
      ropes: one('SELECT COUNT(*) AS n FROM ropes'),
      rejectedRows: one('SELECT COUNT(*) AS n FROM rejected_rows'),
      planned: one('SELECT COUNT(*) AS n FROM planned_ropes'),
    };
  }
}
