import type { BarnLayout } from '../../src/domain/layout.js';

/** A two-row barn for tests: rows A and B, `pensPerRow` pens of 1 x 1, alley 0.5 (pen units). */
export function twoRowLayout(overrides: Partial<BarnLayout> = {}): BarnLayout {
  return {
    rows: 2,
    pensPerRow: 4,
    numbering: 'per-row',
    rowLabels: ['A', 'B'],
    padDigits: 0,
    penWidth: 1,
    penDepth: 1,
    alleyWidth: 0.5,
    gapsAfter: [],
    gapWidth: 1,
    empty: [],
    outOfUse: [],
    ...overrides,
  };
}
