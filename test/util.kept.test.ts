import { describe, expect, it } from 'vitest';
import { keptFor, keptForBy, keptOfFrozen, keptOfFrozenBy } from '../src/util/kept.js';

describe('values derived from frozen objects', () => {
  it('makes the value of a frozen object once and hands the same value back', () => {
    const kept = new WeakMap<object, { made: number }>();
    const of = Object.freeze({});
    let made = 0;
    const make = () => ({ made: ++made });
    const first = keptOfFrozen(kept, of, make);
    expect(keptOfFrozen(kept, of, make)).toBe(first);
    expect(made).toBe(1);
    // Another frozen object has its own value.
    expect(keptOfFrozen(kept, Object.freeze({}), make)).toEqual({ made: 2 });
  });

  it('makes the value of an object that may still change afresh every time', () => {
    const kept = new WeakMap<object, number>();
    const of = { pens: 1 };
    expect(keptOfFrozen(kept, of, () => of.pens)).toBe(1);
    of.pens = 2;
    expect(keptOfFrozen(kept, of, () => of.pens)).toBe(2);
  });

  it('keeps values per key, a null value among them', () => {
    const kept = new WeakMap<object, Map<string, string | null>>();
    const of = Object.freeze({});
    let made = 0;
    const make = (value: string | null) => () => {
      made++;
      return value;
    };
    expect(keptOfFrozenBy(kept, of, 'a', make(null))).toBeNull();
    expect(keptOfFrozenBy(kept, of, 'a', make('other'))).toBeNull();
    expect(keptOfFrozenBy(kept, of, 'b', make('b'))).toBe('b');
    expect(keptOfFrozenBy(kept, of, 'b', make('other'))).toBe('b');
    expect(made).toBe(2);
    expect(keptOfFrozenBy(kept, { open: true }, 'a', make('fresh'))).toBe('fresh');
  });

  it('keeps the value of any object when the caller vouches it does not change, per key where asked', () => {
    const kept = new WeakMap<object, number>();
    const of = { pens: 1 };
    expect(keptFor(kept, of, () => of.pens)).toBe(1);
    of.pens = 2;
    // Kept: keptFor does not look at the object again.
    expect(keptFor(kept, of, () => of.pens)).toBe(1);
    const byRopes = new WeakMap<object, Map<number, number>>();
    let made = 0;
    expect(keptForBy(byRopes, of, 12, () => ++made)).toBe(1);
    expect(keptForBy(byRopes, of, 12, () => ++made)).toBe(1);
    expect(keptForBy(byRopes, of, 13, () => ++made)).toBe(2);
  });

  it('keeps values in a Map by a key of any kind, made once per key', () => {
    const kept = new Map<string, number>();
    let made = 0;
    expect(keptFor(kept, '2026-08-03', () => ++made)).toBe(1);
    expect(keptFor(kept, '2026-08-03', () => ++made)).toBe(1);
    expect(keptFor(kept, '2026-09-07', () => ++made)).toBe(2);
    expect([...kept]).toEqual([
      ['2026-08-03', 1],
      ['2026-09-07', 2],
    ]);
  });
});
