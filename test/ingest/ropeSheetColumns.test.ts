/**
 * Rope-sheet columns under other names: the default synonyms (src/config/ropeSheet.ts), names
 * configured in sites.yaml `ropeSheet.columns`, and the headers that must still be refused
 * because a column could be either of two cells, or the file either a rope sheet or a lab's
 * export. Context: the demo config (src/demo/config); expected outcomes by hand from its
 * layouts and the northfield profile (columns "Sample ID", "Test Name", "Ct Value"; files
 * named nvdl_*).
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { ROPE_SHEET_OWN_NAME, ROPE_SHEET_SYNONYMS } from '../../src/config/ropeSheet.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { detectFileKind } from '../../src/ingest/detect.js';
import { IngestError } from '../../src/ingest/errors.js';
import { ingestFile } from '../../src/ingest/ingestFile.js';
import { plannedIdChecker } from '../../src/ingest/plannedIds.js';
import { mapRopeRow } from '../../src/ingest/ropeSheetRecords.js';
import { demoText } from '../config/configCases.js';
import { FIXED_NOW, workspacesPerTest } from '../helpers/workspace.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const labs = config.labs;
const workspace = workspacesPerTest();

function refusal(run: () => unknown): IngestError {
  try {
    run();
  } catch (error) {
    if (error instanceof IngestError) return error;
    throw error;
  }
  throw new Error('expected an IngestError');
}

const WITH_DATUM = `ropeSheet:\n  columns:\n    hungOn: Datum\n${demoText('sites.yaml')}`;

describe('rope-sheet headers under other names', () => {
  it('reads the default synonyms of every column, ignoring case, spaces and punctuation', () => {
    const kind = detectFileKind('ropes.csv', 'Sample No;Farm;House;Pen #;Collected On;Comments\n', labs);
    expect(kind).toMatchObject({ kind: 'ropes', delimiter: ';' });
    if (kind.kind !== 'ropes') return;
    expect(Object.fromEntries(kind.columnIndex)).toEqual({
      sample_id: 0,
      site: 1,
      barn: 2,
      pen: 3,
      hung_on: 4,
      notes: 5,
    });
    expect(kind.columnNames.get('hung_on')).toBe('Collected On');
  });

  it('accepts collected_on for hung_on (a sheet that was refused as missing hung_on)', () => {
    expect(detectFileKind('ropes.csv', 'sample_id,site,barn,pen,collected_on\n', labs)).toMatchObject({
      kind: 'ropes',
    });
  });

  it('refuses a header in which two cells name one column, naming both', () => {
    const twoDates = refusal(() => detectFileKind('ropes.csv', 'sample_id,site,barn,pen,hung_on,collected_on\n', labs));
    expect(twoDates).toMatchObject({ code: 'duplicate-header', line: 1, field: 'collected_on' });
    expect(twoDates.message).toContain(
      '"hung_on" and "collected_on" both name the column for the date the rope was hung',
    );
    expect(refusal(() => detectFileKind('ropes.csv', 'Sample ID,Sample,site,barn,pen,hung_on\n', labs)).code).toBe(
      'duplicate-header',
    );
    // Two synonyms of an optional column are as ambiguous as two of a required one.
    expect(
      refusal(() => detectFileKind('ropes.csv', 'sample_id,site,barn,pen,hung_on,note,remarks\n', labs)).code,
    ).toBe('duplicate-header');
  });

  it('refuses a header that reads both as a rope sheet and as a lab export, unless the lab names the file', () => {
    const header = 'Sample ID,Site,Barn,Pen,Hung On,Test Name,Ct Value\n';
    const both = refusal(() => detectFileKind('results.csv', header, labs));
    expect(both.code).toBe('ambiguous-lab');
    expect(both.message).toContain('both as a rope sheet and as an export of lab profile northfield');
    expect(detectFileKind('nvdl_results.csv', header, labs)).toMatchObject({
      kind: 'results',
      lab: { id: 'northfield' },
    });
  });

  it('reads a lab export that carries a pen column as the export, not as a rope sheet missing its site', () => {
    // Before: "Sample ID" and "Pen" made the header look like a rope sheet, refused for lacking "site".
    const header =
      'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status,Pen\n';
    expect(detectFileKind('results.csv', header, labs)).toMatchObject({ kind: 'results', lab: { id: 'northfield' } });
  });

  it('names the missing column with the names it may carry', () => {
    const error = refusal(() => detectFileKind('ropes.csv', 'sample_id,site,barn,pen,due_date\n', labs));
    expect(error).toMatchObject({ code: 'missing-column', field: 'hung_on' });
    expect(error.message).toContain('"hung_on", "hung", "date_hung"');
    expect(error.message).toContain('ropeSheet.columns.hungOn');
  });
});

describe('the default synonyms in the README', () => {
  it('lists exactly the synonyms the code accepts, column by column', () => {
    const readme = fs.readFileSync(new URL('../../README.md', import.meta.url), 'utf8');
    const inputs = readme.slice(readme.indexOf('## Inputs'), readme.indexOf('### Files still being written'));
    const documented = Object.fromEntries(
      [...inputs.matchAll(/^ {2}\| `([a-z_]+)` \| (.+) \|$/gm)].map((match) => [
        match[1]!,
        [...match[2]!.matchAll(/`([a-z_]+)`/g)].map((name) => name[1]!),
      ]),
    );
    const coded = Object.fromEntries(
      Object.entries(ROPE_SHEET_SYNONYMS).map(([column, names]) => [
        ROPE_SHEET_OWN_NAME[column as keyof typeof ROPE_SHEET_OWN_NAME],
        [...names],
      ]),
    );
    expect(documented).toEqual(coded);
  });
});

describe('rope-sheet columns named in sites.yaml', () => {
  const columns = loadConfig(workspace({ configFiles: { 'sites.yaml': WITH_DATUM } }).paths.configDir).ropeSheet
    .columns;

  it('reads the configured name and the column’s own name, and no longer the replaced synonyms', () => {
    expect(detectFileKind('ropes.csv', 'sample_id,site,barn,pen,Datum\n', labs, columns)).toMatchObject({
      kind: 'ropes',
    });
    expect(detectFileKind('ropes.csv', 'sample_id,site,barn,pen,hung_on\n', labs, columns)).toMatchObject({
      kind: 'ropes',
    });
    const replaced = refusal(() =>
      detectFileKind('ropes.csv', 'sample_id,site,barn,pen,collected_on\n', labs, columns),
    );
    expect(replaced).toMatchObject({ code: 'missing-column', field: 'hung_on' });
    expect(replaced.message).toContain('"hung_on", "Datum"');
    // Other columns keep their synonyms.
    expect(detectFileKind('ropes.csv', 'Sample No,Farm,House,Pen,Datum\n', labs, columns)).toMatchObject({
      kind: 'ropes',
    });
  });

  it('refuses a sheet that gives the configured name and the column’s own name', () => {
    expect(
      refusal(() => detectFileKind('ropes.csv', 'sample_id,site,barn,pen,hung_on,Datum\n', labs, columns)).code,
    ).toBe('duplicate-header');
  });
});

describe('rows of a rope sheet under other names', () => {
  it('names a refused cell by the header the sheet gives it', () => {
    const kind = detectFileKind('ropes.csv', 'Sample No,Farm,House,Pen,Collected On\n', labs);
    if (kind.kind !== 'ropes') throw new Error('not read as a rope sheet');
    const context = {
      fileName: 'ropes.csv',
      columnIndex: kind.columnIndex,
      columnNames: kind.columnNames,
      sites: config.sites,
      plannedIdCheck: plannedIdChecker(config),
    };
    expect(mapRopeRow(['HC-0803-F1-01', 'hollow-creek', 'F1', 'A1', '2026-08-03'], 2, context)).toMatchObject({
      ok: true,
      row: { siteId: 'hollow-creek', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
    });
    // 31 February is no date (common practice, no source: a mistyped date is refused, not repaired).
    expect(mapRopeRow(['HC-0803-F1-02', 'hollow-creek', 'F1', 'A2', '31/02/2026'], 3, context)).toMatchObject({
      ok: false,
      rejection: { code: 'bad-date', field: 'Collected On', line: 3 },
    });
    expect(mapRopeRow(['HC-0803-F1-03', 'hollow-creek', 'F9', 'A3', '2026-08-03'], 4, context)).toMatchObject({
      ok: false,
      rejection: { code: 'unknown-barn', field: 'House' },
    });
  });

  for (const thread of ['main thread', 'parse worker'] as const) {
    it(`stores a sheet with a configured date column and names its refused cells so (${thread})`, async () => {
      const ws = workspace({ configFiles: { 'sites.yaml': WITH_DATUM } });
      const deps = {
        config: ws.config(),
        store: ws.ws().store,
        now: () => FIXED_NOW,
        parseInWorkerFromBytes: thread === 'parse worker' ? 0 : Number.POSITIVE_INFINITY,
      };
      const file = path.join(ws.paths.inbox, 'hollow-creek_ropes.csv');
      fs.writeFileSync(
        file,
        'Sample No,Farm,House,Pen,Datum\nHC-0803-F1-01,hollow-creek,F1,A1,2026-08-03\nHC-0803-F1-02,HCF,F1,A2,2026-08-32\n',
      );
      const receipt = await ingestFile(file, deps);
      expect(receipt).toMatchObject({ status: 'accepted', kind: 'ropes', rows: { accepted: 1, rejected: 1 } });
      expect(receipt.rejectedRows).toEqual([expect.objectContaining({ line: 3, code: 'bad-date', field: 'Datum' })]);
    });
  }
});
