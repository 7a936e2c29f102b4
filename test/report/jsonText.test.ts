import fc from 'fast-check';
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

/** The writer jsonText must equal (the code before, same inputs): JSON.stringify with a replacer that carries every finite number. */
function referenceJsonText(value: unknown): string {
  const carriedNumbers = (_key: string, inner: unknown): unknown =>
    typeof inner === 'number' && Number.isFinite(inner) ? carried(inner) : inner;
  return `${JSON.stringify(value, carriedNumbers, 2)}\n`;
}

/** Numbers as the outputs hold them: any double, integers, and arithmetic on decimal inputs. */
const anyNumber = fc.oneof(
  fc.double(),
  fc.integer(),
  fc.maxSafeInteger(),
  fc.tuple(fc.integer({ min: -100_000, max: 100_000 }), fc.integer({ min: 1, max: 1000 })).map(([a, b]) => a / 100 / b),
  fc.tuple(fc.double({ min: 0, max: 1, noNaN: true }), fc.integer({ min: 1, max: 60 })).map(([p, n]) => 1 - p ** n),
  // Exactly 12, 13, ... 16 significant digits: the edge of the long tokens rewritten.
  fc
    .tuple(
      fc.integer({ min: 11, max: 15 }),
      fc.double({ min: 1, max: 9.99, noNaN: true }),
      fc.integer({ min: -8, max: 14 }),
    )
    .map(([digits, lead, shift]) => Math.round(lead * 10 ** digits) / 10 ** (digits - shift)),
  fc.constantFrom(0.1 + 0.2, 40 - 27.1, -0, 1e21 + 0.5, 2 ** 84 + 2 ** 40, 1.234567890123456e-7, 5e-324),
);

/** Strings that look like long numbers, at a line's end or not, with escapes and line feeds inside. */
const trickyString = fc.oneof(
  fc.string({ unit: 'binary' }),
  fc.constantFrom('0.30000000000000004', '-12.899999999999999,\n', '1.2345678901234567\n', 'a\n0.1234567890123456'),
  anyNumber.map((value) => `${value}${'\n'}`),
  anyNumber.map((value) => String(value)),
);

const leaf = fc.oneof(
  anyNumber,
  trickyString,
  fc.boolean(),
  fc.constant(null),
  fc.constant(undefined),
  fc.date({ noInvalidDate: true }),
);

const { tree } = fc.letrec((tie) => ({
  tree: fc.oneof({ depthSize: 'small', withCrossShrink: true }, leaf, tie('array'), tie('object')),
  array: fc.array(tie('tree'), { maxLength: 6 }),
  object: fc.dictionary(fc.oneof(fc.string(), trickyString), tie('tree'), { maxKeys: 6 }),
}));

describe('jsonText equals JSON.stringify with a number-carrying replacer', () => {
  it('on any tree of numbers, strings, booleans, nulls, undefined and dates', () => {
    fc.assert(
      fc.property(tree, (value) => {
        expect(jsonText(value)).toBe(referenceJsonText(value));
      }),
      { numRuns: 3000 },
    );
  });

  it('on a bare number and on numbers at the end of arrays and objects', () => {
    fc.assert(
      fc.property(anyNumber, (value) => {
        expect(jsonText(value)).toBe(referenceJsonText(value));
        expect(jsonText([value, [value], { a: value }])).toBe(referenceJsonText([value, [value], { a: value }]));
      }),
      { numRuns: 3000 },
    );
  });

  it('on a summary and a cluster review as the outputs write them', () => {
    const value = {
      round: { id: 'r01-2026-01-05', number: 1 },
      barns: [{ id: 'B1', ct: [27.1, 40 - 27.1], p: 0.004450719709225066, label: '1.2345678901234567\n' }],
      scan: { windows: [{ llr: 12.345678901234567, p: 1 / 3 }], seed: 4294967295 },
    };
    expect(jsonText(value)).toBe(referenceJsonText(value));
    expect(jsonText(value)).toContain('"p": 0.00445071970923,');
    expect(jsonText(value)).toContain('"label": "1.2345678901234567\\n"');
  });
});
