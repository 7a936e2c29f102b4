/**
 * The compiled program, as installed (`bin` in package.json: dist/cli/bin.js, built by
 * `npm run build`, which npm ci's prepare step and `npm test` run). Tests that start the CLI as a
 * child process use it; in-process tests (runCli.ts) import the TypeScript sources.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const REPO_ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
export const COMPILED_BIN = path.join(REPO_ROOT, 'dist', 'cli', 'bin.js');
/** Written last by scripts/build.mjs. */
const BUILT_MARK = path.join(REPO_ROOT, 'dist', 'BUILT');

function newestUnder(dir: string): { file: string; mtimeMs: number } {
  let newest = { file: dir, mtimeMs: 0 };
  for (const entry of fs.readdirSync(dir, { withFileTypes: true, recursive: true })) {
    if (!entry.isFile()) continue;
    const file = path.join(entry.parentPath, entry.name);
    const { mtimeMs } = fs.statSync(file);
    if (mtimeMs > newest.mtimeMs) newest = { file, mtimeMs };
  }
  return newest;
}

/**
 * The compiled entry; throws when dist/ is missing, incomplete, or older than a file of src/, so
 * a child-process test never runs code other than the sources beside it.
 */
export function compiledBin(): string {
  const built = fs.statSync(BUILT_MARK, { throwIfNoEntry: false });
  if (built === undefined)
    throw new Error(
      `${path.relative(REPO_ROOT, BUILT_MARK)} is missing: run \`npm run build\` (npm ci and npm test run it)`,
    );
  const newest = newestUnder(path.join(REPO_ROOT, 'src'));
  if (newest.mtimeMs > built.mtimeMs)
    throw new Error(
      `dist/ is older than ${path.relative(REPO_ROOT, newest.file)}: run \`npm run build\` (npm test runs it)`,
    );
  return COMPILED_BIN;
}
