/**
 * What a file is, from its name and header alone. The headers are those the demo scenario writes
 * (src/demo/scenario.ts northfieldExport, ostermarkExport, ropeSheet) and the column names of
 * the demo lab profiles; the expected kinds follow from the profiles, by hand.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { compileConfiguredPattern } from '../../src/config/pattern.js';
import type { LabProfile } from '../../src/config/types.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { detectFileKind, guessDelimiter } from '../../src/ingest/detect.js';
import { IngestError } from '../../src/ingest/errors.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const labs = config.labs;
const northfield = config.labById.get('northfield')!;

const NF_HEADER =
  'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status';
const OM_HEAD = 'Befundübersicht Oralflüssigkeiten\nAuftrag;Probe;Untersuchung;Ct;Befund;IK;Entnahme;Befunddatum\n';

function refusal(run: () => unknown): IngestError {
  try {
    run();
  } catch (error) {
    if (error instanceof IngestError) return error;
    throw error;
  }
  throw new Error('expected an IngestError');
}

describe('detectFileKind: lab exports', () => {
  it('recognises each demo lab by its header under any file name', () => {
    const nf = detectFileKind(
      'results.csv',
      `${NF_HEADER}\nNV26-1,X,PRRSV NA/EU RT-PCR,31.2,Positive,PASS,2026-08-03,2026-08-06,Final\n`,
      labs,
    );
    expect(nf).toMatchObject({ kind: 'results', delimiter: ',', headerLine: 1 });
    expect(nf.kind === 'results' && nf.lab.id).toBe('northfield');
    const om = detectFileKind('export.csv', OM_HEAD, labs);
    // Ostermark has a title line above the header: the header is on line 2.
    expect(om).toMatchObject({ kind: 'results', delimiter: ';', headerLine: 2 });
    expect(om.kind === 'results' && om.lab.id).toBe('ostermark');
  });

  it('uses the file name to choose between two labs whose headers both fit', () => {
    const twin: LabProfile = {
      ...northfield,
      id: 'northfield-west',
      fileNamePattern: compileConfiguredPattern('^nvdlw_'),
    };
    const both = [northfield, twin];
    const byName = detectFileKind('nvdlw_2026-08-06.csv', `${NF_HEADER}\n`, both);
    expect(byName.kind === 'results' && byName.lab.id).toBe('northfield-west');
    const other = detectFileKind('NVDL_2026-08-06.csv', `${NF_HEADER}\n`, both);
    expect(other.kind === 'results' && other.lab.id).toBe('northfield');
    const ambiguous = refusal(() => detectFileKind('results.csv', `${NF_HEADER}\n`, both));
    expect(ambiguous.code).toBe('ambiguous-lab');
    expect(ambiguous.message).toContain('northfield-west');
  });

  it('names the missing required column of a lab export', () => {
    const header = 'Case No,Sample ID,Test Name,Interpretation,Collection Date';
    const error = refusal(() => detectFileKind('nvdl_x.csv', `${header}\n`, labs));
    expect(error).toMatchObject({ code: 'missing-column', field: 'Ct Value', line: 1 });
  });

  it('refuses a header that names a column twice', () => {
    const error = refusal(() => detectFileKind('nvdl_x.csv', `${NF_HEADER},Ct Value\n`, labs));
    expect(error).toMatchObject({ code: 'duplicate-header', field: 'Ct Value', line: 1 });
    // Case and spacing are folded before comparing, so "ct  value" is the same column.
    expect(refusal(() => detectFileKind('x.csv', `${NF_HEADER},ct  value\n`, labs)).code).toBe('duplicate-header');
  });

  it('refuses a header that matches no lab and is not a rope sheet', () => {
    const error = refusal(() =>
      detectFileKind('nvdl_invoice.csv', 'Invoice,Client,Samples,Amount\nINV-1,Someone,36,412.00\n', labs),
    );
    expect(error).toMatchObject({ code: 'unknown-format', line: 1 });
  });

  it('refuses an empty or blank file', () => {
    expect(refusal(() => detectFileKind('x.csv', '', labs)).code).toBe('empty-file');
    expect(refusal(() => detectFileKind('x.csv', '\uFEFF \n\n', labs)).code).toBe('empty-file');
  });
});

describe('detectFileKind: rope sheets', () => {
  it('recognises a rope sheet by its columns, folding case, spaces and hyphens', () => {
    expect(detectFileKind('ropes.csv', 'sample_id,site,barn,pen,hung_on,notes\n', labs)).toMatchObject({
      kind: 'ropes',
      delimiter: ',',
    });
    expect(detectFileKind('ropes.csv', 'Sample ID;Site;Barn;Pen;Hung-On\n', labs)).toMatchObject({
      kind: 'ropes',
      delimiter: ';',
    });
  });

  it('names the missing column of a rope sheet', () => {
    const error = refusal(() => detectFileKind('ropes.csv', 'sample_id,site,barn,pen,notes\n', labs));
    expect(error).toMatchObject({ code: 'missing-column', field: 'hung_on', line: 1 });
  });

  it('refuses a rope sheet with a duplicated column', () => {
    expect(refusal(() => detectFileKind('ropes.csv', 'sample_id,site,barn,pen,hung_on,pen\n', labs)).code).toBe(
      'duplicate-header',
    );
  });
});

describe('guessDelimiter', () => {
  it('picks the delimiter that splits the line most, ignoring delimiters inside quotes', () => {
    expect(guessDelimiter('a;b;c')).toBe(';');
    expect(guessDelimiter('a\tb\tc')).toBe('\t');
    expect(guessDelimiter('"x;y;z;w",b,c')).toBe(',');
  });
});

describe('detectFileKind: regressions', () => {
  it('calls a file named like a lab export but sharing none of its columns unknown-format, not missing-column', () => {
    // Regression: an invoice named nvdl_invoice.csv was refused as "missing column Sample ID".
    expect(refusal(() => detectFileKind('invoice.csv', 'Invoice,Client,Samples,Amount\n', labs)).code).toBe(
      'unknown-format',
    );
    // One required column present under the lab's name: a lab export with columns missing.
    expect(refusal(() => detectFileKind('nvdl_x.csv', 'Sample ID,Client\n', labs))).toMatchObject({
      code: 'missing-column',
      field: 'Test Name',
    });
  });
});
