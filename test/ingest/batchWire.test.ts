/**
 * The form in which the parse worker hands rows to the store thread: whatever a batch holds, the
 * rows read back are the rows sent, field for field (the oracle is the batch itself), and the
 * typed arrays listed for transfer are exactly the ones the batch owns.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { encodeBatch, transferables, WireRows, decodeBatch } from '../../src/ingest/batchWire.js';
import type { ResultRow } from '../../src/domain/records.js';

const SEED = 20261203;
const text = fc.string({ unit: 'binary', maxLength: 12 });
const maybe = <T>(arbitrary: fc.Arbitrary<T>) => fc.option(arbitrary, { nil: null });

const resultRow: fc.Arbitrary<ResultRow> = fc.record({
  line: fc.integer({ min: 2, max: 10_000_000 }),
  labId: fc.constantFrom('northfield', 'ostermark'),
  sampleId: text,
  assayId: fc.constantFrom('PRRSV', 'IAV'),
  labAssay: text,
  measure: fc.constantFrom('ct', 'sp-ratio'),
  ct: maybe(fc.double({ min: 0.01, max: 60, noNaN: true })),
  sp: maybe(fc.double({ min: -1, max: 10, noNaN: true })),
  ctRaw: text,
  labCall: maybe(text),
  accession: maybe(text),
  collectedOn: maybe(fc.constantFrom('2026-08-03', '2026-08-17')),
  reportedOn: maybe(fc.constantFrom('2026-08-06', '2026-08-20')),
  reportStatus: maybe(fc.constantFrom('Final', 'Corrected')),
  control: maybe(fc.constantFrom('PASS', 'FAIL')),
  resultClass: fc.constantFrom('positive', 'suspect', 'negative', 'invalid'),
  reason: text,
  loadBand: maybe(fc.constantFrom('high', 'moderate', 'low')),
  positiveBelow: maybe(fc.integer({ min: 30, max: 38 })),
  suspectBelow: maybe(fc.integer({ min: 36, max: 40 })),
  cycleLimit: maybe(fc.constantFrom(40, 45)),
  positiveAtOrAbove: maybe(fc.constantFrom(0.4, 1)),
  suspectAtOrAbove: maybe(fc.constantFrom(0.3, 0.8)),
  markedReissue: fc.boolean(),
  statusKind: maybe(fc.constantFrom('preliminary', 'final', 'corrected')),
  statusWord: maybe(text),
  labCallClass: maybe(fc.constantFrom('positive', 'suspect', 'negative', 'invalid')),
  callDiffers: fc.boolean(),
  sampleIdAsWritten: maybe(text),
  contentKey: fc.integer({ min: 0, max: 2 ** 52 - 1 }),
  encodedRope: fc.option(
    fc.record({ siteId: text, barnId: text, penId: text, hungOn: fc.constantFrom('2026-08-03', '2026-08-04') }),
    { nil: undefined },
  ),
});

describe('batch wire format', () => {
  it('gives back every row field for field, in order', () => {
    fc.assert(
      fc.property(fc.array(resultRow, { maxLength: 200, size: 'max' }), (rows) => {
        const wire = encodeBatch({ results: rows, ropes: [], rejections: [] });
        // Through structured clone with the listed buffers moved, as postMessage does.
        const arrived = structuredClone(wire, { transfer: transferables(wire) });
        // Every buffer the batch owns was listed: a moved buffer is left empty behind (WHATWG
        // HTML, structured serialize with transfer: the source ArrayBuffer is detached).
        expect(
          [wire.numbers, ...Object.values(wire.texts).map((text) => text.index)].map((array) => array.byteLength),
        ).toEqual(new Array(1 + Object.keys(wire.texts).length).fill(0));
        const decoded = decodeBatch(arrived).results;
        expect(decoded.length).toBe(rows.length);
        const back = Array.from({ length: decoded.length }, (_, i) => decoded.at(i));
        // toEqual treats an absent key and an undefined one alike: compare the rope explicitly.
        expect(back).toEqual(rows);
        expect(back.map((row) => row?.encodedRope === undefined)).toEqual(
          rows.map((row) => row.encodedRope === undefined),
        );
      }),
      { seed: SEED, numRuns: 300 },
    );
  });

  it('gives each row its own rope when neighbouring rows share all but one part of it, read in any order', () => {
    // Ropes from a tiny pool: neighbours often name the same place, or places that differ in one
    // part only (the decoded place is shared between neighbours that name the same one).
    const part = fc.constantFrom('a', 'b');
    const rope = fc.option(fc.record({ siteId: part, barnId: part, penId: part, hungOn: part }), {
      nil: undefined,
    });
    fc.assert(
      fc.property(
        fc
          .array(fc.tuple(resultRow, rope), { minLength: 1, maxLength: 40 })
          .chain((pairs) =>
            fc.tuple(fc.constant(pairs), fc.shuffledSubarray([...pairs.keys()], { minLength: pairs.length })),
          ),
        ([pairs, order]) => {
          const rows = pairs.map(([row, encodedRope]) => ({ ...row, encodedRope }));
          const decoded = decodeBatch(encodeBatch({ results: rows, ropes: [], rejections: [] })).results;
          for (const i of order) expect(decoded.at(i)?.encodedRope).toEqual(rows[i]!.encodedRope);
          for (let i = 0; i < rows.length; i++) expect(decoded.at(i)?.encodedRope).toEqual(rows[i]!.encodedRope);
        },
      ),
      { seed: SEED, numRuns: 300 },
    );
  });

  it('stores each distinct text of a column once per batch', () => {
    const row = (i: number): ResultRow => ({
      line: i + 2,
      labId: 'northfield',
      sampleId: `S-${i}`,
      assayId: 'PRRSV',
      labAssay: 'PRRSV NA/EU RT-PCR',
      measure: 'ct',
      ct: null,
      sp: null,
      ctRaw: 'Undetermined',
      labCall: 'Negative',
      accession: `NV-${i}`,
      collectedOn: '2026-08-03',
      reportedOn: '2026-08-06',
      reportStatus: 'Final',
      control: 'PASS',
      resultClass: 'negative',
      reason: 'not detected',
      loadBand: null,
      positiveBelow: 36,
      suspectBelow: 38,
      cycleLimit: 40,
      positiveAtOrAbove: null,
      suspectAtOrAbove: null,
      markedReissue: false,
      statusKind: 'final',
      statusWord: 'Final',
      labCallClass: 'negative',
      callDiffers: false,
      sampleIdAsWritten: null,
      contentKey: i,
      encodedRope: undefined,
    });
    const wire = encodeBatch({ results: Array.from({ length: 100 }, (_, i) => row(i)), ropes: [], rejections: [] });
    expect(wire.texts.ctRaw.values).toEqual(['Undetermined']);
    expect(wire.texts.sampleId.values).toHaveLength(100);
    expect(new WireRows(wire).at(42)).toEqual(row(42));
  });

  it('keeps a dictionary for a column whose values come back, and gives it up for one whose values hardly ever do', () => {
    // Two assays per sample, alternating; a case number of its own on every row, except every
    // hundredth row from the 100th on, which repeats the first row's, long after the trial ended.
    // By construction: a kept dictionary would list NV-0 once (397 values), a given-up one once
    // per run (400).
    const rows = Array.from({ length: 400 }, (_, i) => ({
      assayId: i % 2 === 0 ? 'PRRSV' : 'IAV',
      accession: i > 0 && i % 100 === 0 ? 'NV-0' : `NV-${i}`,
      sampleId: `S-${Math.floor(i / 2)}`,
    }));
    const wire = encodeBatch({
      results: rows.map((row, i) => ({ ...fc.sample(resultRow, { seed: i, numRuns: 1 })[0]!, ...row })),
      ropes: [],
      rejections: [],
    });
    expect(wire.texts.assayId.values).toEqual(['PRRSV', 'IAV']);
    expect(wire.texts.accession.values).toHaveLength(400);
    // A value that comes back after the dictionary was given up reads back the same.
    const decoded = new WireRows(wire);
    expect(Array.from({ length: 400 }, (_, i) => decoded.at(i).accession)).toEqual(rows.map((row) => row.accession));
    expect(Array.from({ length: 400 }, (_, i) => decoded.at(i).sampleId)).toEqual(rows.map((row) => row.sampleId));
  });
});
