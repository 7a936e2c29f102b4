/**
 * The receipt names each row whose lab call differs from the reading with the lab's cutoffs, with
 * both readings, so a disagreement is never silent (common practice, no source: a result whose
 * reading and lab call disagree goes back to a person).
 */
import { describe, expect, it } from 'vitest';
import { emptyReceipt, type Receipt } from '../../src/ingest/receipt.js';
import { receiptText } from '../../src/pipeline.js';

const receipt: Receipt = {
  ...emptyReceipt('nvdl_results.csv', 'ab'.repeat(32), '2026-08-06T14:00:00.000Z'),
  kind: 'results',
  lab: 'northfield',
  encoding: 'utf-8',
  rows: { accepted: 2, rejected: 0, duplicate: 0, superseded: 0 },
  sites: ['hollow-creek'],
};

describe('call disagreements on the receipt', () => {
  it('lists each disagreeing row with the lab call and the reading', () => {
    const text = receiptText({
      ...receipt,
      callDisagreements: [
        {
          line: 3,
          sampleId: 'S-1',
          assayId: 'PRRSV',
          ctRaw: '35.50',
          labCall: 'Negative',
          labCallClass: 'negative',
          resultClass: 'positive',
        },
      ],
      callDisagreementsNotListed: 2,
    });
    expect(text).toContain(
      "the lab's call differs from ropewatch's reading of the value (both kept; review with the lab):",
    );
    expect(text).toContain('  line 3, S-1 PRRSV: lab "Negative" (negative), ropewatch positive from "35.50"');
    expect(text).toContain('  ... and 2 more');
  });

  it('adds nothing when no row disagrees', () => {
    expect(receiptText({ ...receipt, callDisagreements: [], callDisagreementsNotListed: 0 })).not.toContain('differs');
    expect(receiptText(receipt)).not.toContain('differs');
  });
});
