/**
 * Rounds formed from a round's first day on, told the spans of the rounds before and every rope
 * of the site (src/rounds/roundModel.ts `EarlierRounds`), equal the same rounds of a build of the
 * whole history: a build that keeps the earlier rounds' models (src/roundsFromStore.ts) relies on
 * it. Seeded random histories on the demo site hollow-creek: ropes on uneven days (some days
 * closer together than the round window, some rounds late), results for most of them, planned
 * ropes without a result whose due dates fall in, between or after the rounds, and planned ropes
 * hung rounds before their due date. The reference is
 * the whole-history build itself; the property is that of formRounds (Round opens on its first
 * rope whatever came before), stated in src/rounds/rounds.ts.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { inUsePens } from '../../src/domain/layout.js';
import type { PlannedRope } from '../../src/domain/records.js';
import type { SiteOutline } from '../../src/domain/store.js';
import { roundKeys } from '../../src/rounds/roundInputKeys.js';
import { buildSiteRounds, type PlannedInput, type ResultInput, type RopeInput } from '../../src/rounds/roundModel.js';
import { addDaysIso, formRounds } from '../../src/rounds/rounds.js';
import { seededRng, type Rng } from '../../src/util/random.js';
import { resultInput } from '../helpers/results.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const site = config.siteById.get('HOLLOW-CREEK')!;
const TODAY = '2027-06-01';

interface History {
  ropes: RopeInput[];
  results: ResultInput[];
  planned: PlannedInput[];
}

function randomHistory(rng: Rng): History {
  const ropes: RopeInput[] = [];
  const results: ResultInput[] = [];
  const planned: PlannedInput[] = [];
  let day = '2026-01-05';
  let count = 0;
  for (let visit = 0; visit < 30; visit++) {
    // Mostly a fortnight apart; sometimes a second day within the window, sometimes a long gap.
    day = addDaysIso(day, [1, 2, 6, 13, 14, 15, 30][Math.floor(rng() * 7)]!);
    for (const barn of site.barns) {
      const pens = inUsePens(barn.pens);
      for (let i = 0; i < 3; i++) {
        const pen = pens[Math.floor(rng() * pens.length)]!;
        const sampleId = `S${String(++count).padStart(4, '0')}`;
        if (rng() < 0.15) {
          planned.push({ sampleId, barnId: barn.id, penId: pen.id, dueOn: addDaysIso(day, Math.floor(rng() * 9) - 4) });
          continue;
        }
        ropes.push({ sampleId, siteId: site.id, barnId: barn.id, penId: pen.id, hungOn: day, source: 'sheet' });
        // A planned rope hung early, rounds before its due date: placed, so never missing.
        if (rng() < 0.1) planned.push({ sampleId, barnId: barn.id, penId: pen.id, dueOn: addDaysIso(day, 40) });
        if (rng() < 0.85) {
          const positive = rng() < 0.3;
          results.push(
            resultInput({
              id: results.length + 1,
              sampleId,
              resultClass: positive ? 'positive' : 'negative',
              ct: positive ? 25 + Math.round(rng() * 100) / 10 : null,
            }),
          );
        }
      }
    }
  }
  return { ropes, results, planned };
}

describe('rounds formed from a round on', () => {
  it('equal the same rounds of a whole-history build', () => {
    for (const seed of [1, 2, 3, 4, 5]) {
      const history = randomHistory(seededRng(seed));
      const whole = buildSiteRounds(site, history.ropes, history.results, history.planned, {}, TODAY);
      const spans = formRounds(site.id, history.ropes, site.program.roundWindowDays);
      expect(whole.map((round) => round.id)).toEqual(spans.map((round) => round.id));
      expect(whole.length).toBeGreaterThan(10);
      const placed = new Set(history.ropes.map((rope) => rope.sampleId));
      for (let from = 1; from < whole.length; from++) {
        const startOn = whole[from]!.startOn;
        const later = history.ropes.filter((rope) => rope.hungOn >= startOn);
        const laterSamples = new Set(later.map((rope) => rope.sampleId));
        const resumed = buildSiteRounds(
          site,
          later,
          history.results.filter((result) => laterSamples.has(result.sampleId)),
          history.planned,
          {},
          TODAY,
          { spans: spans.slice(0, from), placed },
        );
        expect(JSON.stringify(resumed), `seed ${seed}, from round ${from + 1}`).toBe(JSON.stringify(whole.slice(from)));
      }
    }
  });

  it('have keys that change with their own inputs only', () => {
    const history = randomHistory(seededRng(9));
    const reportKeys = new Map(history.results.map((result) => [result.sampleId, `1/${result.id}/0`]));
    const plannedRopes: PlannedRope[] = history.planned.map((rope) => ({
      ...rope,
      siteId: site.id,
      side: 'A',
      reason: 'systematic',
      plannedAt: '2026-01-01T00:00:00Z',
      afterRound: 0,
      poolId: null,
    }));
    const hung = new Set(history.ropes.map((rope) => rope.sampleId));
    const outline = (changes: Partial<{ reportKeys: Map<string, string>; ropes: RopeInput[] }> = {}): SiteOutline => ({
      version: 1,
      ropes: (changes.ropes ?? history.ropes).map((rope) => ({ ...rope, source: 'sheet', poolId: null })),
      ropesFrom: undefined,
      reportKeys: changes.reportKeys ?? reportKeys,
      planned: [],
      plannedWithoutResults: plannedRopes,
      // As the store finds them: the planned ropes without results that hang as ropes (any day).
      plannedPlaced: plannedRopes.map((rope) => rope.sampleId).filter((id) => hung.has(id)),
      mistyped: [],
    });
    const before = roundKeys(site, outline(), 'settings', TODAY);
    // A correction of one result of round 4: that round's key changes, no other.
    const round4 = before[3]!;
    const corrected = new Map(reportKeys);
    const sample = round4.sampleIds.find((id) => reportKeys.has(id))!;
    corrected.set(sample, '2/99999/1');
    const after = roundKeys(site, outline({ reportKeys: corrected }), 'settings', TODAY);
    expect(after.map((round, i) => round.key !== before[i]!.key)).toEqual(before.map((_, i) => i === 3));
    // A rope moved to another pen in round 6: that round only.
    const moved = history.ropes.map((rope) =>
      rope.sampleId === before[5]!.sampleIds[0] ? { ...rope, penId: `${rope.penId}x` } : rope,
    );
    const afterMove = roundKeys(site, outline({ ropes: moved }), 'settings', TODAY);
    expect(afterMove.map((round, i) => round.key !== before[i]!.key)).toEqual(before.map((_, i) => i === 5));
    // Other settings (a configuration changed): every key.
    const otherSettings = roundKeys(site, outline(), 'other settings', TODAY);
    expect(otherSettings.every((round, i) => round.key !== before[i]!.key)).toBe(true);
    // The ropes from a round's first day on, with the rounds before as kept: the same keys, each
    // kept round keyed again from its span and ropes' digest alone.
    for (let first = 1; first < before.length; first++) {
      const from = before[first]!.startOn;
      const partial = outline({ ropes: history.ropes.filter((rope) => rope.hungOn >= from) });
      const resumed = roundKeys(site, { ...partial, ropesFrom: from }, 'settings', TODAY, before.slice(0, first));
      expect(resumed.map((round) => [round.id, round.key, round.ropes])).toEqual(
        before.map((round) => [round.id, round.key, round.ropes]),
      );
      expect(resumed.slice(first).map((round) => round.sampleIds)).toEqual(
        before.slice(first).map((round) => round.sampleIds),
      );
    }
    // A kept round whose ropes' digest differs (its ropes changed unseen) is keyed otherwise.
    const from = before[4]!.startOn;
    const partial = outline({ ropes: history.ropes.filter((rope) => rope.hungOn >= from) });
    const tampered = before.slice(0, 4).map((round, i) => (i === 2 ? { ...round, ropes: 'other' } : round));
    const resumed = roundKeys(site, { ...partial, ropesFrom: from }, 'settings', TODAY, tampered);
    expect(resumed.map((round, i) => round.key !== before[i]!.key)).toEqual(before.map((_, i) => i === 2));
  });
});
