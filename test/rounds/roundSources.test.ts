/**
 * What the round model keeps of where each result came from and how it was read: the lab, its
 * case number and dates, the cutoffs stored with the result, and every result whose lab call
 * differs from its reading. Expected values are read by hand off the scenario's rows
 * (test/report/labReadingsScenario.ts).
 */
import { describe, expect, it } from 'vitest';
import { buildSiteRounds, ctHistory } from '../../src/rounds/roundModel.js';
import { results, ropes, site } from '../report/labReadingsScenario.js';

const rounds = buildSiteRounds(site, ropes, results);
const [first, second] = rounds;

describe('the round model keeps how each result was read', () => {
  it('carries the cutoffs of the lab that reported a result, not one per assay', () => {
    // By hand: A1 in round 2 is ostermark's Ct 31.0, read with that lab's 37 / 40 / 45.
    const a1 = second!.barns[0]!.pens.find((pen) => pen.penId === 'A1')!.results['PRRSV']!;
    expect(a1).toMatchObject({
      labId: 'ostermark',
      positiveBelow: 37,
      suspectBelow: 40,
      cycleLimit: 45,
      accession: 'OA-0817',
      collectedOn: '2026-08-17',
      reportedOn: '2026-08-20',
    });
    // Load score L = C_max - Ct with the lab's own cycle limit (common practice, no source): L = 45 - 31 = 14.
    expect(a1.load).toBe(14);
    const a3r1 = first!.barns[0]!.pens.find((pen) => pen.penId === 'A3')!.results['PRRSV']!;
    expect(a3r1).toMatchObject({ labId: 'northfield', positiveBelow: 36, cycleLimit: 40 });
  });

  it('lists the cutoffs each lab used in the round', () => {
    const ct = { measure: 'ct', positiveAtOrAbove: null, suspectAtOrAbove: null };
    expect(first!.cutoffs).toEqual([
      { labId: 'northfield', assayId: 'PRRSV', ...ct, positiveBelow: 36, suspectBelow: 40, cycleLimit: 40, results: 3 },
    ]);
    expect(second!.cutoffs).toEqual([
      { labId: 'ostermark', assayId: 'PRRSV', ...ct, positiveBelow: 37, suspectBelow: 40, cycleLimit: 45, results: 4 },
    ]);
  });

  it('names the lab reports behind a round: lab, report date, case numbers, first and last collection date', () => {
    // By hand: round 2 has 4 ostermark results of case OA-0817, collected on the 17th and 18th, reported on the 20th.
    expect(second!.sources).toEqual([
      {
        labId: 'ostermark',
        reportedOn: '2026-08-20',
        accessions: ['OA-0817'],
        assays: ['PRRSV'],
        results: 4,
        collectedFrom: '2026-08-17',
        collectedTo: '2026-08-18',
        barnIds: ['F1'],
      },
    ]);
    expect(first!.sources[0]).toMatchObject({
      labId: 'northfield',
      accessions: ['NV26-01001', 'NV26-01002', 'NV26-01003'],
      results: 3,
    });
    // A barn without ropes has no source.
    expect(second!.barns.find((barn) => barn.barnId === 'F2')!.sources).toEqual([]);
  });

  it('lists every result whose lab call differs, the second rope of a pen too', () => {
    // By hand: R2-3 (Ct 36.5, read positive, lab "Negative") stands for A3; R2-4 (not detected, lab "Positive") is A3's second rope.
    expect(
      second!.disagreements.map((entry) => [
        entry.penId,
        entry.sampleId,
        entry.labCall,
        entry.resultClass,
        entry.standsForPen,
      ]),
    ).toEqual([
      ['A3', 'R2-3', 'Negative', 'positive', true],
      ['A3', 'R2-4', 'Positive', 'negative', false],
    ]);
    expect(first!.disagreements).toEqual([]);
  });

  it('gives each history point the lab, its positive cutoff and its cycle limit', () => {
    expect(
      ctHistory(rounds, 'F1', 'A3', 'PRRSV').map((point) => [
        point.round,
        point.labId,
        point.positiveBelow,
        point.cycleLimit,
        point.ct,
      ]),
    ).toEqual([
      [1, 'northfield', 36, 40, 28],
      [2, 'ostermark', 37, 45, 36.5],
    ]);
  });
});
