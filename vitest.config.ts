import { defineConfig } from 'vitest/config';

/**
 * The tests that open a store run twice: on SQLite (every test) and on PostgreSQL (project
 * `postgres`: ROPEWATCH_TEST_STORE=postgres makes every store a test opens a new database on the
 * run's server, test/helpers/testStore.ts). The second run takes the files under STORE_TESTS
 * except those in SQLITE_ONLY, each listed with its reason: the PostgreSQL tests themselves
 * (test/store/pg, already on PostgreSQL), the tests of SQLite itself, and the files that open no
 * store. The last list keeps itself honest: on the PostgreSQL run a file that made no database
 * there fails (test/helpers/pgStoreOpened.ts), naming the list it belongs in.
 */
const STORE_TESTS = [
  'test/store/**/*.test.ts',
  'test/ingest/**/*.test.ts',
  'test/hardening/**/*.test.ts',
  'test/e2e/**/*.test.ts',
  'test/pipeline/**/*.test.ts',
  'test/watch/**/*.test.ts',
  'test/cli/**/*.test.ts',
  'test/alerts/**/*.test.ts',
  'test/hl7/**/*.test.ts',
  // Outside those folders, files whose outputs are built from what a store gave back.
  'test/golden/deliverables.test.ts',
  'test/report/herdStatus.test.ts',
  'test/report/csvInjection.test.ts',
];

const SQLITE_ONLY = [
  // Already on PostgreSQL, or on both stores side by side.
  'test/store/pg/**',
  'test/cli/storeLocation.test.ts',
  'test/e2e/demoPostgres.test.ts',
  'test/e2e/siteLockPostgres.test.ts',
  // SQLite's single write lock and its busy timeout (PostgreSQL's writers run side by side:
  // test/store/pg/manyWriters.test.ts), and a SQLite file damaged or of another program.
  'test/hardening/storeBusy.test.ts',
  'test/cli/storeOpen.test.ts',
  // SQLite's migration 8 of its CHECKs and the bytecode of its insert (sqlite.org/opcode.html).
  'test/store/resultChecks.test.ts',
  // SQLite's migration 9 (readings) and the readings cache, which opens no store (the PostgreSQL
  // migration: test/store/pg/migrations.test.ts).
  'test/store/readings.test.ts',
  // SQLite's migration 7 of the tidy views; the PostgreSQL views are held to SQLite's in the same file.
  'test/store/tidyViews.test.ts',
  // The SQLite reader's rows against the straightforward reading (the PostgreSQL reader's parity
  // with SQLite is test/store/pg/storeCopy.test.ts).
  'test/store/readerRows.test.ts',
  // Property runs over hostile bytes: the reader's and parser's behaviour, each run on a store in
  // memory; what reaches a store from them is the corpus's, run on both (test/ingest/corpus.test.ts).
  'test/hardening/properties.test.ts',
  // Open no store: each would only repeat its SQLite run.
  // Reading and mapping a lab's file, up to the rows handed to a store.
  'test/ingest/csvRecords.test.ts',
  'test/ingest/decode.test.ts',
  'test/ingest/detect.test.ts',
  'test/ingest/labWords.test.ts',
  'test/ingest/records.test.ts',
  'test/ingest/resultRecordsSp.test.ts',
  'test/ingest/ropePool.test.ts',
  'test/ingest/xlsxReader.test.ts',
  'test/ingest/zipDirectory.test.ts',
  'test/ingest/batchWire.test.ts',
  'test/ingest/codesDocumented.test.ts',
  // The store's rules decided without a store (facts given, or a stand-in for the store).
  'test/ingest/conflictRetry.test.ts',
  'test/ingest/ropePlacement.test.ts',
  'test/ingest/supersession.test.ts',
  // HL7 framing and parsing, and a lab profile's hl7 section read from a config folder.
  'test/hl7/mllp.test.ts',
  'test/hl7/parse.test.ts',
  'test/hl7/profile.test.ts',
  // The calculators of `ropewatch calc`: figures from the command line, no store.
  'test/cli/calcSpatial.test.ts',
  'test/cli/calcStats.test.ts',
  'test/cli/calcTwoStagePooled.test.ts',
  // The watchers on temporary folders, with a stand-in for the pipeline; names from an input's name.
  'test/watch/configWatch.test.ts',
  'test/watch/ignore.test.ts',
  'test/watch/queue.test.ts',
  'test/watch/specialFiles.test.ts',
  'test/watch/stability.test.ts',
  'test/watch/watchInbox.test.ts',
  'test/pipeline/inboxFiles.test.ts',
];

export default defineConfig({
  test: {
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
    // One PostgreSQL server for the run (an embedded one, or ROPEWATCH_TEST_PG_URL's): the root and
    // each project run this setup, and all take the server the first one started.
    globalSetup: ['test/helpers/pgGlobalSetup.ts'],
    projects: [
      { extends: true, test: { name: 'sqlite', include: ['test/**/*.test.ts'] } },
      {
        extends: true,
        test: {
          name: 'postgres',
          include: STORE_TESTS,
          exclude: SQLITE_ONLY,
          env: { ROPEWATCH_TEST_STORE: 'postgres' },
          // Fails a file that made no database on this run: it belongs in SQLITE_ONLY.
          setupFiles: ['test/helpers/pgStoreOpened.ts'],
        },
      },
    ],
  },
});
