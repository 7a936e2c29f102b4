import { NORTHFIELD_HEADER } from '../../src/demo/labFiles.js';
/**
 * An antibody ELISA row in a lab export: the result column holds an S/P ratio, read the other
 * way round from a Ct. Context is the demo config (src/demo/config): Northfield maps "PRRSV Oral
 * Fluid Antibody ELISA" to PRRSV-AB, positive at S/P >= 0.4 (Kittawornrat et al. 2012, J Vet
 * Diagn Invest 24:262). Before antibody assays existed the row was refused as unknown-assay, and
 * mapping it to the PCR assay read S/P 0.21 as a Ct of 0.21: positive, against the lab's own
 * negative call.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { detectFileKind } from '../../src/ingest/detect.js';
import { plannedIdChecker } from '../../src/ingest/plannedIds.js';
import { mapResultRow, type ResultContext } from '../../src/ingest/resultRecords.js';

const config = loadConfig(DEMO_CONFIG_DIR);
// The demo lab's export header, as the demo writes it.
const NF_COLUMNS = NORTHFIELD_HEADER;
const nfKind = detectFileKind('nvdl_t.csv', NF_COLUMNS.join(',') + '\n', config.labs);
if (nfKind.kind !== 'results') throw new Error('northfield header not recognised');
const context: ResultContext = {
  fileName: 'nvdl_t.csv',
  lab: nfKind.lab,
  columnIndex: nfKind.columnIndex,
  assayById: config.assayById,
  sites: config.sites,
  plannedIdCheck: plannedIdChecker(config),
};

type NfRow = Partial<Record<(typeof NF_COLUMNS)[number], string>>;
const base: NfRow = {
  'Case No': 'NV26-01080',
  'Sample ID': 'HC-0817-F2-01',
  'Test Name': 'PRRSV Oral Fluid Antibody ELISA',
  'Ct Value': '0.21',
  Interpretation: 'Negative',
  'Internal Control': '',
  'Collection Date': '2026-08-17',
  'Report Date': '2026-08-20',
  'Report Status': 'Final',
};
const row = (overrides: NfRow = {}) =>
  mapResultRow(
    NF_COLUMNS.map((column) => ({ ...base, ...overrides })[column] ?? ''),
    5,
    context,
  );

describe('an antibody ELISA row', () => {
  it('reads S/P 0.21, called negative by the lab, as negative: the calls agree', () => {
    const outcome = row();
    expect(outcome.ok).toBe(true);
    if (!outcome.ok) return;
    expect(outcome.row).toMatchObject({
      assayId: 'PRRSV-AB',
      measure: 'sp-ratio',
      sp: 0.21,
      ct: null,
      ctRaw: '0.21',
      resultClass: 'negative',
      callDiffers: false,
      positiveAtOrAbove: 0.4,
      suspectAtOrAbove: null,
      positiveBelow: null,
      suspectBelow: null,
      cycleLimit: null,
    });
  });

  it('reads S/P 0.52, called positive, as positive (at or above 0.4)', () => {
    const outcome = row({ 'Ct Value': '0.52', Interpretation: 'Positive' });
    expect(outcome.ok && outcome.row).toMatchObject({ resultClass: 'positive', sp: 0.52, callDiffers: false });
  });

  it('holds a blank S/P as invalid even though the lab leaves a blank Ct for not detected', () => {
    // northfield.yaml: blankIsNotDetected true, for Ct. An S/P has no "not detected".
    const outcome = row({ 'Ct Value': '', Interpretation: 'Negative' });
    expect(outcome.ok && outcome.row).toMatchObject({ resultClass: 'invalid', sp: null, callDiffers: true });
  });

  it("refuses the lab's not-detected word in an S/P cell, naming the line and the result column", () => {
    const outcome = row({ 'Ct Value': 'Undetermined' });
    expect(outcome.ok).toBe(false);
    if (outcome.ok) return;
    expect(outcome.rejection).toMatchObject({ code: 'bad-sp', line: 5, field: 'Ct Value', value: 'Undetermined' });
  });

  it('refuses an S/P beyond any ELISA reading (a percentage in the column)', () => {
    const outcome = row({ 'Ct Value': '52' });
    expect(outcome.ok ? null : outcome.rejection).toMatchObject({ code: 'sp-out-of-range', field: 'Ct Value' });
  });

  it('invalidates an S/P whose lab call is invalid', () => {
    const outcome = row({ 'Ct Value': '0.9', Interpretation: 'Invalid' });
    expect(outcome.ok && outcome.row).toMatchObject({ resultClass: 'invalid' });
  });

  it('tells an unmapped ELISA to use an S/P assay, never a PCR one', () => {
    const outcome = row({ 'Test Name': 'IAV Oral Fluid Antibody ELISA' });
    expect(outcome.ok ? null : outcome.rejection).toMatchObject({ code: 'unknown-assay' });
    expect(outcome.ok ? '' : outcome.rejection.message).toContain('measure: sp-ratio');
  });
});
