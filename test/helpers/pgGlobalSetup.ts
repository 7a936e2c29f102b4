/**
 * vitest globalSetup: one PostgreSQL server for the whole test run (test/helpers/pgServer.ts),
 * its URL provided to every test file (`inject('pgUrl')`), stopped at teardown.
 *
 * The root config's globalSetup runs once for the root and once for each project that extends it
 * (vitest.config.ts): all of them run in the one main process, so the first starts the server and
 * the others take the same one; the last teardown stops it.
 */
import type { TestProject } from 'vitest/node';
import { type PgServer, startTestServer } from './pgServer.js';

const KEY = Symbol.for('ropewatch.test.pgServer');

interface SharedServer {
  server: Promise<PgServer>;
  users: number;
}

type Holder = { [KEY]?: SharedServer };

export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  const holder = globalThis as Holder;
  holder[KEY] ??= { server: startTestServer(), users: 0 };
  const shared = holder[KEY];
  shared.users += 1;
  const server = await shared.server;
  project.provide('pgUrl', server.url);
  project.provide('pgEmbedded', server.embedded);
  return async () => {
    shared.users -= 1;
    if (shared.users > 0) return;
    delete holder[KEY];
    await server.stop();
  };
}
