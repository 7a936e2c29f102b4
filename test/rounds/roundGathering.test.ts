/**
 * What a round gathers result by result, checked against a straightforward reference on seeded
 * random results: the lab sources (src/rounds/resultSources.ts: results grouped by lab and report
 * date, case numbers and assays each once in code-unit order, first and last collection day) and
 * the cutoffs (src/rounds/roundCutoffs.ts: results counted per lab, assay, measure and cutoffs,
 * in the order first seen, then sorted). The references group with a text key per result and a
 * Set per source, as these were first written; the values are invented.
 */
import { describe, expect, it } from 'vitest';
import { countCutoff, sortedCutoffs } from '../../src/rounds/roundCutoffs.js';
import { addResultSource, addSource, sortedSources, type SourceDrafts } from '../../src/rounds/resultSources.js';
import type { ResultInput, RoundCutoff } from '../../src/rounds/roundTypes.js';
import { randomInt, seededRng, type Rng } from '../../src/util/random.js';
import { resultInput } from '../helpers/results.js';

const pick = <T>(rng: Rng, items: readonly T[]): T => items[randomInt(rng, items.length)]!;
const compare = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

function randomResult(rng: Rng, id: number): ResultInput {
  const sp = rng() < 0.3;
  return resultInput({
    id,
    sampleId: `S${randomInt(rng, 50)}`,
    resultClass: pick(rng, ['positive', 'negative', 'suspect', 'invalid'] as const),
    ct: sp ? null : 30,
    labId: pick(rng, ['lab-b', 'lab-a', 'Lab-a']),
    assayId: sp ? 'PRRSV-AB' : pick(rng, ['PRRSV', 'IAV']),
    measure: sp ? 'sp-ratio' : pick(rng, ['ct', undefined] as const),
    reportedOn: pick(rng, ['2026-03-04', '2026-03-05', null, undefined]),
    collectedOn: pick(rng, ['2026-03-01', '2026-03-02', '2026-02-28', null]),
    accession: pick(rng, [
      null,
      undefined,
      `NV-${randomInt(rng, 40)}`,
      `nv-${randomInt(rng, 9)}`,
      `NV-${randomInt(rng, 400)}`,
    ]),
    positiveBelow: sp ? null : pick(rng, [36, 37, null, undefined]),
    suspectBelow: sp ? null : pick(rng, [40, 38]),
    cycleLimit: sp ? null : pick(rng, [40, 45, null]),
    positiveAtOrAbove: sp ? pick(rng, [0.4, 0.5, null]) : null,
    suspectAtOrAbove: sp ? pick(rng, [0.3, null, undefined]) : null,
  });
}

/** Sources as first gathered: a joined key per result, a Set of case numbers per source. */
function referenceSources(results: readonly ResultInput[]) {
  const sources = new Map<
    string,
    {
      labId: string;
      reportedOn: string | null;
      accessions: Set<string>;
      assays: Set<string>;
      results: number;
      from: string | null;
      to: string | null;
    }
  >();
  for (const result of results) {
    const key = `${result.labId}\u0000${result.reportedOn ?? ''}`;
    let source = sources.get(key);
    if (!source) {
      source = {
        labId: result.labId,
        reportedOn: result.reportedOn ?? null,
        accessions: new Set(),
        assays: new Set(),
        results: 0,
        from: null,
        to: null,
      };
      sources.set(key, source);
    }
    if (result.accession !== null && result.accession !== undefined) source.accessions.add(result.accession);
    source.assays.add(result.assayId);
    source.results++;
    const day = result.collectedOn ?? null;
    if (day !== null) {
      if (source.from === null || day < source.from) source.from = day;
      if (source.to === null || day > source.to) source.to = day;
    }
  }
  return [...sources.values()]
    .map((source) => ({
      labId: source.labId,
      reportedOn: source.reportedOn,
      accessions: [...source.accessions].sort(compare),
      assays: [...source.assays].sort(compare),
      results: source.results,
      collectedFrom: source.from,
      collectedTo: source.to,
      barnIds: [] as string[],
    }))
    .sort((a, b) => compare(a.labId, b.labId) || compare(a.reportedOn ?? '', b.reportedOn ?? ''));
}

/** Cutoffs as first counted: a key joined from every field, results counted under it. */
function referenceCutoffs(results: readonly ResultInput[]): RoundCutoff[] {
  const cutoffs = new Map<string, RoundCutoff>();
  for (const result of results) {
    const measure = result.measure ?? 'ct';
    const known = (value: number | null | undefined): value is number => value !== null && value !== undefined;
    let readWith: Omit<RoundCutoff, 'results'>;
    if (measure === 'sp-ratio') {
      if (!known(result.positiveAtOrAbove)) continue;
      readWith = {
        labId: result.labId,
        assayId: result.assayId,
        measure,
        positiveBelow: null,
        suspectBelow: null,
        cycleLimit: null,
        positiveAtOrAbove: result.positiveAtOrAbove,
        suspectAtOrAbove: result.suspectAtOrAbove ?? null,
      };
    } else {
      if (!known(result.positiveBelow) || !known(result.suspectBelow)) continue;
      readWith = {
        labId: result.labId,
        assayId: result.assayId,
        measure,
        positiveBelow: result.positiveBelow,
        suspectBelow: result.suspectBelow,
        cycleLimit: result.cycleLimit,
        positiveAtOrAbove: null,
        suspectAtOrAbove: null,
      };
    }
    const key = Object.values(readWith).join('\u0000');
    const counted = cutoffs.get(key);
    if (counted) counted.results++;
    else cutoffs.set(key, { ...readWith, results: 1 });
  }
  return sortedCutoffs([...cutoffs.values()]);
}

describe('what a round gathers from its results', () => {
  it.each([1, 2, 3, 4, 5, 6])(
    'gathers the lab sources of 300 random results as a Set per source does (seed %i)',
    (seed) => {
      const rng = seededRng(seed);
      const results = Array.from({ length: 300 }, (_, id) => randomResult(rng, id));
      const sources: SourceDrafts = new Map();
      for (const result of results) addResultSource(sources, result);
      expect(sortedSources(sources)).toStrictEqual(referenceSources(results));
      // Barns' sources merged into the round's, as roundAssembly does: the same sources, every barn named.
      const round: SourceDrafts = new Map();
      for (const barnId of ['B1', 'B2']) for (const source of sortedSources(sources)) addSource(round, source, barnId);
      const merged = sortedSources(round);
      expect(merged.map(({ barnIds }) => barnIds)).toEqual(merged.map(() => ['B1', 'B2']));
      expect(merged.map(({ barnIds: _, results: count, ...rest }) => ({ ...rest, results: count / 2 }))).toStrictEqual(
        referenceSources(results).map(({ barnIds: _, ...rest }) => rest),
      );
    },
  );

  it.each([1, 2, 3, 4, 5, 6])(
    'counts the cutoffs of 300 random results as a joined key per result does (seed %i)',
    (seed) => {
      const rng = seededRng(100 + seed);
      const results = Array.from({ length: 300 }, (_, id) => randomResult(rng, id));
      const cutoffs: RoundCutoff[] = [];
      for (const result of results) countCutoff(cutoffs, result);
      expect(sortedCutoffs(cutoffs)).toStrictEqual(referenceCutoffs(results));
    },
  );
});
