import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
    // One PostgreSQL server for the run (an embedded one, or ROPEWATCH_TEST_PG_URL's).
    globalSetup: ['test/helpers/pgGlobalSetup.ts'],
  },
});
