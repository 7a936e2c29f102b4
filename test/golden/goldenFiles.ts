/**
 * Golden files: an output compared byte for byte with a committed copy under
 * test/golden/expected/. The copies are written only when ROPEWATCH_UPDATE_GOLDEN=1 is set;
 * otherwise a missing or differing copy fails with the first differing lines, so that a change
 * of behaviour is seen and reviewed, never written over silently.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parse } from 'csv-parse/sync';

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
/** Context lines are cut to this many characters; differing lines are shown whole. */
const CONTEXT_WIDTH = 100;

const visible = (line: string | undefined) => (line === undefined ? '(no line: the file ended)' : JSON.stringify(line));
const shortened = (line: string | undefined) =>
  line !== undefined && line.length > CONTEXT_WIDTH ? `${visible(line.slice(0, CONTEXT_WIDTH))}...` : visible(line);

/** The cells of one CSV line (RFC 4180 quoting); a line that is not whole CSV on its own is split on commas. */
function cellsOf(line: string | undefined): string[] {
  if (line === undefined) return [];
  try {
    return (parse(line, { relax_column_count: true }) as string[][])[0] ?? [];
  } catch {
    return line.split(',');
  }
}

/** The cells of a differing line that changed, named by the golden header's columns. */
function changedCells(header: string | undefined, want: string | undefined, got: string | undefined): string[] {
  const names = cellsOf(header);
  const wantCells = cellsOf(want);
  const gotCells = cellsOf(got);
  const changed: string[] = [];
  for (let c = 0; c < Math.max(wantCells.length, gotCells.length); c++)
    if (wantCells[c] !== gotCells[c])
      changed.push(`${names[c] ?? `cell ${c + 1}`}: ${visible(wantCells[c])} -> ${visible(gotCells[c])}`);
  return changed;
}

/**
 * A readable account of how `actual` differs from `expected` (null when they are equal): the
 * first differing line with the lines before it, the cells that changed (named by the header,
 * the golden's first line), the next few differing lines, and the line counts. Lines are
 * compared as written: a carriage return shows as \r.
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
    `${label} differs from its golden file at line ${first + 1} (golden ${want.length} lines, output ${got.length}; - golden, + output):`,
  ];
  for (let i = Math.max(0, first - CONTEXT_LINES); i < first; i++) out.push(`    ${i + 1}  ${shortened(want[i])}`);
  out.push(`  - ${first + 1}  ${visible(want[first])}`, `  + ${first + 1}  ${visible(got[first])}`);
  if (first > 0) {
    const changed = changedCells(want[0], want[first], got[first]);
    if (changed.length > 0) out.push(`    changed cells: ${changed.slice(0, 6).join('; ')}`);
  }
  for (const i of differing.slice(1)) out.push(`  - ${i + 1}  ${visible(want[i])}`, `  + ${i + 1}  ${visible(got[i])}`);
  if (differing.length > MORE_DIFFERENCES) out.push('    (further lines not compared here)');
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
export function checkGolden(
  relative: string,
  actual: Buffer,
  env: NodeJS.ProcessEnv = process.env,
  goldenDir = GOLDEN_DIR,
): string | null {
  const file = path.join(goldenDir, relative);
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
