import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import { CLUSTERS_COLUMNS } from '../../src/report/clustersCsv.js';
import { NEXT_ROUND_COLUMNS } from '../../src/report/nextRoundFiles.js';
import { SUMMARY_COLUMNS } from '../../src/report/summaryCsv.js';

const readme = fs.readFileSync(new URL('../../README.md', import.meta.url), 'utf8');

/** Column names written as `code` in the first cell of each table row of a README section. */
function documentedColumns(heading: string): string[] {
  const start = readme.indexOf(heading);
  const end = readme.indexOf('\n#', start + heading.length);
  const section = readme.slice(start, end);
  return [...section.matchAll(/^\| ((?:`[a-z0-9_]+`(?:, )?)+) \|/gm)].flatMap((match) =>
    [...match[1]!.matchAll(/`([a-z0-9_]+)`/g)].map((name) => name[1]!),
  );
}

describe('output columns in the README', () => {
  it('documents every summary.csv column, and no other', () => {
    expect(documentedColumns('### summary.csv columns').sort()).toEqual([...SUMMARY_COLUMNS].sort());
  });
  it('documents every clusters.csv column, and no other', () => {
    expect(documentedColumns('### clusters.csv columns').sort()).toEqual([...CLUSTERS_COLUMNS].sort());
  });
  it('gives the next-round.csv columns in their order', () => {
    const line = readme
      .slice(readme.indexOf('### next-round.csv columns'))
      .split('\n')
      .find((text) => text.startsWith('`sample_id'))!;
    expect(line.split(':')[0]!.replace(/`/g, '').split(', ')).toEqual([...NEXT_ROUND_COLUMNS]);
  });
});
