/**
 * What the round model adds beside current results: reports another took the place of, placed
 * in the pen of their rope, and ropes without a result for which a row came back under a
 * mistyped ID. Expected values are by hand from the small inputs below on the demo site
 * hollow-creek (barn F1 rows A and B, 20 pens a row; barn F2 pens numbered).
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import {
  buildSiteRounds,
  type MistypedInput,
  type PlannedInput,
  type ReplacedInput,
  type ResultInput,
  type RopeInput,
} from '../../src/rounds/roundModel.js';
import { resultInput } from '../helpers/results.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const site = config.siteById.get('HOLLOW-CREEK')!;

const rope = (sampleId: string, barnId: string, penId: string, hungOn: string): RopeInput => ({
  sampleId,
  siteId: site.id,
  barnId,
  penId,
  hungOn,
  source: 'sheet',
});
let nextId = 1;
const result = (sampleId: string, resultClass: ResultInput['resultClass'], ct: number | null): ResultInput =>
  resultInput({
    id: nextId++,
    sampleId,
    ct,
    resultClass,
  });
const reading = (
  resultClass: ResultInput['resultClass'],
  ctRaw: string,
  reportedOn: string,
  status: string | null,
) => ({
  resultClass,
  ct: ctRaw === '' || ctRaw === 'Undetermined' ? null : Number(ctRaw),
  ctRaw,
  labCall: null,
  reportedOn,
  status,
  statusWord: status,
});
const replaced = (
  sampleId: string,
  assayId: string,
  kind: string,
  before: ReturnType<typeof reading>,
  after: ReturnType<typeof reading>,
): ReplacedInput => ({
  sampleId,
  assayId,
  labId: 'northfield',
  kind,
  reason: `test ${kind}`,
  replaced: before,
  inPlace: after,
});
const planned = (sampleId: string, barnId: string, penId: string, dueOn: string): PlannedInput => ({
  sampleId,
  barnId,
  penId,
  dueOn,
});
const refused = (written: string, suggestedId: string, line: number): MistypedInput => ({
  written,
  suggestedId,
  fileName: 'lab.csv',
  line,
});

describe('buildSiteRounds with replaced reports', () => {
  const ropes = [
    rope('S1', 'F1', 'B2', '2026-08-03'),
    rope('S2', 'F1', 'A1', '2026-08-03'),
    rope('S3', 'F1', 'A1', '2026-08-17'),
  ];
  const results = [result('S1', 'positive', 30), result('S2', 'negative', null), result('S3', 'negative', null)];
  const notes = {
    replaced: [
      // In the order the store made the links: S1's preliminary, then its correction.
      replaced(
        'S1',
        'PRRSV',
        'final-over-preliminary',
        reading('suspect', '38.0', '2026-08-05', 'preliminary'),
        reading('negative', 'Undetermined', '2026-08-06', 'final'),
      ),
      replaced(
        'S1',
        'PRRSV',
        'correction',
        reading('negative', 'Undetermined', '2026-08-06', 'final'),
        reading('positive', '30.0', '2026-08-08', 'corrected'),
      ),
      replaced(
        'S2',
        'PRRSV',
        'later-report',
        reading('invalid', '', '2026-08-05', null),
        reading('negative', 'Undetermined', '2026-08-06', null),
      ),
      replaced(
        'S3',
        'PRRSV',
        'correction',
        reading('positive', '33.0', '2026-08-19', null),
        reading('negative', 'Undetermined', '2026-08-20', 'corrected'),
      ),
      // A sample that is no rope of this site: not shown.
      replaced(
        'ELSEWHERE',
        'PRRSV',
        'correction',
        reading('positive', '20.0', '2026-08-05', null),
        reading('negative', '', '2026-08-06', 'corrected'),
      ),
    ],
  };
  const rounds = buildSiteRounds(site, ropes, results, [], notes);

  it('lists each link once, in the round of its rope, with the pen, in layout order then in the order made', () => {
    // By hand: round 1 has S1 (F1 B2) and S2 (F1 A1); row A comes before row B in the layout.
    expect(rounds[0]!.replaced.map((entry) => [entry.barnId, entry.penId, entry.sampleId, entry.kind])).toEqual([
      ['F1', 'A1', 'S2', 'later-report'],
      ['F1', 'B2', 'S1', 'final-over-preliminary'],
      ['F1', 'B2', 'S1', 'correction'],
    ]);
    expect(rounds[1]!.replaced.map((entry) => [entry.penId, entry.sampleId])).toEqual([['A1', 'S3']]);
    expect(rounds[0]!.replaced[2]).toMatchObject({
      replaced: { resultClass: 'negative', reportedOn: '2026-08-06' },
      inPlace: { resultClass: 'positive', ctRaw: '30.0', reportedOn: '2026-08-08' },
    });
  });

  it('leaves the tallies alone: the current results alone are counted', () => {
    expect(rounds[0]!.barns[0]!.byAssay.PRRSV).toMatchObject({ positive: 1, negative: 1, positivePens: ['B2'] });
    expect(buildSiteRounds(site, ropes, results).map((round) => round.barns)).toEqual(
      rounds.map((round) => round.barns),
    );
  });
});

describe('buildSiteRounds with results refused under a mistyped ID', () => {
  // Round 1 from sheets; the plan after round 1 is for round 2 (F1 A3, A4, A5; F2 pen 01).
  const ropes = [
    rope('S1', 'F1', 'A1', '2026-08-03'),
    rope('S2', 'F1', 'A2', '2026-08-17'),
    rope('P2', 'F1', 'A4', '2026-08-17'),
  ];
  const results = [result('S1', 'negative', null), result('S2', 'negative', null), result('P2', 'negative', null)];
  const plannedWithoutResults = [
    planned('P1', 'F1', 'a3', '2026-08-17'),
    planned('P3', 'F1', 'A5', '2026-08-17'),
    planned('Q1', 'F2', '01', '2026-08-17'),
    planned('LATER', 'F1', 'A6', '2026-08-31'),
  ];
  const mistyped = [
    refused('P1X', 'P1', 3),
    refused('p1x ', 'P1', 4), // the same tube's second assay, written another way
    refused('P2X', 'P2', 5), // P2 came back under its own ID too: its rope is not missing
    refused('Q1X', 'Q1', 6),
    refused('LATERX', 'LATER', 7), // planned for round 3, which has no ropes yet
  ];
  const rounds = buildSiteRounds(site, ropes, results, plannedWithoutResults, { mistyped });

  it('names each missing rope of the round that a refused row most likely meant, with its pen, side and every refused row', () => {
    const [f1, f2] = rounds[1]!.barns;
    // By hand: round 2's planned ropes without results are P1 (F1 A3), P3 (F1 A5) and Q1 (F2 01).
    expect(f1!.missingSampleIds).toEqual(['P1', 'P3']);
    expect(f1!.mistyped).toEqual([
      {
        sampleId: 'P1',
        penId: 'A3',
        side: 'A',
        refusals: [
          { written: 'P1X', fileName: 'lab.csv', line: 3 },
          { written: 'p1x ', fileName: 'lab.csv', line: 4 },
        ],
      },
    ]);
    expect(f2!.missingSampleIds).toEqual(['Q1']);
    expect(f2!.mistyped.map((rope) => [rope.sampleId, rope.penId])).toEqual([['Q1', '01']]);
  });

  it('names none in another round, and none for a rope that has its result', () => {
    expect(rounds[0]!.barns.flatMap((barn) => barn.mistyped)).toEqual([]);
    expect(rounds[1]!.barns.flatMap((barn) => barn.mistyped).map((rope) => rope.sampleId)).not.toContain('P2');
    expect(
      rounds.flatMap((round) => round.barns.flatMap((barn) => barn.mistyped)).map((rope) => rope.sampleId),
    ).not.toContain('LATER');
  });

  it('also names a rope on a sheet that has no result', () => {
    const withSheet = buildSiteRounds(site, [...ropes, rope('P9', 'F1', 'B3', '2026-08-17')], results, [], {
      mistyped: [refused('P9X', 'P9', 8)],
    });
    expect(withSheet[1]!.barns[0]!.mistyped).toEqual([
      { sampleId: 'P9', penId: 'B3', side: 'B', refusals: [{ written: 'P9X', fileName: 'lab.csv', line: 8 }] },
    ]);
  });
});
