/**
 * The Ct trend chart: each point with the mark of what it is (a Ct, not detected, invalid), the
 * positive cutoffs of the labs as dashed lines, and the legend. Invalid (a failed internal or
 * extraction control) is a retest, neither negative nor a Ct (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { ctAxis, pointKind, renderCtTrend, trendLegend, type TrendPoint } from '../../src/report/html/charts.js';

const rounds = [1, 2, 3, 4].map((round) => ({ round, label: `r0${round}` }));
const points: TrendPoint[] = [
  { round: 1, label: 'r01', ct: null, resultClass: 'negative' },
  { round: 2, label: 'r02', ct: null, resultClass: 'invalid' },
  { round: 3, label: 'r03', ct: 24, resultClass: 'invalid' },
  { round: 4, label: 'r04', ct: 31, resultClass: 'positive' },
];
const svg = renderCtTrend(points, {
  title: 'Pen A1',
  cycleLimit: 45,
  cutoffs: [{ value: 37, label: '37 (lab X)' }],
  rounds,
});
const marks = (kind: string) => svg.split(`data-point="${kind}"`).length - 1;

/** The y of a circle mark with the given data-point. */
const ys = (kind: string) =>
  [...svg.matchAll(new RegExp(`cy="([0-9.]+)"[^>]*data-point="${kind}"`, 'g'))].map((match) => Number(match[1]));

describe('renderCtTrend', () => {
  it('marks an invalid result as invalid even when the lab wrote a Ct beside the failed control', () => {
    expect(pointKind({ ct: 24, resultClass: 'invalid' })).toBe('invalid');
    expect(pointKind({ ct: null, resultClass: 'invalid' })).toBe('invalid');
    expect(pointKind({ ct: null, resultClass: 'negative' })).toBe('nd');
    // By hand: rounds 2 and 3 are invalid, round 1 not detected, round 4 the only Ct.
    expect([marks('invalid'), marks('nd'), marks('ct')]).toEqual([2, 1, 1]);
    expect(svg).not.toContain('>24<');
  });

  it('draws the invalid crosses below the not-detected line, not on it', () => {
    // y grows downward in SVG: the not-detected mark sits on the cycle-limit line, the crosses lower still.
    const nd = ys('nd')[0]!;
    const crosses = [...svg.matchAll(/<path d="M[0-9.]+,([0-9.]+) [^"]*"[^>]*data-point="invalid"/g)].map(
      (match) => Number(match[1]) + 3.6,
    );
    expect(crosses).toHaveLength(2);
    for (const y of crosses) expect(y).toBeGreaterThan(nd + 5);
  });

  it('draws the axis to the lab cycle limit and a dashed line at each lab cutoff, with its value', () => {
    // ctAxis: the lowest Ct 31 rounds down to 20 at most, the bottom is the cycle limit 45.
    expect(ctAxis([31], 45)).toEqual({ top: 20, bottom: 45 });
    expect(svg).toContain('data-cutoff="37"');
    expect(svg).toContain('positive cutoff 37 (lab X)');
    expect(svg).toContain('>37</text>');
    expect(svg).toContain('>45</text>');
  });

  it('has a legend entry for every mark, the invalid cross among them', () => {
    const legend = trendLegend();
    expect(legend.match(/<span class="item">/g)).toHaveLength(4);
    for (const text of ['>Ct<', 'not detected', 'invalid (retest)', 'positive cutoff']) expect(legend).toContain(text);
    // The cross of the legend is the cross of the chart.
    expect(legend).toContain('stroke-width="2" fill="none"');
  });
});
