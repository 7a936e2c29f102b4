/**
 * Schema migrations, numbered; the version lives in PRAGMA user_version. Never edit a shipped
 * migration: add the next one.
 *
 * "Nothing lost" lives in the schema: a UNIQUE content hash per file, a natural key per result
 * (ON CONFLICT DO NOTHING), supersession as a linking row rather than an UPDATE that erases, and
 * every refused row kept with its file, line, field and code.
 */
export const MIGRATIONS: readonly string[] = [
  `
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
];
