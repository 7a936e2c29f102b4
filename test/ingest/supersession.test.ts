/**
 * The supersession loop without a store: an arriving report is linked to the current reports of
 * its sample, assay and lab, oldest first, until one stays current. The decisions follow HL7 v2
 * observation result status (table 0085: P preliminary, F final, C "a correction and thus
 * replaces a final result"; HL7 v2.5.1, from memory); the later report date winning between final
 * reports is common practice, no source. Expected links are by hand from the reports written.
 */
import { describe, expect, it } from 'vitest';
import type { ResultRow } from '../../src/domain/records.js';
import type { EarlierReport } from '../../src/domain/store.js';
import { supersede } from '../../src/ingest/supersession.js';

function row(overrides: Partial<ResultRow>): ResultRow {
  return {
    line: 7,
    labId: 'lab-a',
    sampleId: 'S-1',
    assayId: 'prrsv-pcr',
    labAssay: 'PRRSV',
    measure: 'ct',
    ct: 28.1,
    sp: null,
    ctRaw: '28.1',
    labCall: null,
    accession: null,
    collectedOn: '2026-08-01',
    reportedOn: '2026-08-09',
    reportStatus: null,
    control: null,
    resultClass: 'positive',
    reason: 'Ct below the cutoff',
    loadBand: null,
    positiveBelow: 35,
    suspectBelow: 38,
    cycleLimit: 40,
    positiveAtOrAbove: null,
    suspectAtOrAbove: null,
    markedReissue: false,
    statusKind: null,
    statusWord: null,
    labCallClass: null,
    callDiffers: false,
    sampleIdAsWritten: null,
    contentKey: 1,
    encodedRope: undefined,
    ...overrides,
  };
}

function earlier(id: number, overrides: Partial<EarlierReport>): EarlierReport {
  return {
    id,
    reportedOn: '2026-08-06',
    status: null,
    statusWord: null,
    resultClass: 'negative',
    ctRaw: 'ND',
    labCall: null,
    ...overrides,
  };
}

describe('supersede', () => {
  it('links a later final report as replacing the earlier one, and names both readings', () => {
    const { links, notes } = supersede([earlier(3, {})], row({}), 10);
    expect(links).toEqual([{ oldResultId: 3, newResultId: 10, kind: 'later-report', reason: expect.any(String) }]);
    expect(notes).toHaveLength(1);
    expect(notes[0]).toMatchObject({
      line: 7,
      sampleId: 'S-1',
      assayId: 'prrsv-pcr',
      labId: 'lab-a',
      thisFileCurrent: true,
      replaced: { resultClass: 'negative', ctRaw: 'ND', reportedOn: '2026-08-06' },
      current: { resultClass: 'positive', ctRaw: '28.1', reportedOn: '2026-08-09' },
    });
  });

  it('links the arriving preliminary report as replaced when a final one is current, and stops there', () => {
    const arriving = row({ statusKind: 'preliminary', statusWord: 'Pending', reportedOn: '2026-08-10' });
    const { links, notes } = supersede([earlier(3, { status: 'final' }), earlier(4, {})], arriving, 10);
    // The first current report stays current: the arriving row is the one replaced, and the loop ends.
    expect(links).toEqual([
      { oldResultId: 10, newResultId: 3, kind: 'preliminary-after-final', reason: expect.any(String) },
    ]);
    expect(notes[0]).toMatchObject({ thisFileCurrent: false, replaced: { ctRaw: '28.1' }, current: { ctRaw: 'ND' } });
  });

  it('replaces every current report a correction meets, oldest first', () => {
    const arriving = row({ statusKind: 'corrected', statusWord: 'Korrektur', reportedOn: '2026-08-08' });
    const { links } = supersede([earlier(3, {}), earlier(5, { reportedOn: '2026-08-07' })], arriving, 10);
    expect(links.map((link) => [link.oldResultId, link.newResultId, link.kind])).toEqual([
      [3, 10, 'correction'],
      [5, 10, 'correction'],
    ]);
  });

  it('reads the status cell as the status word when no configured word was found', () => {
    const arriving = row({ statusKind: 'corrected', statusWord: null, reportStatus: 'C' });
    const { notes } = supersede([earlier(3, {})], arriving, 10);
    expect(notes[0]!.reason).toContain('"C"');
  });

  it('links nothing when no report is current before the row', () => {
    expect(supersede([], row({}), 10)).toEqual({ links: [], notes: [] });
  });
});
