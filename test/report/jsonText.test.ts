import { describe, expect, it } from 'vitest';
import { CARRIED_DIGITS, carried, jsonLine, jsonText, numberText } from '../../src/report/jsonText.js';

describe('numbers at the precision they carry', () => {
  it('writes arithmetic noise on decimal inputs as the decimal it stands for', () => {
    // IEEE 754 binary64: 40 - 27.1 is 12.899999999999999 and 0.1 + 0.2 is 0.30000000000000004
    // (the classic example of binary rounding; both asserted first, so the case is real).
    expect(String(40 - 27.1)).toBe('12.899999999999999');
    expect(String(0.1 + 0.2)).toBe('0.30000000000000004');
    expect(numberText(40 - 27.1)).toBe('12.9');
    expect(numberText(0.1 + 0.2)).toBe('0.3');
  });

  it('keeps 12 significant digits of a computed figure and every digit of an integer', () => {
    // 1 - 0.9^13 = 0.745813417... (hand: 0.9^13 = 0.2541865828329); 12 digits kept.
    expect(numberText(1 - 0.9 ** 13)).toBe('0.745813417167');
    expect(CARRIED_DIGITS).toBe(12);
    // Seeds are 32-bit integers: all ten digits stay.
    expect(numberText(4294967295)).toBe('4294967295');
    expect(numberText(0)).toBe('0');
    expect(numberText(-1.5)).toBe('-1.5');
    // A small p-value keeps its significant digits, not its decimals.
    expect(numberText(0.004450719709225066)).toBe('0.00445071970923');
  });

  it('reads back as the same number at the carried precision (round trip)', () => {
    for (const value of [Math.PI, 1 / 3, 2 / 3, 1e-9 / 7, 123456.789012345, 0.8678975999999985]) {
      const text = numberText(value);
      expect(Number(text)).toBe(Number(value.toPrecision(12)));
      expect(Math.abs(Number(text) - value) / Math.abs(value)).toBeLessThan(5e-12);
    }
  });

  it('writes JSON with every number carried, also in nested arrays and objects, and as one line', () => {
    const value = { a: 40 - 27.1, list: [0.1 + 0.2, 3], nested: { b: null, c: 'x' } };
    expect(jsonText(value)).toBe(
      '{\n  "a": 12.9,\n  "list": [\n    0.3,\n    3\n  ],\n  "nested": {\n    "b": null,\n    "c": "x"\n  }\n}\n',
    );
    expect(jsonLine(value)).toBe('{"a":12.9,"list":[0.3,3],"nested":{"b":null,"c":"x"}}');
  });

  it('refuses a number that is not finite', () => {
    expect(() => carried(Number.NaN)).toThrow(RangeError);
    expect(() => carried(Number.POSITIVE_INFINITY)).toThrow('`value` must be a finite number, got Infinity');
  });
});
