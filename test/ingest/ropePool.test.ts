/**
 * The pool column of a rope sheet: the pool ID normalised like a sample ID, a planned pool ID
 * checked by its check character (ISO/IEC 7064 MOD 37-2), and a pool ID that is the rope's own
 * sample ID refused. Values by hand from the cells written.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { detectFileKind } from '../../src/ingest/detect.js';
import { plannedIdChecker } from '../../src/ingest/plannedIds.js';
import { mapRopeRow, type RopeContext } from '../../src/ingest/ropeSheetRecords.js';
import { formatSampleId } from '../../src/plan/sampleId.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const HEADER = ['sample_id', 'site', 'barn', 'pen', 'hung_on', 'Pool No'];
const kind = detectFileKind('ropes.csv', HEADER.join(',') + '\n', config.labs, config.ropeSheet.columns);
if (kind.kind !== 'ropes') throw new Error('rope sheet with a pool column not recognised');
const context: RopeContext = {
  fileName: 'ropes.csv',
  columnIndex: kind.columnIndex,
  columnNames: kind.columnNames,
  sites: config.sites,
  plannedIdCheck: plannedIdChecker(config),
};
const rope = (pool: string, sampleId = 'HC-0803-F1-01') =>
  mapRopeRow([sampleId, 'hollow-creek', 'F1', 'A1', '2026-08-03', pool], 2, context);

describe('the pool column of a rope sheet', () => {
  it('reads the pool under a synonym of its name, normalised like a sample ID; a blank cell is no pool', () => {
    expect(rope(' hc p1 ')).toMatchObject({ ok: true, row: { poolId: 'HCP1' } });
    expect(rope('')).toMatchObject({ ok: true, row: { poolId: null } });
  });

  it('checks a planned pool ID by its check character, and names the field as the sheet heads it', () => {
    const planned = formatSampleId({ siteCode: 'HCF', round: 3, sequence: 901 });
    expect(rope(planned.toLowerCase())).toMatchObject({ ok: true, row: { poolId: planned } });
    // One character changed in the sequence: MOD 37-2 catches every single substitution.
    const mistyped = planned.replace('-901', '-907');
    expect(rope(mistyped)).toMatchObject({
      ok: false,
      rejection: { code: 'bad-check-character', field: 'Pool No', line: 2 },
    });
  });

  it('refuses a pool ID that is the rope\u2019s own sample ID', () => {
    expect(rope('hc-0803-f1-01')).toMatchObject({ ok: false, rejection: { code: 'bad-pool', field: 'Pool No' } });
  });
});
