import { barnPlanNoteText } from '../../src/report/barnPlanNotes.js';
import { describe, expect, it } from 'vitest';
import { expandLayout, penContacts } from '../../src/domain/layout.js';
import { buildSiteRounds, type ResultInput } from '../../src/rounds/roundModel.js';
import { budgetForSurveyed } from '../../src/analysis/monitoredPlan.js';
import type { MonitoredBarn } from '../../src/analysis/planTypes.js';
import { monitoringBaseRopes, pensToReRope, planMonitoredBarn } from '../../src/plan/monitoring.js';
import { roundRopes, smallConfig } from '../analysis/fixtures.js';
import { layout } from './helpers.js';

const row = layout(1, 20);
const pens = expandLayout(row);
const contacts = penContacts(row, pens);
const base = { pens, contacts, trackingRopes: 4, ringDistance: 1.5 };

describe('the ropes of a positive barn', () => {
  it('puts the tracking set evenly along the barn, at the same pens whatever the positives', () => {
    // 20 pens, 4 ropes: one every 5 pens; the phase with the smallest covering radius puts them at
    // 3, 8, 13, 18, each pen at most 2 pens from a rope (hand derivation: (5 - 1) / 2 = 2).
    const quiet = planMonitoredBarn({ ...base, reRope: [], clusters: [], retest: [] });
    expect(quiet.tracking).toEqual(['A3', 'A8', 'A13', 'A18']);
    expect(quiet.trackingCoveringRadius).toBe(2);
    expect(quiet.ropes).toEqual(['A3', 'A8', 'A13', 'A18'].map((penId) => ({ penId, reason: 'tracking' })));
    const busy = planMonitoredBarn({ ...base, reRope: ['A15', 'A16'], clusters: [['A15', 'A16']], retest: ['A1'] });
    expect(busy.tracking).toEqual(quiet.tracking);
  });

  it('labels a pen by precedence re-rope > retest > follow-up > tracking, one rope per pen', () => {
    // A8 positive (a tracking pen too), A13 suspect (a tracking pen too), ring of A8 at 1.5 pens: A7, A9 (fence line).
    const plan = planMonitoredBarn({ ...base, reRope: ['A8'], clusters: [['A8']], retest: ['A13'] });
    expect(plan.ropes).toEqual([
      { penId: 'A3', reason: 'tracking' },
      { penId: 'A7', reason: 'follow-up' },
      { penId: 'A8', reason: 're-rope' },
      { penId: 'A9', reason: 'follow-up' },
      { penId: 'A13', reason: 'retest' },
      { penId: 'A18', reason: 'tracking' },
    ]);
    expect(barnPlanNoteText(plan.notes[0]!)).toContain('1 positive pen re-roped');
  });

  it('caps the tracking set at the pens in use and refuses a negative size', () => {
    const small = layout(1, 3);
    const smallPens = expandLayout(small);
    const plan = planMonitoredBarn({
      pens: smallPens,
      contacts: penContacts(small, smallPens),
      trackingRopes: 10,
      ringDistance: 0,
      reRope: [],
      clusters: [],
      retest: [],
    });
    expect(plan.tracking.sort()).toEqual(['A1', 'A2', 'A3']);
    expect(() => planMonitoredBarn({ ...base, trackingRopes: -1, reRope: [], clusters: [], retest: [] })).toThrow(
      '`trackingRopes` must be an integer in [0, infinity), got -1',
    );
  });
});

describe('pens to re-rope', () => {
  it('keeps a pen until it tests negative; a failed rope does not end its series', () => {
    const config = smallConfig();
    const site = config.sites[0]!;
    const r1 = roundRopes('2026-08-03', 6, 'R1', [1, 2, 3]);
    const r2 = roundRopes('2026-08-17', 6, 'R2', [1]);
    // Round 2: rope 2 (pen A3) comes back invalid, rope 3 (pen A4) negative.
    const r2results = r2.results.map(
      (result, i): ResultInput => (i === 2 ? { ...result, ct: null, resultClass: 'invalid' } : result),
    );
    const rounds = buildSiteRounds(site, [...r1.ropes, ...r2.ropes], [...r1.results, ...r2results]);
    expect(pensToReRope(rounds, 'B1', ['PRRSV'], 1)).toEqual(['A2', 'A3']);
    // Counted only from the round the positive period began.
    expect(pensToReRope(rounds, 'B1', ['PRRSV'], 2)).toEqual(['A2']);
  });
});

describe('the rope budget with a positive barn', () => {
  it('counts re-rope and tracking ropes once per pen, and takes them out of the budget first', () => {
    // Tracking A3, A8, A13, A18 (above) and re-rope A8, A15: 5 distinct pens (counted by hand).
    expect(monitoringBaseRopes(pens, ['A8', 'A15'], 4)).toBe(5);
    const monitored = new Map<string, MonitoredBarn>([
      [
        'B1',
        {
          barnId: 'B1',
          assays: ['PRRSV'],
          sinceRound: 1,
          negativeRoundsInARow: 0,
          reRope: ['A8', 'A15'],
          baseRopes: 5,
        },
      ],
    ]);
    expect(budgetForSurveyed(45, monitored)).toBe(40);
    expect(budgetForSurveyed(3, monitored)).toBe(0);
    expect(budgetForSurveyed(null, monitored)).toBeNull();
  });
});
