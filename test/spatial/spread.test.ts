import { describe, expect, it } from 'vitest';
import { summariseSpread } from '../../src/spatial/spread.js';

const at = (id: string, x: number, y = 0, barn = 'B1') => ({ id, x, y, barn });

describe('spread across rounds', () => {
  it('calls a new positive next to an earlier one adjacent spread', () => {
    const s = summariseSpread([at('A2', 1), at('A3', 2)], [at('A2', 1)]);
    expect(s.pattern).toBe('adjacent-spread');
    expect(s.newPositives).toEqual([
      { id: 'A3', barn: 'B1', nearestEarlierDistance: 1, nearestEarlierPen: 'A2', sameBarn: true, kind: 'adjacent' },
    ]);
  });

  it('calls a new positive far from every earlier positive a distant new focus, even beside adjacent spread', () => {
    const s = summariseSpread([at('A3', 2), at('A15', 14)], [at('A2', 1)]);
    expect(s.pattern).toBe('distant-new-focus');
    expect([s.adjacent, s.distant]).toEqual([1, 1]);
  });

  it('calls positives without any earlier positive a first detection, and no new positive none', () => {
    expect(summariseSpread([at('A3', 2)], []).pattern).toBe('first-detection');
    expect(summariseSpread([at('A2', 1)], [at('A2', 1)]).pattern).toBe('none');
    expect(summariseSpread([], []).pattern).toBe('none');
  });

  it('measures distances to other barns through site coordinates', () => {
    // Barn 2 offset 30 pen units across: a new positive at (0.5, 30.5) is 30 from (0.5, 0.5) in barn 1.
    const s = summariseSpread([at('A1', 0.5, 30.5, 'B2')], [at('A1', 0.5, 0.5, 'B1')]);
    expect(s.newPositives[0]).toMatchObject({ nearestEarlierDistance: 30, sameBarn: false, kind: 'distant' });
  });
});
