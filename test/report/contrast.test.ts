import { describe, expect, it } from 'vitest';
import { contrastRatio, LOAD_RAMP, loadStep, relativeLuminance, TEXT_PAIRS } from '../../src/report/html/palette.js';
import { expectClose } from '../helpers/expectClose.js';

describe('relativeLuminance (WCAG 2.x)', () => {
  it('is 0 for black and 1 for white', () => {
    // WCAG 2.0 definition of relative luminance: L = 0.2126 R + 0.7152 G + 0.0722 B, with the weights summing to 1.
    expectClose(relativeLuminance('#000000'), 0, { abs: 1e-15 }, 'black');
    expectClose(relativeLuminance('#ffffff'), 1, { abs: 1e-12 }, 'white');
  });

  it('linearises a mid grey by the sRGB power law', () => {
    // By hand: 0x76 = 118, c = 118/255 = 0.462745; ((c + 0.055)/1.055)^2.4 = 0.490754^2.4 = exp(2.4 ln 0.490754) = 0.181164.
    expectClose(relativeLuminance('#767676'), 0.181164, { rel: 1e-5 }, '#767676');
    // Below the knee (c <= 0.03928) the channel is c / 12.92: 0x0a = 10, 10/255/12.92 = 0.00303527.
    expectClose(relativeLuminance('#0a0a0a'), 10 / 255 / 12.92, { rel: 1e-12 }, '#0a0a0a');
  });

  it('refuses a colour that is not #rrggbb', () => {
    expect(() => relativeLuminance('red')).toThrow('`hex` must be a colour #rrggbb, got red');
  });
});

describe('contrastRatio (WCAG 2.x)', () => {
  it('is 21 for black on white and 1 for a colour on itself', () => {
    // WCAG 2.0 definition: (L1 + 0.05) / (L2 + 0.05) = 1.05 / 0.05 = 21.
    expectClose(contrastRatio('#000000', '#ffffff'), 21, { rel: 1e-12 }, 'black on white');
    expectClose(contrastRatio('#3f6cad', '#3f6cad'), 1, { rel: 1e-12 }, 'same colour');
  });

  it('gives 4.54 for #767676 on white, the lightest grey commonly quoted as passing AA', () => {
    // By hand from the luminance above: 1.05 / (0.181164 + 0.05) = 4.5422; "4.54:1" is the value usually quoted (from memory).
    expectClose(contrastRatio('#767676', '#ffffff'), 4.5422, { rel: 1e-4 }, '#767676 on white');
    expect(contrastRatio('#ffffff', '#767676')).toBe(contrastRatio('#767676', '#ffffff'));
  });

  it.each(TEXT_PAIRS.map((pair) => [pair.name, pair.ink, pair.paper] as const))(
    'gives %s (%s on %s) at least 4.5:1 (WCAG 2.x SC 1.4.3, AA)',
    (_name, ink, paper) => {
      expect(contrastRatio(ink, paper)).toBeGreaterThanOrEqual(4.5);
    },
  );
});

describe('the load ramp', () => {
  it('runs from light to dark so that it reads in greyscale', () => {
    const luminance = LOAD_RAMP.map((step) => relativeLuminance(step.fill));
    for (let i = 1; i < luminance.length; i++) {
      // Adjacent steps must differ visibly: a contrast of at least 1.3:1 between neighbours (a design choice, no source).
      expect(contrastRatio(LOAD_RAMP[i]!.fill, LOAD_RAMP[i - 1]!.fill)).toBeGreaterThanOrEqual(1.3);
      expect(luminance[i]!).toBeLessThan(luminance[i - 1]!);
    }
  });

  it('maps load to steps of 5 cycles, with not detected on its own step', () => {
    // Load L = C_max - Ct (common practice, no source); with C_max = 40: Ct 38 -> L 2 -> step 1; Ct 32 -> 8 -> 2; Ct 27 -> 13 -> 3; Ct 22 -> 18 -> 4.
    expect([0, 2, 5, 5.01, 8, 10, 13, 15, 18, 40].map(loadStep)).toEqual([0, 1, 1, 2, 2, 2, 3, 3, 4, 4]);
    expect(() => loadStep(-1)).toThrow('`load` must be a finite number >= 0, got -1');
    expect(() => loadStep(Number.NaN)).toThrow(RangeError);
  });
});
