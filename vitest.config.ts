import { defineConfig } from 'vitest/config';

/**
 * The tests that touch the store run twice: on SQLite (every test) and on PostgreSQL (project
 * `postgres`: ROPEWATCH_TEST_STORE=postgres makes every store a test opens a new database on the
 * run's server, test/helpers/testStore.ts). Left out of the second run: the PostgreSQL tests
 * themselves (test/store/pg, already on PostgreSQL) and the tests of SQLite itself, listed with
 * their reason in SQLITE_ONLY.
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
  // SQLite's migration 7 of the tidy views; the PostgreSQL views are held to SQLite's in the same file.
  'test/store/tidyViews.test.ts',
  // The SQLite reader's rows against the straightforward reading (the PostgreSQL reader's parity
  // with SQLite is test/store/pg/storeCopy.test.ts).
  'test/store/readerRows.test.ts',
  // Property runs over hostile bytes: the reader's and parser's behaviour, each run on a store in
  // memory; what reaches a store from them is the corpus's, run on both (test/ingest/corpus.test.ts).
  'test/hardening/properties.test.ts',
];

export default defineConfig({
  test: {
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
    // One PostgreSQL server for the run (an embedded one, or ROPEWATCH_TEST_PG_URL's).
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
        },
      },
    ],
  },
});
