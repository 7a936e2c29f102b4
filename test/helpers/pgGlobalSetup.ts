/**
 * vitest globalSetup: one PostgreSQL server for the whole test run (test/helpers/pgServer.ts),
 * its URL provided to every test file (`inject('pgUrl')`), stopped at teardown.
 */
import type { TestProject } from 'vitest/node';
import { startTestServer } from './pgServer.js';

export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  const server = await startTestServer();
  project.provide('pgUrl', server.url);
  project.provide('pgEmbedded', server.embedded);
  return () => server.stop();
}
