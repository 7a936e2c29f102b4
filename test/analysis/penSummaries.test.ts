/**
 * The pens of a round summary: each pen's result is the round model's result without its assay
 * id and other samples, then the lab's name, the sequencing mark and the history, in that order
 * (summary.json writes them so), whether the result is a rope's own or its pool's.
 */
import { describe, expect, it } from 'vitest';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { isSequencingCandidate, summariseSite } from '../../src/analysis/roundSummary.js';
import { barnCtHistory, buildSiteRounds, type RopeInput } from '../../src/rounds/roundModel.js';
import { resultInput } from '../helpers/results.js';
import { smallConfig } from './fixtures.js';

const rope = (sampleId: string, penId: string, hungOn: string, poolId: string | null = null): RopeInput => ({
  sampleId,
  siteId: 'test-site',
  barnId: 'B1',
  penId,
  hungOn,
  source: 'sheet',
  poolId,
});

describe('pen summaries', () => {
  it('write each pen result as the result without assay and other samples, then lab name, sequencing mark and history', () => {
    const config = smallConfig({ pooling: { poolSize: 3, poolSensitivity: 0.9 } });
    const site = config.sites[0]!;
    const first = '2026-08-03';
    const second = '2026-09-07';
    const ropes = [
      rope('R-1', 'A1', first),
      rope('R-2', 'A2', first),
      rope('R-3', 'A3', first),
      // A second rope in A1: the worse result stands, the other is listed under it.
      rope('R-4', 'A1', first),
      rope('R-5', 'A1', second),
      rope('R-6', 'A2', second, 'P-1'),
      rope('R-7', 'A3', second, 'P-1'),
      rope('R-8', 'A4', second, 'P-1'),
    ];
    let id = 1;
    const results = [
      resultInput({ id: id++, sampleId: 'R-1', resultClass: 'positive', ct: 24.5, accession: 'C-1' }),
      resultInput({ id: id++, sampleId: 'R-2', resultClass: 'negative', ct: null }),
      resultInput({ id: id++, sampleId: 'R-3', resultClass: 'invalid', ct: null, labCall: 'inhibited' }),
      resultInput({ id: id++, sampleId: 'R-4', resultClass: 'suspect', ct: 36.1 }),
      resultInput({ id: id++, sampleId: 'R-5', resultClass: 'positive', ct: 31, collectedOn: second }),
      resultInput({ id: id++, sampleId: 'P-1', resultClass: 'positive', ct: 33.2, positiveBelow: 35 }),
    ];
    const rounds = buildSiteRounds(site, ropes, results);
    expect(rounds).toHaveLength(2);
    expect(rounds[0]!.barns[0]!.pens.find((pen) => pen.penId === 'A1')!.results['PRRSV']!.otherSampleIds).toEqual([
      'R-4',
    ]);
    expect(rounds[1]!.barns[0]!.pens.find((pen) => pen.penId === 'A2')!.results['PRRSV']!.pool).toBeDefined();
    const summaries = summariseSite(config, site, rounds, siteConfidence(site, rounds));
    const labName = (labId: string) => config.labById.get(labId)?.name ?? labId;
    let compared = 0;
    summaries.forEach((summary, index) => {
      const historyOf = barnCtHistory(rounds.slice(0, index + 1), 'B1');
      const pens = rounds[index]!.barns[0]!.pens;
      expect(summary.pens.map((pen) => pen.penId)).toEqual(pens.map((pen) => pen.penId));
      summary.pens.forEach((penSummary, p) => {
        const pen = pens[p]!;
        // The code before, same inputs: the result copied by rest and spread.
        const expected = Object.fromEntries(
          Object.entries(pen.results).map(([assayId, { assayId: _a, otherSampleIds: _o, ...kept }]) => {
            const assay = config.assayById.get(assayId);
            return [
              assayId,
              {
                ...kept,
                labName: labName(kept.labId),
                sequencingCandidate: isSequencingCandidate(
                  kept,
                  assay?.measure === 'ct' ? assay.sequencingBelow : undefined,
                ),
                history: historyOf(pen.penId, assayId).map((point) => ({ ...point, labName: labName(point.labId) })),
              },
            ];
          }),
        );
        // Compared as JSON text: the order of the fields is what summary.json shows.
        expect(JSON.stringify(penSummary.results)).toBe(JSON.stringify(expected));
        compared += Object.keys(expected).length;
      });
    });
    expect(compared).toBe(7);
  });
});
