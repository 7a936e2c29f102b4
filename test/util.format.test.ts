import { describe, expect, it } from 'vitest';
import { formatPercent } from '../src/util/format.js';

describe('percentages for people', () => {
  it('never rounds a probability that is not 1 up to 100.0% or one that is not 0 down to 0.0%', () => {
    expect(formatPercent(0.99963)).toBe('>99.9%');
    expect(formatPercent(1)).toBe('100.0%');
    expect(formatPercent(0.0004)).toBe('<0.1%');
    expect(formatPercent(0)).toBe('0.0%');
    expect(formatPercent(0.8305369)).toBe('83.1%');
  });
});
