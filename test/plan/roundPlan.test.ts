import { barnPlanNoteText } from '../../src/report/barnPlanNotes.js';
import { describe, expect, it } from 'vitest';
import { expandLayout } from '../../src/domain/layout.js';
import { buildRoundPlan, parseSampleId, placeSystematic, walkingOrder } from '../../src/plan/index.js';
import { layout } from './helpers.js';

const north = layout(2, 20, { outOfUse: ['A4', 'B4'], empty: ['B19', 'B20'] });
const south = layout(4, 8, { gapsAfter: [4] });

describe('round plan', () => {
  const plan = buildRoundPlan({
    siteCode: 'KES',
    round: 7,
    dueDate: '2026-03-16',
    barns: [
      {
        barnId: 'N',
        layout: north,
        roundIndex: 3,
        routineRopes: 7,
        positives: ['A10'],
        suspects: ['B2'],
        invalids: ['A17'],
        ringDistance: 0,
      },
      { barnId: 'S', layout: south, roundIndex: 0, routineRopes: 6 },
    ],
  });

  it('gives every rope a unique, valid, write-friendly sample ID for the site and round', () => {
    const ids = plan.rows.map((r) => r.sampleId);
    expect(new Set(ids).size).toBe(ids.length);
    for (const row of plan.rows) {
      expect(parseSampleId(row.sampleId)).toMatchObject({ ok: true, siteCode: 'KES', round: 7 });
      expect('IOL').not.toContain(row.sampleId.at(-1));
      expect(row).toMatchObject({ siteId: 'KES', dueDate: '2026-03-16' });
    }
    const sequences = ids.map((id) => (parseSampleId(id) as { sequence: number }).sequence);
    expect(sequences).toEqual([...sequences].sort((a, b) => a - b));
  });

  it('lists ropes in walking order: up one side of the alley and back down the other', () => {
    const rows = plan.rows.filter((r) => r.barnId === 'N');
    const pens = expandLayout(north);
    const walk = walkingOrder(pens).map((p) => p.id);
    const indices = rows.map((r) => walk.indexOf(r.penId));
    expect(indices).toEqual([...indices].sort((a, b) => a - b));
    // By hand: side A ascending (A1..A20), then side B descending (B20..B1).
    expect(walk.slice(0, 3)).toEqual(['A1', 'A2', 'A3']);
    expect(walk.slice(20, 23)).toEqual(['B20', 'B19', 'B18']);
    expect(rows.every((r) => r.side === r.penId[0])).toBe(true);
  });

  it('labels retests, follow-up and routine ropes and never plans an empty or out-of-use pen', () => {
    const reasons = new Map(plan.rows.filter((r) => r.barnId === 'N').map((r) => [r.penId, r.reason]));
    expect(reasons.get('B2')).toBe('retest');
    expect(reasons.get('A17')).toBe('retest');
    for (const neighbour of ['A9', 'A11', 'B10', 'B9', 'B11']) expect(reasons.get(neighbour)).toBe('follow-up');
    // The positive pen itself gets no follow-up rope; the rotation may still give it a routine one.
    expect(reasons.get('A10')).not.toBe('follow-up');
    for (const closed of ['A4', 'B4', 'B19', 'B20']) expect(reasons.has(closed)).toBe(false);
    const routine = placeSystematic(expandLayout(north), { ropes: 7, roundIndex: 3 }).penIds;
    for (const id of routine) expect(reasons.has(id)).toBe(true);
  });

  it('summarises each barn with its covering radius, coverage rounds and notes', () => {
    const [n, s] = plan.barns;
    expect(n).toMatchObject({ barnId: 'N', retest: 2, followUp: 5 });
    expect(n!.ropes).toBe(n!.routine + n!.followUp + n!.retest);
    expect(n!.coveringRadius!).toBeLessThanOrEqual(n!.routineCoveringRadius!);
    expect(s!.coverageRounds).toBeGreaterThanOrEqual(Math.ceil(32 / 6));
    expect(s!.coverageRounds).toBeLessThanOrEqual(s!.cycleLength);
    expect(s!.notes.map(barnPlanNoteText).some((note) => note.includes('every one of the 32 in-use pens'))).toBe(true);
  });

  it('rejects duplicate barn ids and malformed due dates', () => {
    const barn = { barnId: 'N', layout: north, roundIndex: 0, routineRopes: 2 };
    expect(() => buildRoundPlan({ siteCode: 'KES', round: 1, dueDate: '2026-03-16', barns: [barn, barn] })).toThrow(
      /unique/,
    );
    expect(() => buildRoundPlan({ siteCode: 'KES', round: 1, dueDate: '16.03.2026', barns: [barn] })).toThrow(
      /yyyy-mm-dd/,
    );
  });
});
