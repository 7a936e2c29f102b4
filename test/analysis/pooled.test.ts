/**
 * Pooled ropes through the round model, detection confidence and the next plan: a pool's result
 * marks every pen of the pool, a positive pool's pens are retested one by one, and a pooled round
 * counts detection with the pool-level sensitivity beside the unpooled figure.
 */
import { describe, expect, it } from 'vitest';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { planNextRound } from '../../src/analysis/nextRound.js';
import { wordPlan } from '../../src/report/planWording.js';
import { OutbreakCache } from '../../src/analysis/spatialRound.js';
import { buildSiteRounds, type ResultInput, type RopeInput } from '../../src/rounds/roundModel.js';
import { parseSampleId } from '../../src/plan/sampleId.js';
import { renderRopeSheetPage } from '../../src/report/html/ropeSheetPage.js';
import { formatPercent } from '../../src/util/format.js';
import { expectClose } from '../helpers/expectClose.js';
import { smallConfig } from './fixtures.js';
import { resultInput } from '../helpers/results.js';

const pen = (i: number) => (i < 18 ? `A${i + 1}` : `B${i - 17}`);
const rope = (i: number, poolId: string | null, hungOn = '2026-08-03'): RopeInput => ({
  sampleId: `R-${i}`,
  siteId: 'test-site',
  barnId: 'B1',
  penId: pen(i),
  hungOn,
  source: 'sheet',
  poolId,
});
let nextId = 1;
const result = (sampleId: string, resultClass: ResultInput['resultClass']): ResultInput =>
  resultInput({
    id: nextId++,
    sampleId,
    ct: resultClass === 'positive' ? 29 : null,
    resultClass,
  });

/**
 * Detection by its definition, enumerated: every set of d infected pens among the N is equally
 * likely; the round detects when some test is positive; a test (a pool, or a rope on its own)
 * holding an infected pen is positive with its sensitivity, a clean one with 1 - specificity.
 */
function enumerated(
  pens: number,
  infected: number,
  tests: readonly { pens: readonly number[]; se: number; sp: number }[],
): number {
  let sets = 0;
  let miss = 0;
  const chosen: number[] = [];
  const visit = (from: number) => {
    if (chosen.length === infected) {
      sets++;
      let allNegative = 1;
      for (const test of tests) allNegative *= test.pens.some((p) => chosen.includes(p)) ? 1 - test.se : test.sp;
      miss += allNegative;
      return;
    }
    for (let p = from; p < pens; p++) {
      chosen.push(p);
      visit(p + 1);
      chosen.pop();
    }
  };
  visit(0);
  return 1 - miss / sets;
}

