/**
 * Positive status of barns and sites over rounds, by the program's clearance rule. The rule
 * itself (a barn stays positive until a stated number of negative rounds in a row, or a new
 * group of pigs) is common practice, no source; these tests check that ropewatch applies the
 * rule the program states, counting rounds by hand.
 */
import { describe, expect, it } from 'vitest';
import { negativeRoundsRule, statusOverRounds } from '../../src/analysis/barnStatus.js';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { summariseSite } from '../../src/analysis/roundSummary.js';
import { wordSummary } from '../../src/report/summaryNotices.js';
import { buildSiteRounds, type ResultInput } from '../../src/rounds/roundModel.js';
import { summaryCsv } from '../../src/report/summaryCsv.js';
import { parse } from 'csv-parse/sync';
import { roundRopes, smallConfig } from './fixtures.js';

type Rounds = { ropes: ReturnType<typeof roundRopes>['ropes']; results: ResultInput[] }[];

function build(config: ReturnType<typeof smallConfig>, parts: Rounds) {
  const site = config.sites[0]!;
  return {
    site,
    rounds: buildSiteRounds(
      site,
      parts.flatMap((part) => part.ropes),
      parts.flatMap((part) => part.results),
    ),
  };
}

/** Rounds every 14 days from 2026-08-03; `positive[i]` names the positive ropes of round i + 1. */
function series(positive: readonly (readonly number[])[]): Rounds {
  const days = ['2026-08-03', '2026-08-17', '2026-08-31', '2026-09-14', '2026-09-28'];
  return positive.map((pens, index) => roundRopes(days[index]!, 18, `R${index + 1}`, pens));
}

describe('a barn positive for a PCR assay', () => {
  it('stays positive until the stated number of negative rounds in a row, then clears (default 2; common practice, no source)', () => {
    const config = smallConfig();
    expect(config.sites[0]!.program.clearAfterNegativeRounds).toBe(2);
    const { site, rounds } = build(config, series([[], [4], [], [], []]));
    const confidence = siteConfidence(site, rounds);
    const barn = confidence.map((round) => round.barns.find((entry) => entry.assayId === 'PRRSV')!.status);
    // Counted by hand: round 2 positive; rounds 3 and 4 negative (1, then 2 in a row: cleared at 4).
    expect(barn).toEqual([
      { state: 'clear', clearedAtRound: null },
      { state: 'positive', sinceRound: 2, negativeRoundsInARow: 0 },
      { state: 'positive', sinceRound: 2, negativeRoundsInARow: 1 },
      { state: 'clear', clearedAtRound: 4 },
      { state: 'clear', clearedAtRound: 4 },
    ]);
    const sites = confidence.map((round) => round.sites.find((entry) => entry.assayId === 'PRRSV')!);
    // While positive the site has a status, not a probability of freedom.
    expect(sites.map((entry) => entry.freedom === null)).toEqual([false, true, true, false, false]);
    expect(sites[2]!.status).toEqual({ state: 'positive', sinceRound: 2, negativeRoundsInARow: 1 });
  });

  it('takes the number of rounds from the program (clearAfterNegativeRounds: 3)', () => {
    const { site, rounds } = build(smallConfig({ clearAfterNegativeRounds: 3 }), series([[4], [], [], []]));
    const states = siteConfidence(site, rounds).map((round) => round.barns[0]!.status!.state);
    expect(states).toEqual(['positive', 'positive', 'positive', 'clear']);
  });

  it('starts the count again after a positive round in the run', () => {
    const { site, rounds } = build(smallConfig(), series([[4], [], [7], [], []]));
    const statuses = siteConfidence(site, rounds).map((round) => round.barns[0]!.status);
    expect(statuses[3]).toEqual({ state: 'positive', sinceRound: 1, negativeRoundsInARow: 1 });
    expect(statuses[4]).toEqual({ state: 'clear', clearedAtRound: 5 });
  });

  it('neither counts nor breaks the run on a round with a suspect pen (it is retested)', () => {
    const config = smallConfig();
    const parts = series([[4], [], [], []]);
    // Round 3: rope 2 reads suspect.
    parts[2] = {
      ...parts[2]!,
      results: parts[2]!.results.map(
        (result, i): ResultInput => (i === 2 ? { ...result, ct: 36, resultClass: 'suspect' } : result),
      ),
    };
    const { site, rounds } = build(config, parts);
    const statuses = siteConfidence(site, rounds).map((round) => round.barns[0]!.status);
    expect(statuses[2]).toEqual({ state: 'positive', sinceRound: 1, negativeRoundsInARow: 1 });
    expect(statuses[3]).toEqual({ state: 'clear', clearedAtRound: 4 });
  });

  it('clears when the rule says a new group of pigs was placed, whatever the count', () => {
    const config = smallConfig({ clearAfterNegativeRounds: 5 });
    const { site, rounds } = build(config, series([[4], [], []]));
    const statuses = statusOverRounds({
      rounds,
      barnIds: ['B1'],
      rule: negativeRoundsRule(5),
      groupPlaced: (barnId, round) => barnId === 'B1' && round === 3,
    });
    expect(statuses.map((round) => round.barns[0]!.status.state)).toEqual(['positive', 'positive', 'clear']);
    expect(site.program.clearAfterNegativeRounds).toBe(5);
  });

  it('refuses a rule of no rounds', () => {
    expect(() => negativeRoundsRule(0)).toThrow(
      '`clearAfterNegativeRounds` must be an integer in [1, infinity), got 0',
    );
  });
});

