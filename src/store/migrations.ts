/**
 * Schema migrations, numbered; the version lives in PRAGMA user_version. Never edit a shipped
 * migration: add the next one.
 *
 * "Nothing lost" lives in the schema: a UNIQUE content hash per file, a natural key per result
 * (ON CONFLICT DO NOTHING), supersession as a linking row rather than an UPDATE that erases, and
 * every refused row kept with its file, line, field and code.
 */
import type { Migration } from './migrationTypes.js';
import { FIRST_MIGRATIONS } from './migrationsFirst.js';

export type { Migration };

/** SQL functions the migrations call; registered on the connection before migrating. */
export const MIGRATION_FUNCTIONS = {
  /** A hexadecimal text of at most 13 digits (52 bits) as an integer. */
  ropewatch_hex_to_int: (text: string): number => Number.parseInt(text, 16),
} as const;

export const MIGRATIONS: readonly Migration[] = [
  ...FIRST_MIGRATIONS,
  {
    sql: `
  -- 5: antibody ELISA results (S/P ratio) beside PCR Ct. measure says what a row's result is:
  -- a Ct row keeps ct and its Ct cutoffs as before; an S/P row stores its ratio in sp and the
  -- lab's S/P cutoffs in positive_at_or_above and suspect_at_or_above (NULL: no suspect band),
  -- leaves ct NULL and writes 0 in the Ct cutoff columns, which are NOT NULL since migration 1
  -- (0 is no Ct cutoff: no Ct is 0). The CHECK keeps the two kinds apart. Columns added, nothing
  -- rebuilt: rows stored before read as Ct rows (the default).
  ALTER TABLE results ADD COLUMN sp REAL;
  ALTER TABLE results ADD COLUMN positive_at_or_above REAL;
  ALTER TABLE results ADD COLUMN suspect_at_or_above REAL;
  ALTER TABLE results ADD COLUMN measure TEXT NOT NULL DEFAULT 'ct' CHECK (
    (measure = 'ct' AND sp IS NULL AND positive_at_or_above IS NULL AND suspect_at_or_above IS NULL)
    OR (measure = 'sp-ratio' AND ct IS NULL AND positive_at_or_above IS NOT NULL AND positive_below = 0 AND suspect_below = 0 AND cycle_limit = 0)
  );

  -- Both readings of a supersession, now with the measure and the S/P values.
  DROP VIEW supersession_readings;
  CREATE VIEW supersession_readings AS
    SELECT s.old_result_id, s.new_result_id, s.kind, s.reason, sm.sample_id, o.assay_id, o.lab_id,
           o.class AS old_class, o.ct AS old_ct, o.ct_raw AS old_ct_raw, o.lab_call AS old_lab_call, o.reported_on AS old_reported_on,
           o.report_status AS old_report_status, o.status_kind AS old_status_kind, o.file_id AS old_file_id, o.line AS old_line,
           n.class AS new_class, n.ct AS new_ct, n.ct_raw AS new_ct_raw, n.lab_call AS new_lab_call, n.reported_on AS new_reported_on,
           n.report_status AS new_report_status, n.status_kind AS new_status_kind, n.status_word AS new_status_word, n.file_id AS new_file_id, n.line AS new_line,
           o.measure AS measure, o.sp AS old_sp, n.sp AS new_sp
    FROM supersessions s
    JOIN results o ON o.id = s.old_result_id
    JOIN results n ON n.id = s.new_result_id
    JOIN samples sm ON sm.id = o.sample;
  `,
  },
  {
    sql: `
  -- 6: pooled ropes. Ropes that share a pool went into one PCR, and the lab reports the pool's
  -- result under the pool's ID: the rope names its pool's sample (NULL: tested on its own), and
  -- a planned rope the pool the plan puts it in. Columns added, nothing rebuilt: ropes stored
  -- before read as tested on their own. The partial index finds a pool's ropes when its result
  -- arrives (and costs nothing for ropes without a pool).
  ALTER TABLE ropes ADD COLUMN pool INTEGER REFERENCES samples(id);
  CREATE INDEX ropes_pool ON ropes(pool) WHERE pool IS NOT NULL;
  ALTER TABLE planned_ropes ADD COLUMN pool_id TEXT;
  -- A result under a planned pool's ID finds the pool's planned ropes without a scan per sample.
  CREATE INDEX planned_ropes_pool ON planned_ropes(pool_id) WHERE pool_id IS NOT NULL;
  `,
  },
  {
    sql: `
  -- 7: read-only views for analysts (R, Python): results with their pen and round, rounds, alerts
  -- (src/store/tidyFacts.ts). Rounds are formed from the rope dates by the analysis, not stored:
  -- each build of a site's outputs replaces its rows in the analysis_* tables (each rope's round,
  -- the rounds' figures, the alerts), and the views join them with the stored results. Tables and
  -- views added, nothing rebuilt.
  CREATE TABLE analysis_rope_rounds (
    site_id TEXT NOT NULL,
    sample_id TEXT NOT NULL,
    round INTEGER NOT NULL,
    round_id TEXT NOT NULL,
    round_start TEXT NOT NULL,
    group_id TEXT,
    barn_id TEXT NOT NULL,
    pen_id TEXT NOT NULL,
    pool_id TEXT,
    PRIMARY KEY (site_id, sample_id)
  ) WITHOUT ROWID;
  CREATE INDEX analysis_rope_rounds_sample ON analysis_rope_rounds(sample_id);
  CREATE INDEX analysis_rope_rounds_pool ON analysis_rope_rounds(pool_id) WHERE pool_id IS NOT NULL;
  CREATE TABLE analysis_rounds (
    site TEXT NOT NULL, barn TEXT NOT NULL, round INTEGER NOT NULL, round_id TEXT NOT NULL,
    round_start TEXT NOT NULL, round_end TEXT NOT NULL, round_state TEXT NOT NULL, "group" TEXT,
    barn_empty INTEGER NOT NULL, assay TEXT, measure TEXT, pens_in_use INTEGER NOT NULL,
    ropes_hung INTEGER NOT NULL, ropes_returned INTEGER NOT NULL, ropes_missing INTEGER NOT NULL,
    tested INTEGER, positive INTEGER, suspect INTEGER, negative INTEGER, invalid INTEGER,
    design_infected_pens INTEGER, rope_sensitivity REAL, detection_hypergeometric REAL,
    detection_spread_model REAL, detection_spread_model_se REAL, target_confidence REAL NOT NULL,
    ropes_needed INTEGER, barn_positive INTEGER, positive_since INTEGER, barn_freedom REAL, prior_freedom REAL
  );
  CREATE INDEX analysis_rounds_site ON analysis_rounds(site, round);
  CREATE TABLE analysis_alerts (
    key TEXT NOT NULL, site TEXT NOT NULL, round INTEGER NOT NULL, round_id TEXT NOT NULL,
    round_start TEXT NOT NULL, round_end TEXT NOT NULL, awaiting_results INTEGER NOT NULL,
    assay TEXT, barn TEXT, kind TEXT NOT NULL, action TEXT NOT NULL, detail TEXT NOT NULL,
    PRIMARY KEY (site, key)
  );

  -- One row per result and pen: a pool's result stands for each pen of the pool (pool names it);
  -- superseded_by is the result that took its place (NULL: current).
  CREATE VIEW tidy_results AS
    SELECT rr.site_id AS site, rr.barn_id AS barn, rr.pen_id AS pen, rr.round AS round, rr.round_id AS round_id,
           rr.round_start AS round_start, rr.group_id AS "group", r.collected_on AS date,
           rr.sample_id AS sample_id, CASE WHEN s.sample_id = rr.sample_id THEN NULL ELSE s.sample_id END AS pool,
           r.lab_id AS lab, r.accession AS case_number, r.assay_id AS assay, r.measure AS measure,
           CASE WHEN r.measure = 'sp-ratio' THEN r.sp ELSE r.ct END AS value, r.ct_raw AS value_as_written,
           r.class AS class, r.lab_call AS lab_call, r.call_differs AS call_differs, r.reported_on AS reported_on,
           (SELECT MIN(x.new_result_id) FROM supersessions x WHERE x.old_result_id = r.id) AS superseded_by,
           r.id AS result_id
    FROM results r
    JOIN samples s ON s.id = r.sample
    JOIN analysis_rope_rounds rr ON rr.sample_id = s.sample_id OR rr.pool_id = s.sample_id;
  CREATE VIEW tidy_rounds AS SELECT * FROM analysis_rounds;
  CREATE VIEW tidy_alerts AS SELECT * FROM analysis_alerts;
  `,
  },
  {
    // 8: the same results table, each CHECK on a list of words written as equalities joined by
    // OR. SQLite codes `x IN (a, b, c)` with more than two constants as a look-up in a temporary
    // table it fills once per statement run, and an INSERT is one run: three such CHECKs built
    // three temporary tables for every stored result, about half of what storing one cost. The
    // rows, ids, columns (same order), key and the constraints' meaning are unchanged (a NULL
    // passes both forms). The views that read results are kept as they are: the rename below
    // runs with legacy_alter_table on, which renames without re-checking the views, whose
    // queries name `results` and find it again once renamed (sqlite.org/lang_altertable.html,
    // "ALTER TABLE RENAME" and "Making Other Kinds Of Table Schema Changes").
    rebuildsTables: true,
    sql: `
  CREATE TABLE results_next (
    id INTEGER PRIMARY KEY,
    file_id INTEGER NOT NULL REFERENCES files(id),
    line INTEGER NOT NULL,
    sample INTEGER NOT NULL REFERENCES samples(id),
    lab_id TEXT NOT NULL,
    assay_id TEXT NOT NULL,
    lab_assay TEXT NOT NULL,
    ct REAL,
    ct_raw TEXT NOT NULL,
    lab_call TEXT,
    accession TEXT,
    collected_on TEXT,
    reported_on TEXT,
    report_status TEXT,
    control TEXT,
    class TEXT NOT NULL CHECK (class = 'positive' OR class = 'suspect' OR class = 'negative' OR class = 'invalid'),
    reason INTEGER NOT NULL REFERENCES reasons(id),
    load_band TEXT,
    positive_below REAL NOT NULL,
    suspect_below REAL NOT NULL,
    cycle_limit REAL NOT NULL,
    call_differs INTEGER NOT NULL DEFAULT 0,
    content_key INTEGER NOT NULL,
    status_kind TEXT CHECK (status_kind = 'preliminary' OR status_kind = 'final' OR status_kind = 'corrected'),
    status_word TEXT,
    lab_call_class TEXT CHECK (lab_call_class = 'positive' OR lab_call_class = 'suspect' OR lab_call_class = 'negative' OR lab_call_class = 'invalid'),
    sample_id_as_written TEXT,
    sp REAL,
    positive_at_or_above REAL,
    suspect_at_or_above REAL,
    measure TEXT NOT NULL DEFAULT 'ct' CHECK (
      (measure = 'ct' AND sp IS NULL AND positive_at_or_above IS NULL AND suspect_at_or_above IS NULL)
      OR (measure = 'sp-ratio' AND ct IS NULL AND positive_at_or_above IS NOT NULL AND positive_below = 0 AND suspect_below = 0 AND cycle_limit = 0)
    ),
    UNIQUE (sample, assay_id, lab_id, content_key)
  );
  INSERT INTO results_next (id, file_id, line, sample, lab_id, assay_id, lab_assay, ct, ct_raw, lab_call, accession, collected_on, reported_on,
      report_status, control, class, reason, load_band, positive_below, suspect_below, cycle_limit, call_differs, content_key,
      status_kind, status_word, lab_call_class, sample_id_as_written, sp, positive_at_or_above, suspect_at_or_above, measure)
    SELECT id, file_id, line, sample, lab_id, assay_id, lab_assay, ct, ct_raw, lab_call, accession, collected_on, reported_on,
      report_status, control, class, reason, load_band, positive_below, suspect_below, cycle_limit, call_differs, content_key,
      status_kind, status_word, lab_call_class, sample_id_as_written, sp, positive_at_or_above, suspect_at_or_above, measure
    FROM results ORDER BY id;
  DROP TABLE results;
  PRAGMA legacy_alter_table = ON;
  ALTER TABLE results_next RENAME TO results;
  PRAGMA legacy_alter_table = OFF;
  `,
  },
  {
    // 9: how a result was read (its lab's assay name and words, the class and status found from
    // them, the cutoffs in effect) moves to a table of its own, each reading once: a lab export
    // repeats a handful of them on every row (src/store/readings.ts). A result names its reading
    // by id, as it names its reason: the row goes from 30 values to 16, and storing it costs
    // about a third less (measured on the bench's 1M-row export: the inserts 2.3-2.6 s of CPU
    // instead of 3.8-4.2 s, the write-ahead log 135 MB instead of 220 MB). The view
    // results_read gives a result with the columns it had before, in their order; the views that
    // read those columns read it. Ids, rows and every value are kept; readings are numbered in
    // the order their first result was stored.
    rebuildsTables: true,
    sql: `
  DROP VIEW supersession_readings;
  DROP VIEW tidy_results;

  -- No key on the values: a NULL is never equal under UNIQUE, and the table holds tens to
  -- hundreds of rows, which the store finds by its values once per file and reading.
  CREATE TABLE readings (
    id INTEGER PRIMARY KEY,
    lab_assay TEXT NOT NULL,
    measure TEXT NOT NULL,
    class TEXT NOT NULL CHECK (class = 'positive' OR class = 'suspect' OR class = 'negative' OR class = 'invalid'),
    lab_call TEXT,
    lab_call_class TEXT CHECK (lab_call_class = 'positive' OR lab_call_class = 'suspect' OR lab_call_class = 'negative' OR lab_call_class = 'invalid'),
    call_differs INTEGER NOT NULL,
    report_status TEXT,
    status_kind TEXT CHECK (status_kind = 'preliminary' OR status_kind = 'final' OR status_kind = 'corrected'),
    status_word TEXT,
    control TEXT,
    load_band TEXT,
    positive_below REAL NOT NULL,
    suspect_below REAL NOT NULL,
    cycle_limit REAL NOT NULL,
    positive_at_or_above REAL,
    suspect_at_or_above REAL,
    CHECK (
      (measure = 'ct' AND positive_at_or_above IS NULL AND suspect_at_or_above IS NULL)
      OR (measure = 'sp-ratio' AND positive_at_or_above IS NOT NULL AND positive_below = 0 AND suspect_below = 0 AND cycle_limit = 0)
    )
  );
  INSERT INTO readings (lab_assay, measure, class, lab_call, lab_call_class, call_differs, report_status, status_kind, status_word, control, load_band,
      positive_below, suspect_below, cycle_limit, positive_at_or_above, suspect_at_or_above)
    SELECT lab_assay, measure, class, lab_call, lab_call_class, call_differs, report_status, status_kind, status_word, control, load_band,
      positive_below, suspect_below, cycle_limit, positive_at_or_above, suspect_at_or_above
    FROM results
    GROUP BY lab_assay, measure, class, lab_call, lab_call_class, call_differs, report_status, status_kind, status_word, control, load_band,
      positive_below, suspect_below, cycle_limit, positive_at_or_above, suspect_at_or_above
    ORDER BY MIN(id);
  -- For the copy below only: each result finds its reading through it.
  CREATE INDEX readings_found ON readings(lab_assay, class, lab_call, status_word);

  CREATE TABLE results_next (
    id INTEGER PRIMARY KEY,
    file_id INTEGER NOT NULL REFERENCES files(id),
    line INTEGER NOT NULL,
    sample INTEGER NOT NULL REFERENCES samples(id),
    lab_id TEXT NOT NULL,
    assay_id TEXT NOT NULL,
    ct REAL,
    ct_raw TEXT NOT NULL,
    accession TEXT,
    collected_on TEXT,
    reported_on TEXT,
    reason INTEGER NOT NULL REFERENCES reasons(id),
    content_key INTEGER NOT NULL,
    sample_id_as_written TEXT,
    sp REAL,
    reading INTEGER NOT NULL REFERENCES readings(id),
    CHECK (ct IS NULL OR sp IS NULL),
    UNIQUE (sample, assay_id, lab_id, content_key)
  );
  INSERT INTO results_next (id, file_id, line, sample, lab_id, assay_id, ct, ct_raw, accession, collected_on, reported_on, reason, content_key,
      sample_id_as_written, sp, reading)
    SELECT r.id, r.file_id, r.line, r.sample, r.lab_id, r.assay_id, r.ct, r.ct_raw, r.accession, r.collected_on, r.reported_on, r.reason, r.content_key,
      r.sample_id_as_written, r.sp,
      (SELECT g.id FROM readings g
       WHERE g.lab_assay = r.lab_assay AND g.class = r.class AND g.lab_call IS r.lab_call AND g.status_word IS r.status_word
         AND g.measure = r.measure AND g.lab_call_class IS r.lab_call_class AND g.call_differs = r.call_differs
         AND g.report_status IS r.report_status AND g.status_kind IS r.status_kind AND g.control IS r.control AND g.load_band IS r.load_band
         AND g.positive_below = r.positive_below AND g.suspect_below = r.suspect_below AND g.cycle_limit = r.cycle_limit
         AND g.positive_at_or_above IS r.positive_at_or_above AND g.suspect_at_or_above IS r.suspect_at_or_above)
    FROM results r ORDER BY r.id;
  DROP INDEX readings_found;
  DROP TABLE results;
  PRAGMA legacy_alter_table = ON;
  ALTER TABLE results_next RENAME TO results;
  PRAGMA legacy_alter_table = OFF;

  -- A result with the columns it had before this migration, in their order, and its reading.
  CREATE VIEW results_read AS
    SELECT r.id AS id, r.file_id AS file_id, r.line AS line, r.sample AS sample, r.lab_id AS lab_id, r.assay_id AS assay_id,
           g.lab_assay AS lab_assay, r.ct AS ct, r.ct_raw AS ct_raw, g.lab_call AS lab_call, r.accession AS accession,
           r.collected_on AS collected_on, r.reported_on AS reported_on, g.report_status AS report_status, g.control AS control,
           g.class AS class, r.reason AS reason, g.load_band AS load_band, g.positive_below AS positive_below,
           g.suspect_below AS suspect_below, g.cycle_limit AS cycle_limit, g.call_differs AS call_differs,
           r.content_key AS content_key, g.status_kind AS status_kind, g.status_word AS status_word,
           g.lab_call_class AS lab_call_class, r.sample_id_as_written AS sample_id_as_written, r.sp AS sp,
           g.positive_at_or_above AS positive_at_or_above, g.suspect_at_or_above AS suspect_at_or_above, g.measure AS measure,
           r.reading AS reading
    FROM results r JOIN readings g ON g.id = r.reading;

  CREATE VIEW supersession_readings AS
    SELECT s.old_result_id, s.new_result_id, s.kind, s.reason, sm.sample_id, o.assay_id, o.lab_id,
           o.class AS old_class, o.ct AS old_ct, o.ct_raw AS old_ct_raw, o.lab_call AS old_lab_call, o.reported_on AS old_reported_on,
           o.report_status AS old_report_status, o.status_kind AS old_status_kind, o.file_id AS old_file_id, o.line AS old_line,
           n.class AS new_class, n.ct AS new_ct, n.ct_raw AS new_ct_raw, n.lab_call AS new_lab_call, n.reported_on AS new_reported_on,
           n.report_status AS new_report_status, n.status_kind AS new_status_kind, n.status_word AS new_status_word, n.file_id AS new_file_id, n.line AS new_line,
           o.measure AS measure, o.sp AS old_sp, n.sp AS new_sp
    FROM supersessions s
    JOIN results_read o ON o.id = s.old_result_id
    JOIN results_read n ON n.id = s.new_result_id
    JOIN samples sm ON sm.id = o.sample;

  CREATE VIEW tidy_results AS
    SELECT rr.site_id AS site, rr.barn_id AS barn, rr.pen_id AS pen, rr.round AS round, rr.round_id AS round_id,
           rr.round_start AS round_start, rr.group_id AS "group", r.collected_on AS date,
           rr.sample_id AS sample_id, CASE WHEN s.sample_id = rr.sample_id THEN NULL ELSE s.sample_id END AS pool,
           r.lab_id AS lab, r.accession AS case_number, r.assay_id AS assay, r.measure AS measure,
           CASE WHEN r.measure = 'sp-ratio' THEN r.sp ELSE r.ct END AS value, r.ct_raw AS value_as_written,
           r.class AS class, r.lab_call AS lab_call, r.call_differs AS call_differs, r.reported_on AS reported_on,
           (SELECT MIN(x.new_result_id) FROM supersessions x WHERE x.old_result_id = r.id) AS superseded_by,
           r.id AS result_id
    FROM results_read r
    JOIN samples s ON s.id = r.sample
    JOIN analysis_rope_rounds rr ON rr.sample_id = s.sample_id OR rr.pool_id = s.sample_id;
  `,
  },
  {
    sql: `
  -- 10: what each committed file changed of a site, under the version it gave the site: the
  -- earliest day among the ropes it hung and the ropes whose samples or pools it reported (NULL
  -- when it changed no rope and no report of one: a plan's result only). A build whose outputs
  -- show an earlier version reads the ropes only from the round holding the earliest such day on
  -- (src/rounds/roundHorizon.ts). A store made before has no log for its versions so far: its next
  -- build reads every rope, as before.
  CREATE TABLE site_changes (
    site_id TEXT NOT NULL,
    version INTEGER NOT NULL,
    from_day TEXT,
    PRIMARY KEY (site_id, version)
  ) WITHOUT ROWID;
  `,
  },
];