describe('pooled ropes in a round', () => {
  it('gives 0.15 for two negative pools of three in a barn of 36 at one infected pen (by hand: 6/36 x PSe 0.9), beside 1/6 unpooled', () => {
    const config = smallConfig({ pooling: { poolSize: 3, poolSensitivity: 0.9 } });
    const site = config.sites[0]!;
    const ropes = [0, 1, 2, 3, 4, 5].map((i) => rope(i, i < 3 ? 'P-1' : 'P-2'));
    const rounds = buildSiteRounds(site, ropes, [result('P-1', 'negative'), result('P-2', 'negative')]);
    const barnRound = rounds[0]!.barns[0]!;
    // Each pool's result applies to its three pens.
    expect(barnRound).toMatchObject({ ropesHung: 6, ropesReturned: 6, missingSampleIds: [] });
    expect(barnRound.byAssay['PRRSV']).toMatchObject({ negative: 6, testedPens: ['A1', 'A2', 'A3', 'A4', 'A5', 'A6'] });
    expect(barnRound.pens.find((p) => p.penId === 'A2')!.results['PRRSV']!.pool).toEqual({
      poolId: 'P-1',
      poolClass: 'negative',
      pens: ['B1/A1', 'B1/A2', 'B1/A3'],
    });
    // A pool's result is one report: its source counts it once, not once per pen.
    expect(barnRound.sources[0]!.results).toBe(2);
    const barn = siteConfidence(site, rounds)[0]!.barns[0]!;
    // By hand: the one infected pen is among the 6 roped with probability 6/36, and then in a pool that tests positive with 0.9.
    expectClose(barn.detectionConfidence, (6 / 36) * 0.9, { rel: 1e-12 }, 'pooled N=36 n=6 d=1 PSe=0.9');
    // Unpooled: rope sensitivity 1, so n/N = 6/36 (Cameron & Baldock 1998 with d = 1).
    expectClose(barn.pooled!.unpooledDetectionConfidence, 6 / 36, { rel: 1e-12 }, 'unpooled N=36 n=6 d=1 Se=1');
    expect(barn.pooled).toMatchObject({
      pools: 2,
      pooledPens: 6,
      positivePools: 0,
      poolSensitivity: 0.9,
      poolSpecificity: 1,
    });
  });

  it('agrees with enumeration over every pair of infected pens for pools and ropes tested on their own in one barn', () => {
    const config = smallConfig({
      designPrevalence: { pens: 2 },
      ropeSensitivity: 0.8,
      pooling: { poolSize: 3, poolSensitivity: 0.7, poolSpecificity: 0.98 },
    });
    const site = config.sites[0]!;
    // Pools of 3, 3 and 2 ropes and two ropes tested on their own: ten pens tested.
    const poolOf = (i: number) => (i < 3 ? 'P-1' : i < 6 ? 'P-2' : i < 8 ? 'P-3' : null);
    const ropes = Array.from({ length: 10 }, (_, i) => rope(i, poolOf(i)));
    const results = [
      result('P-1', 'negative'),
      result('P-2', 'negative'),
      result('P-3', 'negative'),
      result('R-8', 'negative'),
      result('R-9', 'negative'),
    ];
    const barn = siteConfidence(site, buildSiteRounds(site, ropes, results))[0]!.barns[0]!;
    const tests = [
      { pens: [0, 1, 2], se: 0.7, sp: 0.98 },
      { pens: [3, 4, 5], se: 0.7, sp: 0.98 },
      { pens: [6, 7], se: 0.7, sp: 0.98 },
      // The unpooled figure takes rope specificity as 1 (detection counts true positives), and so do ropes tested on their own here.
      { pens: [8], se: 0.8, sp: 1 },
      { pens: [9], se: 0.8, sp: 1 },
    ];
    expectClose(
      barn.detectionConfidence,
      enumerated(36, 2, tests),
      { abs: 1e-12 },
      'N=36 d=2, pools 3+3+2 and 2 singles',
    );
    expectClose(
      barn.pooled!.unpooledDetectionConfidence,
      enumerated(
        36,
        2,
        Array.from({ length: 10 }, (_, i) => ({ pens: [i], se: 0.8, sp: 1 })),
      ),
      { abs: 1e-12 },
      'N=36 d=2, 10 singles',
    );
    expect(barn.pooled).toMatchObject({ pools: 3, pooledPens: 8 });
  });

  it('reads a positive pool as "positive pool": its pens held as suspect, no positive pen, the barn positive for freedom, and each pen retested in the next plan', () => {
    const config = smallConfig({ pooling: { poolSize: 3, poolSensitivity: 0.9 } });
    const site = config.sites[0]!;
    const ropes = [0, 1, 2, 3, 4, 5].map((i) => rope(i, i < 3 ? 'P-1' : 'P-2'));
    const rounds = buildSiteRounds(site, ropes, [result('P-1', 'positive'), result('P-2', 'negative')]);
    const tally = rounds[0]!.barns[0]!.byAssay['PRRSV']!;
    expect(tally).toMatchObject({
      positive: 0,
      suspect: 3,
      negative: 3,
      positivePens: [],
      suspectPens: ['A1', 'A2', 'A3'],
      positivePoolPens: ['A1', 'A2', 'A3'],
    });
    const a1 = rounds[0]!.barns[0]!.pens[0]!.results['PRRSV']!;
    expect(a1).toMatchObject({ resultClass: 'suspect', pool: { poolId: 'P-1', poolClass: 'positive' } });
    expect(a1.reason).toMatch(/^positive pool P-1/);
    const confidence = siteConfidence(site, rounds);
    expect(confidence[0]!.barns[0]).toMatchObject({ positives: 0, pooled: { positivePools: 1 } });
    expect(confidence[0]!.sites[0]).toMatchObject({
      positive: true,
      positiveBarns: ['B1'],
      freedom: 0,
      freedomReset: true,
    });
    const plan = wordPlan(
      planNextRound({
        site,
        rounds,
        confidence,
        spatial: [],
        settings: config.analysis,
        cache: new OutbreakCache(config.analysis),
        today: '2026-08-10',
      }),
    );
    const retests = plan.ropes
      .filter((row) => row.reason === 'retest')
      .map((row) => row.penId)
      .sort();
    expect(retests).toEqual(['A1', 'A2', 'A3']);
    // A retest names its pen: it is tested on its own.
    expect(plan.ropes.filter((row) => row.reason === 'retest').every((row) => row.poolId === undefined)).toBe(true);
    expect(plan.notes.some((note) => note.startsWith('Positive pool in B1 A1, B1 A2, B1 A3'))).toBe(true);
  });

  it('pools the routine ropes of a barn in groups of the pool size under IDs that pass their check character', () => {
    const config = smallConfig({ pooling: { poolSize: 4, poolSensitivity: 0.9 } });
    const site = config.sites[0]!;
    const plan = wordPlan(
      planNextRound({
        site,
        rounds: [],
        confidence: [],
        spatial: [],
        settings: config.analysis,
        cache: new OutbreakCache(config.analysis),
        today: '2026-08-10',
      }),
    );
    const routine = plan.ropes.filter((row) => row.reason === 'routine');
    // 35 routine ropes at d = 1, Se = 1, 95% (ceil(0.95 x 36), by hand): pools of 4, the last of 3.
    expect(routine).toHaveLength(35);
    const sizes = new Map<string, number>();
    for (const row of routine) sizes.set(row.poolId!, (sizes.get(row.poolId!) ?? 0) + 1);
    expect([...sizes.values()]).toEqual([4, 4, 4, 4, 4, 4, 4, 4, 3]);
    // Pools follow the walking order: consecutive ropes share a pool.
    expect(routine.slice(0, 4).every((row) => row.poolId === routine[0]!.poolId)).toBe(true);
    // By hand, d = 1: the infected pen is roped with probability 35/36, and its pool detects it with 0.9: 0.875; one by one 35/36 = 0.972.
    const note = plan.notes.find((text) => text.startsWith('Routine ropes go into pools of 4'))!;
    expect(note).toContain(`B1 ${formatPercent(0.875)} pooled against ${formatPercent(35 / 36)} one by one`);
    const ropeIds = new Set(plan.ropes.map((row) => row.sampleId));
    for (const poolId of sizes.keys()) {
      // ISO/IEC 7064 MOD 37-2: each pool ID parses with a valid check character, and names no rope.
      expect(parseSampleId(poolId)).toMatchObject({ ok: true, siteCode: 'TST', round: 1 });
      expect(ropeIds.has(poolId)).toBe(false);
    }
    // The printed sheet tells the producer which pool each tube goes into, under its sample ID.
    const html = renderRopeSheetPage({ site, plan, notices: [] });
    for (const row of routine)
      expect(html).toMatch(new RegExp(`data-rope="${row.sampleId}"[\\s\\S]*?into pool <strong>${row.poolId}</strong>`));
  });

  it('leaves a round without pools as before: no pool fields in its tallies, results or confidence', () => {
    const config = smallConfig();
    const site = config.sites[0]!;
    const rounds = buildSiteRounds(
      site,
      [rope(0, null), rope(1, null)],
      [result('R-0', 'negative'), result('R-1', 'negative')],
    );
    const tally = rounds[0]!.barns[0]!.byAssay['PRRSV']!;
    expect('pools' in tally || 'positivePoolPens' in tally).toBe(false);
    expect('pool' in rounds[0]!.barns[0]!.pens[0]!.results['PRRSV']!).toBe(false);
    const confidence = siteConfidence(site, rounds)[0]!;
    expect('pooled' in confidence.barns[0]!).toBe(false);
    expect('unpooledDetectionConfidence' in confidence.sites[0]!).toBe(false);
  });
});
