import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import { TIDY_TABLES } from '../../src/report/tidy/tidyTables.js';

const readme = fs.readFileSync(new URL('../../README.md', import.meta.url), 'utf8');

/** Column names written as `code` in the first cell of each table row of a README section, in order. */
function documentedColumns(heading: string): string[] {
  const start = readme.indexOf(heading);
  expect(start, heading).toBeGreaterThan(-1);
  const end = readme.indexOf('\n#', start + heading.length);
  return [...readme.slice(start, end).matchAll(/^\| ((?:`[a-z0-9_]+`(?:, )?)+) \|/gm)].flatMap((match) =>
    [...match[1]!.matchAll(/`([a-z0-9_]+)`/g)].map((name) => name[1]!),
  );
}

describe('tidy table columns in the README', () => {
  for (const table of TIDY_TABLES) {
    it(`documents every ${table.file} column in the file's order, and no other`, () => {
      expect(documentedColumns(`### ${table.file} columns`)).toEqual(table.columns.map((column) => column.name));
    });
  }
});
