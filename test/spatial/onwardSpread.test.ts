import { describe, expect, it } from 'vitest';
import { expandLayout, type BarnLayout } from '../../src/domain/layout.js';
import { contactWeights } from '../../src/spatial/weights.js';
import { detectionProbability } from '../../src/spatial/spreadDetection.js';
import { simulateOnwardSpread } from '../../src/spatial/onwardSpread.js';
import { seededRng } from '../../src/util/random.js';
import { expectClose } from '../helpers/expectClose.js';

const row: BarnLayout = {
  rows: 1,
  pensPerRow: 5,
  numbering: 'per-row',
  rowLabels: ['A'],
  padDigits: 0,
  penWidth: 1,
  penDepth: 1,
  alleyWidth: 0.5,
  gapsAfter: [],
  gapWidth: 1,
  empty: [],
  outOfUse: [],
};

describe('onward spread from known positives', () => {
  it('infects a fence neighbour with probability beta in one step, and never marks the seed itself (chain binomial, by hand)', () => {
    // Row A1..A5, seed A3, fence contacts, beta 0.4, no background, one step:
    // A2 and A4 are each infected with probability 0.4; A1, A5 never (two contacts away).
    const ids = expandLayout(row).map((pen) => pen.id);
    const graph = contactWeights(row, ids, 'fence', 'binary');
    const spread = simulateOnwardSpread(graph, {
      seeds: ['A3'],
      steps: 1,
      beta: 0.4,
      background: 0,
      realisations: 20000,
      rng: seededRng(5),
    });
    const a2 = detectionProbability(spread, ['A2'], 1);
    expectClose(a2.p, 0.4, { abs: 4 * Math.sqrt((0.4 * 0.6) / 20000) }, 'P(A2 infected) = beta, within 4 SE');
    expect(detectionProbability(spread, ['A1', 'A5'], 1).p).toBe(0);
    expect(detectionProbability(spread, ['A3'], 1).p).toBe(0);
    // Both neighbours roped: 1 - (1 - 0.4)^2 = 0.64 (independent draws in one step).
    expectClose(detectionProbability(spread, ['A2', 'A4'], 1).p, 0.64, { abs: 0.03 }, 'two neighbours');
  });

  it('refuses a seed that is not a pen of the graph', () => {
    const ids = expandLayout(row).map((pen) => pen.id);
    const graph = contactWeights(row, ids, 'fence', 'binary');
    expect(() =>
      simulateOnwardSpread(graph, {
        seeds: ['Z9'],
        steps: 1,
        beta: 0.3,
        background: 0,
        realisations: 10,
        rng: seededRng(1),
      }),
    ).toThrow(/Z9/);
  });
});
