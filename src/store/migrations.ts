/**
 * Schema migrations, numbered; the version lives in PRAGMA user_version. Never edit a shipped
 * migration: add the next one.
 *
 * "Nothing lost" lives in the schema: a UNIQUE content hash per file, a natural key per result
 * (ON CONFLICT DO NOTHING), supersession as a linking row rather than an UPDATE that erases, and
 * every refused row kept with its file, line, field and code.
 */
export interface Migration {
  sql: string;
  /**
   * The migration rebuilds a table that others reference: foreign keys are switched off around
   * it and checked before it commits (the SQLite procedure for altering a table, "Making Other
   * Kinds Of Table Schema Changes", sqlite.org/lang_altertable.html).
   */
  rebuildsTables?: boolean;
}

/** SQL functions the migrations call; registered on the connection before migrating. */
export const MIGRATION_FUNCTIONS = {
  /** A hexadecimal text of at most 13 digits (52 bits) as an integer. */
  ropewatch_hex_to_int: (text: string): number => Number.parseInt(text, 16),
} as const;

export const MIGRATIONS: readonly Migration[] = [
  {
    sql: `
  CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);

  CREATE TABLE files (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL,
    sha256 TEXT NOT NULL UNIQUE,
    kind TEXT NOT NULL CHECK (kind IN ('results', 'ropes', 'unknown')),
    lab_id TEXT,
    received_at TEXT NOT NULL,
    status TEXT NOT NULL CHECK (status IN ('accepted', 'rejected')),
    reason_code TEXT,
    reason TEXT,
    reason_line INTEGER,
    reason_field TEXT,
    encoding_note TEXT,
    rows_accepted INTEGER NOT NULL DEFAULT 0,
    rows_rejected INTEGER NOT NULL DEFAULT 0,
    rows_duplicate INTEGER NOT NULL DEFAULT 0,
    byte_length INTEGER NOT NULL,
    -- Bytes of a rejected file, so nothing is lost even if the rejected/ folder is cleaned.
    bytes BLOB
  );

  CREATE TABLE ropes (
    id INTEGER PRIMARY KEY,
    sample_id TEXT NOT NULL UNIQUE,
    site_id TEXT NOT NULL,
    barn_id TEXT NOT NULL,
    pen_id TEXT NOT NULL,
    hung_on TEXT NOT NULL,
    source TEXT NOT NULL CHECK (source IN ('sheet', 'sample-pattern')),
    file_id INTEGER NOT NULL REFERENCES files(id),
    line INTEGER NOT NULL,
    note TEXT
  );
  -- One rope per pen per day, as a constraint: the common insert then needs no look-up first.
  -- It also serves look-ups by site (its first column). A file's own rows are found by row-id
  -- range (one file per transaction), so no index on file_id slows every insert.
  CREATE UNIQUE INDEX ropes_pen_day ON ropes(site_id, barn_id, pen_id, hung_on);

  CREATE TABLE results (
    id INTEGER PRIMARY KEY,
    file_id INTEGER NOT NULL REFERENCES files(id),
    line INTEGER NOT NULL,
    lab_id TEXT NOT NULL,
    sample_id TEXT NOT NULL,
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
    class TEXT NOT NULL CHECK (class IN ('positive', 'suspect', 'negative', 'invalid')),
    reason TEXT NOT NULL,
    load_band TEXT,
    positive_below REAL NOT NULL,
    suspect_below REAL NOT NULL,
    cycle_limit REAL NOT NULL,
    call_differs INTEGER NOT NULL DEFAULT 0,
    natural_key TEXT NOT NULL UNIQUE
  );
  -- natural_key starts with sample, assay and lab, so its unique index also serves look-ups of a
  -- sample's current result, and rows of one sample sit together (inserts stay local).
  CREATE INDEX results_sample ON results(sample_id);

  CREATE TABLE supersessions (
    old_result_id INTEGER PRIMARY KEY REFERENCES results(id),
    new_result_id INTEGER NOT NULL REFERENCES results(id),
    reason TEXT NOT NULL
  );

  CREATE TABLE rejected_rows (
    id INTEGER PRIMARY KEY,
    file_id INTEGER NOT NULL REFERENCES files(id),
    line INTEGER NOT NULL,
    field TEXT,
    code TEXT NOT NULL,
    value TEXT,
    message TEXT NOT NULL
  );
  CREATE INDEX rejected_rows_file ON rejected_rows(file_id);

  CREATE TABLE planned_ropes (
    sample_id TEXT PRIMARY KEY,
    site_id TEXT NOT NULL,
    barn_id TEXT NOT NULL,
    pen_id TEXT NOT NULL,
    side TEXT NOT NULL,
    reason TEXT NOT NULL,
    due_on TEXT NOT NULL,
    planned_at TEXT NOT NULL,
    after_round INTEGER NOT NULL
  );
  CREATE INDEX planned_ropes_site ON planned_ropes(site_id, due_on);
  `,
  },
  {
    // 2: sample IDs are stored once, in `samples`, and results and ropes refer to them by
    // number; so are the reasons given for a result's class, in `reasons`. A result's natural key becomes (sample, assay, lab, content key) under one UNIQUE
    // index, which also serves look-ups by sample; the wide text key and the separate sample
    // indexes are gone. Integer keys keep the indexes small, and a sample seen for the first time
    // needs no look-up for earlier reports. The content key is the first 13 hex digits (52 bits)
    // of the hash the text key ended with, so rows already stored still match when re-sent.
    rebuildsTables: true,
    sql: `
  CREATE TABLE samples (
    id INTEGER PRIMARY KEY,
    sample_id TEXT NOT NULL UNIQUE
  );
  INSERT INTO samples (sample_id)
    SELECT sample_id FROM results UNION SELECT sample_id FROM ropes UNION SELECT sample_id FROM planned_ropes ORDER BY 1;

  -- The reason given for a result's class repeats on most rows ("Undetermined" is this lab's
  -- word for not detected): each text once.
  CREATE TABLE reasons (
    id INTEGER PRIMARY KEY,
    text TEXT NOT NULL UNIQUE
  );
  INSERT INTO reasons (text) SELECT DISTINCT reason FROM results ORDER BY 1;

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
    class TEXT NOT NULL CHECK (class IN ('positive', 'suspect', 'negative', 'invalid')),
    reason INTEGER NOT NULL REFERENCES reasons(id),
    load_band TEXT,
    positive_below REAL NOT NULL,
    suspect_below REAL NOT NULL,
    cycle_limit REAL NOT NULL,
    call_differs INTEGER NOT NULL DEFAULT 0,
    content_key INTEGER NOT NULL,
    UNIQUE (sample, assay_id, lab_id, content_key)
  );
  INSERT INTO results_next
    SELECT r.id, r.file_id, r.line, s.id, r.lab_id, r.assay_id, r.lab_assay, r.ct, r.ct_raw, r.lab_call, r.accession, r.collected_on, r.reported_on,
           r.report_status, r.control, r.class, x.id, r.load_band, r.positive_below, r.suspect_below, r.cycle_limit, r.call_differs,
           ropewatch_hex_to_int(substr(r.natural_key, -24, 13))
    FROM results r JOIN samples s ON s.sample_id = r.sample_id JOIN reasons x ON x.text = r.reason
    ORDER BY r.id;
  DROP TABLE results;
  ALTER TABLE results_next RENAME TO results;

  -- A sample hangs in at most one pen: the rope is keyed by its sample (the table's own key, so
  -- no separate index).
  CREATE TABLE ropes_next (
    sample INTEGER PRIMARY KEY REFERENCES samples(id),
    site_id TEXT NOT NULL,
    barn_id TEXT NOT NULL,
    pen_id TEXT NOT NULL,
    hung_on TEXT NOT NULL,
    source TEXT NOT NULL CHECK (source IN ('sheet', 'sample-pattern')),
    file_id INTEGER NOT NULL REFERENCES files(id),
    line INTEGER NOT NULL,
    note TEXT
  );
  INSERT INTO ropes_next
    SELECT s.id, h.site_id, h.barn_id, h.pen_id, h.hung_on, h.source, h.file_id, h.line, h.note
    FROM ropes h JOIN samples s ON s.sample_id = h.sample_id
    ORDER BY s.id;
  DROP TABLE ropes;
  ALTER TABLE ropes_next RENAME TO ropes;
  -- One rope per pen per day. Site first (look-ups by site), then the day: a round's new ropes
  -- carry the newest days, so they go in at the end of each site's part of the index instead of
  -- between the ropes of every earlier round.
  CREATE UNIQUE INDEX ropes_pen_day ON ropes(site_id, hung_on, barn_id, pen_id);
  `,
  },
  {
    sql: `
  -- Outputs are written after the commit, outside the write lock. Each committed file counts up
  -- the version of the sites it touched; a site's outputs record the version (and configuration)
  -- they were built from, so a run that finds them behind (a crash between commit and outputs,
  -- a full disk) rebuilds them.
  CREATE TABLE site_versions (
    site_id TEXT PRIMARY KEY,
    version INTEGER NOT NULL
  );
  CREATE TABLE outputs_built (
    outbox TEXT NOT NULL,
    site_id TEXT NOT NULL,
    site_version INTEGER NOT NULL,
    config_digest TEXT NOT NULL,
    PRIMARY KEY (outbox, site_id)
  );
  `,
  },
  {
    sql: `
  -- 4: each result keeps what the lab said of it: the state of the report (preliminary, final,
  -- corrected: a preliminary report never replaces a final one), the status word found, the
  -- class the lab's own call names, and the sample ID as written when a person confirmed a
  -- correction (config/corrections.yaml). Columns added, nothing rebuilt: rows stored before
  -- read NULL (no state found, no call class).
  ALTER TABLE results ADD COLUMN status_kind TEXT CHECK (status_kind IN ('preliminary', 'final', 'corrected'));
  ALTER TABLE results ADD COLUMN status_word TEXT;
  ALTER TABLE results ADD COLUMN lab_call_class TEXT CHECK (lab_call_class IN ('positive', 'suspect', 'negative', 'invalid'));
  ALTER TABLE results ADD COLUMN sample_id_as_written TEXT;

  -- Why one report replaced another, as a code beside the reason text: correction,
  -- correction-kept, final-over-preliminary, preliminary-after-final, later-report,
  -- earlier-report-kept, same-date-later-file (NULL for links stored before).
  ALTER TABLE supersessions ADD COLUMN kind TEXT;

  -- A refused sample ID that fails its check character: the planned ID it most likely meant
  -- (one substitution or one swap of neighbours away), or the candidates when there are several.
  ALTER TABLE rejected_rows ADD COLUMN suggested_id TEXT;
  ALTER TABLE rejected_rows ADD COLUMN candidate_ids TEXT;

  -- Every supersession with both readings side by side: old_* is the report no longer current,
  -- new_* the one current in its place (for a preliminary report that arrived after a final
  -- one, the preliminary is old_* and the final new_*).
  CREATE VIEW supersession_readings AS
    SELECT s.old_result_id, s.new_result_id, s.kind, s.reason, sm.sample_id, o.assay_id, o.lab_id,
           o.class AS old_class, o.ct AS old_ct, o.ct_raw AS old_ct_raw, o.lab_call AS old_lab_call, o.reported_on AS old_reported_on,
           o.report_status AS old_report_status, o.status_kind AS old_status_kind, o.file_id AS old_file_id, o.line AS old_line,
           n.class AS new_class, n.ct AS new_ct, n.ct_raw AS new_ct_raw, n.lab_call AS new_lab_call, n.reported_on AS new_reported_on,
           n.report_status AS new_report_status, n.status_kind AS new_status_kind, n.status_word AS new_status_word, n.file_id AS new_file_id, n.line AS new_line
    FROM supersessions s
    JOIN results o ON o.id = s.old_result_id
    JOIN results n ON n.id = s.new_result_id
    JOIN samples sm ON sm.id = o.sample;
  `,
  },
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
];
