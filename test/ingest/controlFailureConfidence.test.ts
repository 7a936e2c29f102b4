/**
 * A failed internal control written inside the lab's call cell ("IK ungültig") must not count as a
 * negative rope: read as not detected, it would add a valid rope to the barn and overstate the
 * round's detection confidence. The barn's detection confidence is checked against the exact
 * imperfect-test form of Cameron & Baldock 1998 (Prev. Vet. Med. 34:1-17),
 * P = sum_x Hyp(x; N, d, n) [1 - (1 - Se)^x], with the @stdlib hypergeometric pmf as the oracle
 * and the sum done by hand below.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import hypergeometricPmf from '@stdlib/stats-base-dists-hypergeometric-pmf';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { ropeSheet } from '../../src/demo/scenario.js';
import { expectClose } from '../helpers/expectClose.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
const AUENFELD = fs.readFileSync(
  path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../fixtures/exports/config/labs/auenfeld.yaml'),
  'utf8',
);

/** Cameron & Baldock 1998, exact form, with @stdlib's hypergeometric pmf(x; N, K, n). */
function detection(pens: number, infected: number, sampled: number, sensitivity: number): number {
  let p = 0;
  for (let x = 0; x <= Math.min(infected, sampled); x++)
    p += hypergeometricPmf(x, pens, infected, sampled) * (1 - (1 - sensitivity) ** x);
  return p;
}

describe('a failed control inside the call cell and the barn detection confidence', () => {
  it('leaves the pen out of the valid ropes, so the barn confidence is that of five ropes, not six', async () => {
    const ws = workspace({ configFiles: { 'labs/auenfeld.yaml': AUENFELD } });
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    // Demo barn F3: 2 rows of 16 pens, all in use (N = 32); design prevalence 0.1 gives
    // d = ceil(3.2) = 4 pens; rope sensitivity for PRRSV in finishers 0.8 (demo sites.yaml).
    const pens = ['N1', 'N4', 'N7', 'N10', 'N13', 'S3'];
    const ropes = pens.map((penId, index) => ({
      sampleId: `CF-${index + 1}`,
      barnId: 'F3',
      penId,
      hungOn: '2026-08-03',
    }));
    await ws.drop('hollow-creek_ropes_2026-08-03.csv', ropeSheet(site, ropes));
    const rows = ropes.map(
      (rope, index) =>
        `${rope.sampleId};PRRSV;;${index === 5 ? 'IK ungültig' : 'negativ'};endgültig;03.08.2026;06.08.2026`,
    );
    const { receipt } = await ws.drop(
      'atd_befund_2026-08-06.csv',
      Buffer.from(['Probe;Test;Cq;Befund;Status;Entnahme;Befunddatum', ...rows].join('\r\n') + '\r\n', 'latin1'),
    );
    expect(receipt.invalidRows!.map((row) => row.sampleId)).toEqual(['CF-6']);

    const round = fs.readdirSync(path.join(ws.paths.outbox, 'hollow-creek')).find((name) => name.startsWith('r01-'))!;
    const table = parse(fs.readFileSync(path.join(ws.paths.outbox, 'hollow-creek', round, 'summary.csv'), 'utf8'), {
      columns: true,
    }) as Record<string, string>[];
    const f3 = table.find((row) => row['level'] === 'barn' && row['barn'] === 'F3' && row['assay'] === 'PRRSV')!;
    expect(f3).toMatchObject({ tested: '5', negative: '5', invalid: '1' });

    // By hand, C(32,5) = 201376 draws; x infected pens among 5 ropes: C(4,x) C(28,5-x) =
    // 81900 (x=1), 19656 (x=2), 1512 (x=3), 28 (x=4); P = (81900*0.8 + 19656*0.96 + 1512*0.992
    // + 28*0.9984) / 201376 = 85917.6192 / 201376 = 0.4266527.
    const five = detection(32, 4, 5, 0.8);
    expectClose(five, 85917.6192 / 201376, { rel: 1e-12 }, 'Cameron & Baldock, n = 5, by hand');
    expectClose(Number(f3['detection_confidence']), five, { abs: 5e-7 }, 'barn F3 PRRSV, five valid ropes');
    // Read as a negative, the sixth rope would have overstated it (0.491958).
    const six = detection(32, 4, 6, 0.8);
    expect(Math.abs(Number(f3['detection_confidence']) - six)).toBeGreaterThan(0.06);
  });
});
