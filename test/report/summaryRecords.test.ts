/**
 * The corrections cell of the pen rows of summary.csv: the replaced reports of the pen and assay,
 * in the round's order, each as its cell, joined with "; ".
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { RoundSummary } from '../../src/analysis/roundSummary.js';
import { replacementCell } from '../../src/report/roundNotes.js';
import { correctionsByPenAssay, penAssayKey } from '../../src/report/summaryRecords.js';

type Replaced = RoundSummary['replaced'][number];

const reading = (ct: number | null, reportedOn: string) => ({
  resultClass: ct === null ? ('negative' as const) : ('positive' as const),
  ct,
  ctRaw: ct === null ? 'Undetermined' : String(ct),
  labCall: null,
  reportedOn,
  status: null,
  statusWord: null,
});

const replacedEntry = fc
  .record({
    barnId: fc.constantFrom('F1', 'F2'),
    penId: fc.constantFrom('A1', 'A2', 'B1'),
    assayId: fc.constantFrom('PRRSV', 'PED'),
    sample: fc.integer({ min: 1, max: 99 }),
    kind: fc.constantFrom('correction', 'later-report', null),
    oldCt: fc.option(fc.integer({ min: 18, max: 39 })),
    newCt: fc.option(fc.integer({ min: 18, max: 39 })),
    day: fc.integer({ min: 1, max: 28 }),
  })
  .map(
    (e): Replaced => ({
      sampleId: `S${e.sample}`,
      assayId: e.assayId,
      labId: 'northfield',
      kind: e.kind,
      reason: 'stored reason',
      replaced: reading(e.oldCt, `2026-08-${String(e.day).padStart(2, '0')}`),
      inPlace: reading(e.newCt, '2026-08-29'),
      barnId: e.barnId,
      penId: e.penId,
      labName: 'Northfield',
    }),
  );

describe('corrections of a pen row', () => {
  it('gives each pen and assay the cell a search of the round replaced reports gives', () => {
    fc.assert(
      fc.property(fc.array(replacedEntry, { maxLength: 12 }), (replaced) => {
        const cells = correctionsByPenAssay(replaced);
        for (const barnId of ['F1', 'F2'])
          for (const penId of ['A1', 'A2', 'B1'])
            for (const assayId of ['PRRSV', 'PED']) {
              // Expected: the code before, same inputs (a search of the round's replaced reports per pen row).
              const searched = replaced
                .filter((entry) => entry.barnId === barnId && entry.penId === penId && entry.assayId === assayId)
                .map(replacementCell)
                .join('; ');
              expect(cells.get(penAssayKey(barnId, penId, assayId)) ?? '').toBe(searched);
            }
      }),
    );
  });
});
