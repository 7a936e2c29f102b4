/**
 * Golden files: an output compared byte for byte with a committed copy under
 * test/golden/expected/. The copies are written only when ROPEWATCH_UPDATE_GOLDEN=1 is set;
 * otherwise a missing or differing copy fails with the first differing lines, so that a change
 * of behaviour is seen and reviewed, never written over silently.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const GOLDEN_DIR = path.join(path.dirname(fileURLToPath(import.meta.url)), 'expected');

/** The environment variable that rewrites the golden files from the current outputs. */
export const UPDATE_FLAG = 'ROPEWATCH_UPDATE_GOLDEN';

export function updatingGoldens(env: NodeJS.ProcessEnv = process.env): boolean {
  return env[UPDATE_FLAG] === '1';
}

/** Lines shown on each side of the first difference. */
const CONTEXT_LINES = 2;
/** Differing lines listed after the first. */
const MORE_DIFFERENCES = 4;

const visible = (line: string | undefined) => (line === undefined ? '(no line: file ended)' : JSON.stringify(line));

/**
 * A readable account of how `actual` differs from `expected` (null when they are equal):
 * the first differing line with the lines around it, then the next few differing lines, and
 * the line counts. Lines are compared as written, end-of-line characters kept apart.
 */
export function describeDifference(expected: string, actual: string, label: string): string | null {
  if (expected === actual) return null;
  const want = expected.split('\n');
  const got = actual.split('\n');
  const length = Math.max(want.length, got.length);
  const differing: number[] = [];
  for (let i = 0; i < length && differing.length <= MORE_DIFFERENCES; i++) if (want[i] !== got[i]) differing.push(i);
  const first = differing[0]!;
  const out = [
    `${label} differs from its golden file at line ${first + 1} (golden ${want.length} lines, output ${got.length}):`,
  ];
  for (let i = Math.max(0, first - CONTEXT_LINES); i < first; i++) out.push(`    ${i + 1}  ${visible(want[i])}`);
  out.push(`  - ${first + 1}  ${visible(want[first])}`, `  + ${first + 1}  ${visible(got[first])}`);
  const header = want[0]?.split(',');
  const wantCells = want[first]?.split(',') ?? [];
  const gotCells = got[first]?.split(',') ?? [];
  const cells: string[] = [];
  for (let c = 0; c < Math.max(wantCells.length, gotCells.length) && cells.length < 6; c++)
    if (wantCells[c] !== gotCells[c])
      cells.push(`${header?.[c] ?? `cell ${c + 1}`}: ${visible(wantCells[c])} -> ${visible(gotCells[c])}`);
  if (first > 0 && cells.length > 0)
    out.push(`    cells (by the golden header, naive split on commas): ${cells.join('; ')}`);
  for (const i of differing.slice(1)) out.push(`  - ${i + 1}  ${visible(want[i])}`, `  + ${i + 1}  ${visible(got[i])}`);
  out.push(
    `If the change is intended, review it and rewrite the golden files: ${UPDATE_FLAG}=1 npx vitest run test/golden`,
  );
  return out.join('\n');
}

/**
 * Compares `actual` byte for byte with the golden file `relative` (under GOLDEN_DIR); with the
 * update flag set, writes it instead. Returns the problem as text (null when the output matches
 * or was written).
 */
export function checkGolden(relative: string, actual: Buffer, env: NodeJS.ProcessEnv = process.env): string | null {
  const file = path.join(GOLDEN_DIR, relative);
  if (updatingGoldens(env)) {
    fs.mkdirSync(path.dirname(file), { recursive: true });
    fs.writeFileSync(file, actual);
    return null;
  }
  if (!fs.existsSync(file))
    return `The golden file ${path.relative(process.cwd(), file)} is missing. Write it from the current outputs with ${UPDATE_FLAG}=1 npx vitest run test/golden, and review it before committing.`;
  const expected = fs.readFileSync(file);
  if (expected.equals(actual)) return null;
  return (
    describeDifference(expected.toString('utf8'), actual.toString('utf8'), relative) ??
    `${relative} differs from its golden file in bytes that read as the same text (invalid UTF-8 or a byte order mark).`
  );
}
