/**
 * Bytes refused for a configuration mistake are read again once the mistake is put right: the
 * same bytes re-dropped, or a renamed copy. Expected counts are by hand from the rows written.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const GOOD_PROFILE = fs.readFileSync(path.join(DEMO_CONFIG_DIR, 'labs', 'northfield.yaml'), 'utf8');
// A typing mistake in the profile: the lab's Ct column is "Ct Value".
const WRONG_PROFILE = GOOD_PROFILE.replace('result: Ct Value', 'result: Ct Valeu');

const results = () =>
  northfieldExport(
    [
      { sampleId: 'RT-01', assay: 'PRRSV', ct: 27.5, collectedOn: '2026-08-03' },
      { sampleId: 'RT-02', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' },
    ],
    '2026-08-06',
    1,
  );

describe('bytes refused before', () => {
  it('are read again with the corrected configuration, as the same name or a renamed copy', async () => {
    const ws = workspace({ configFiles: { 'labs/northfield.yaml': WRONG_PROFILE } });
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    await ws.drop(
      'ropes.csv',
      ropeSheet(site, [
        { sampleId: 'RT-01', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
        { sampleId: 'RT-02', barnId: 'F1', penId: 'A4', hungOn: '2026-08-03' },
      ]),
    );
    const refused = await ws.drop('nvdl_0806.csv', results());
    expect(refused.receipt.status).toBe('rejected');
    const firstCode = refused.receipt.reason!.code;

    // Same bytes, same mistake: refused again with today's reason, and still one record.
    const again = await ws.drop('nvdl_0806_copy.csv', results());
    expect(again.receipt).toMatchObject({ status: 'rejected', reason: { code: firstCode } });
    expect(again.receipt.warnings.join(' ')).toContain('refused before');
    expect(
      ws
        .ws()
        .store.files()
        .filter((file) => file.sha256 === refused.receipt.sha256),
    ).toHaveLength(1);

    // The profile is put right: a renamed copy of the same bytes is accepted and stored.
    ws.closeStore();
    fs.writeFileSync(path.join(ws.paths.configDir, 'labs', 'northfield.yaml'), GOOD_PROFILE);
    const fixed = await ws.drop('nvdl_0806_resent.csv', results());
    expect(fixed.receipt).toMatchObject({ status: 'accepted', rows: { accepted: 2 }, sites: ['hollow-creek'] });
    expect(fixed.receipt.warnings.join(' ')).toContain('refused before');
    const records = ws
      .ws()
      .store.files()
      .filter((file) => file.sha256 === refused.receipt.sha256);
    expect(records).toEqual([
      expect.objectContaining({ status: 'accepted', name: 'nvdl_0806_resent.csv', reasonCode: null, rowsAccepted: 2 }),
    ]);

    // From now on the same bytes are a duplicate, not a refusal.
    const duplicate = await ws.drop('nvdl_0806.csv', results());
    expect(duplicate.receipt.status).toBe('duplicate');
  });
});