describe('an antibody-only positive', () => {
  it('does not make the barn positive for the PCR assay, and the antibody assay keeps a number (exposure; common practice, no source)', () => {
    const config = smallConfig();
    const site = config.sites[0]!;
    const { ropes, results } = roundRopes('2026-08-03', 18, 'R1');
    const antibody = results.map(
      (result, i): ResultInput => ({
        ...result,
        id: 1000 + i,
        assayId: 'PRRSV-AB',
        measure: 'sp-ratio',
        ct: null,
        sp: i === 4 ? 1.2 : 0.1,
        resultClass: i === 4 ? 'positive' : 'negative',
        cycleLimit: null,
        positiveAtOrAbove: 0.4,
        suspectAtOrAbove: null,
      }),
    );
    const [round] = siteConfidence(site, buildSiteRounds(site, ropes, [...results, ...antibody]));
    expect(round!.barns.find((entry) => entry.assayId === 'PRRSV')!.status).toEqual({
      state: 'clear',
      clearedAtRound: null,
    });
    expect(round!.barns.find((entry) => entry.assayId === 'PRRSV-AB')!.status).toBeNull();
    expect(round!.sites.find((entry) => entry.assayId === 'PRRSV-AB')).toMatchObject({
      status: null,
      freedom: 0,
      freedomReset: true,
    });
  });
});

describe('the summary of a positive site', () => {
  it('says "positive" and since when in summary.csv instead of a probability, at site and barn level', () => {
    const config = smallConfig();
    const { site, rounds } = build(config, series([[], [4], []]));
    const summaries = summariseSite(config, site, rounds, siteConfidence(site, rounds)).map(wordSummary);
    // csv-parse reads the file back as a reader would.
    const rows = parse(summaryCsv(summaries[2]!), { columns: true }) as Record<string, string>[];
    const siteRow = rows.find((row) => row.level === 'site' && row.assay === 'PRRSV')!;
    const barnRow = rows.find((row) => row.level === 'barn' && row.assay === 'PRRSV')!;
    expect(siteRow).toMatchObject({ freedom: 'positive', positive_since: '2' });
    expect(barnRow).toMatchObject({ freedom: 'positive', positive_since: '2' });
    const before = parse(summaryCsv(summaries[0]!), { columns: true }) as Record<string, string>[];
    expect(before.find((row) => row.level === 'site')!.freedom).toMatch(/^0\.\d{6}$/);
    expect(before.find((row) => row.level === 'site')!.positive_since).toBe('');
    expect(summaries[2]!.assays.find((assay) => assay.id === 'PRRSV')!.site).toMatchObject({
      freedom: null,
      status: { state: 'positive', sinceRound: 2 },
    });
  });
});
