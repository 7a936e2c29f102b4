/**
 * The first four schema migrations (the store's tables, natural keys, refused rows and supersession
 * links; see migrations.ts): kept apart so that each file stays short. Never edit a shipped
 * migration: add the next one in migrations.ts.
 */
import type { Migration } from './migrationTypes.js';

export const FIRST_MIGRATIONS: readonly Migration[] = [
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
];
