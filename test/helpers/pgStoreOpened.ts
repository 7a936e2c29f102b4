/**
 * vitest setupFiles of the `postgres` project (vitest.config.ts): a file on the PostgreSQL run
 * must make at least one database there, or it only repeats the SQLite run. Such a file fails
 * here and belongs in SQLITE_ONLY with its reason. A run that left some of the file's tests out
 * (a name filter, `.only`) proves nothing either way and is not checked.
 */
import path from 'node:path';
import type { RunnerTask, RunnerTestFile } from 'vitest';
import { afterAll, afterEach } from 'vitest';
import { databasesMade, resetDatabasesMade } from './pgDatabaseCount.js';

/** True when every test of the file ran (none skipped, filtered out or left to do). */
function ranWhole(task: Readonly<RunnerTask>): boolean {
  if (task.type === 'suite') return task.tasks.every(ranWhole);
  return task.mode === 'run' || task.mode === 'queued';
}

resetDatabasesMade();
let file: RunnerTestFile | undefined;

afterEach(({ task }) => {
  file = task.file;
});

afterAll(() => {
  if (file === undefined || databasesMade() > 0 || !file.tasks.every(ranWhole)) return;
  const name = path.relative(process.cwd(), file.filepath);
  throw new Error(
    `${name}: this file opens no store on the PostgreSQL run: list it in SQLITE_ONLY (vitest.config.ts) with its reason`,
  );
});
