/**
 * The deliverables, pinned: summary.csv and clusters.csv of each round and next-round.csv of the
 * small Marsh End workspace (./marshEnd.ts: two barns of 2 x 5 and 2 x 4 pens, two rounds, three
 * neighbouring positives, one lost rope, a PCR and an antibody assay), run through the real
 * pipeline by the CLI in-process with the fixed clock 2026-12-01T12:00Z and the seed of its
 * sites.yaml, and compared byte for byte with the copies in test/golden/expected/.
 *
 * To rewrite the copies after an intended change of the outputs, review the diff this test
 * prints, then run
 *
 *     ROPEWATCH_UPDATE_GOLDEN=1 npx vitest run test/golden
 *
 * and review `git diff test/golden/expected` before committing. Without the variable a missing
 * or differing copy fails.
 *
 * Beside the byte comparison, the key cells are checked against hand derivations from the
 * published methods (below, each with its source), found by column name in the header, so that
 * a golden file rewritten by mistake still cannot carry a wrong figure.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import betaQuantile from '@stdlib/stats-base-dists-beta-quantile';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expectClose } from '../helpers/expectClose.js';
import { runCli } from '../helpers/runCli.js';
import { makeWorkspace, type TestWorkspace } from '../helpers/workspace.js';
import { checkGolden } from './goldenFiles.js';
import { CONFIG_FILES, DROPS, ROUND_IDS, SITE_ID } from './marshEnd.js';

/** The outputs pinned, relative to the outbox (and to test/golden/expected/). */
const PINNED = [
  ...ROUND_IDS.flatMap((round) => [`${SITE_ID}/${round}/summary.csv`, `${SITE_ID}/${round}/clusters.csv`]),
  `${SITE_ID}/next-round.csv`,
];

/** Figures are written with 6 decimals: half a unit of the last place. */
const PRINTED = { abs: 5e-7 };

let workspace: TestWorkspace | undefined;
let emptyConfig: string | undefined;
const outputs = new Map<string, Buffer>();

beforeAll(async () => {
  // Only the scenario's own configuration: no file of the demo's is copied in.
  emptyConfig = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-golden-config-'));
  workspace = makeWorkspace({ configFrom: emptyConfig, configFiles: CONFIG_FILES });
  const files = DROPS.map((drop) => {
    const file = path.join(workspace!.paths.inbox, drop.name);
    fs.writeFileSync(file, drop.text);
    return file;
  });
  const run = await runCli(['ingest', ...files, ...workspace.cliFlags]);
  expect(run.code, run.stderr).toBe(0);
  for (const relative of PINNED) outputs.set(relative, fs.readFileSync(path.join(workspace.paths.outbox, relative)));
});

afterAll(() => {
  workspace?.cleanup();
  if (emptyConfig) fs.rmSync(emptyConfig, { recursive: true, force: true });
});

type Row = Record<string, string>;
const rowsOf = (relative: string): Row[] => parse(outputs.get(relative)!.toString('utf8'), { columns: true });

/** The one row matching every given column value; fails naming the file and the key when there is not exactly one. */
function rowWhere(relative: string, key: Row): Row {
  const matches = rowsOf(relative).filter((row) =>
    Object.entries(key).every(([column, value]) => row[column] === value),
  );
  if (matches.length !== 1)
    expect.fail(`${relative}: expected one row with ${JSON.stringify(key)}, found ${matches.length}`);
  return matches[0]!;
}

function numberIn(row: Row, column: string): number {
  expect(row, `column ${column}`).toHaveProperty(column);
  const value = Number(row[column]);
  expect(Number.isFinite(value), `${column} = ${JSON.stringify(row[column])}`).toBe(true);
  return value;
}

const summary = (round: 0 | 1) => `${SITE_ID}/${ROUND_IDS[round]}/summary.csv`;
const clusters = (round: 0 | 1) => `${SITE_ID}/${ROUND_IDS[round]}/clusters.csv`;
const NEXT_ROUND = `${SITE_ID}/next-round.csv`;

describe('golden files of the Marsh End workspace', () => {
  it.each(PINNED)('%s is byte-identical to its golden copy', (relative) => {
    const problem = checkGolden(relative, outputs.get(relative)!);
    if (problem !== null) expect.fail(problem);
  });
});

describe('summary.csv, key cells by hand', () => {
  // Detection confidence of a round in a barn of N pens in use with d infected at the design
  // prevalence, n ropes tested, rope sensitivity 1: 1 - C(N-d, n) / C(N, n) (hypergeometric;
  // Cannon & Roe 1982, Livestock disease surveys: a field manual for veterinarians; Cameron &
  // Baldock 1998, Prev Vet Med 34:1-17). Here d = 2 ({ pens: 2 }).
  it('round 1: each barn’s detection confidence, the ropes the target needs, and the site’s', () => {
    const g1 = rowWhere(summary(0), { level: 'barn', barn: 'G1', assay: 'PRRSV' });
    // G1: N = 10, n = 5: 1 - C(8,5)/C(10,5) = 1 - 56/252 = 7/9.
    expect(g1).toMatchObject({ pens_in_use: '10', tested: '5', design_infected_pens: '2', rope_sensitivity: '1' });
    expectClose(numberIn(g1, 'detection_confidence'), 7 / 9, PRINTED, 'G1 round 1 detection');
    // Smallest n with 1 - C(8,n)/C(10,n) >= 0.95: n = 7 gives 1 - 8/120 = 0.933, n = 8 gives 1 - 1/45 = 0.978.
    expect(g1.ropes_needed).toBe('8');
    const g2 = rowWhere(summary(0), { level: 'barn', barn: 'G2', assay: 'PRRSV' });
    // G2: N = 8, n = 4: 1 - C(6,4)/C(8,4) = 1 - 15/70 = 11/14.
    expect(g2).toMatchObject({ pens_in_use: '8', tested: '4', design_infected_pens: '2' });
    expectClose(numberIn(g2, 'detection_confidence'), 11 / 14, PRINTED, 'G2 round 1 detection');
    // Smallest n with 1 - C(6,n)/C(8,n) >= 0.95: n = 5 gives 1 - 6/56 = 0.893, n = 6 gives 1 - 1/28 = 0.964.
    expect(g2.ropes_needed).toBe('6');

    const site = rowWhere(summary(0), { level: 'site', assay: 'PRRSV' });
    expect(site).toMatchObject({ ropes_hung: '9', ropes_returned: '9', positive: '0', site_barns: '2' });
    // Every barn infected: 1 - prod(1 - p_barn) = 1 - (2/9)(3/14) = 20/21 (Cameron & Baldock 1998).
    expectClose(numberIn(site, 'detection_confidence'), 20 / 21, PRINTED, 'site round 1 detection');
    // One of the two barns infected, at random: the mean of the barns' figures,
    // (7/9 + 11/14) / 2 = 197/252 (two-stage design, Cameron & Baldock 1998).
    expectClose(numberIn(site, 'detection_if_infected_barns'), 197 / 252, PRINTED, 'site, one barn infected');
  });

  // Probability of freedom after a negative round, PF' = PF / (1 - SSe (1 - PF)); before the next
  // round PF_next = PF' (1 - PI), PI for the days elapsed (14 = the interval: PI = 0.02) (Martin,
  // Cameron & Greiner 2007, Prev Vet Med 79:71-97). Prior 0.5.
  it('freedom across the two rounds, per site and per barn', () => {
    const site1 = rowWhere(summary(0), { level: 'site', assay: 'PRRSV' });
    // Site, round 1: 0.5 / (1 - (20/21)(0.5)) = 0.5 / (11/21) = 21/22.
    expectClose(numberIn(site1, 'freedom'), 21 / 22, PRINTED, 'site freedom round 1');
    // Barns, round 1: G1 0.5 / (1 - (7/9)(0.5)) = 9/11; G2 0.5 / (1 - (11/14)(0.5)) = 14/17.
    const g1 = rowWhere(summary(0), { level: 'barn', barn: 'G1', assay: 'PRRSV' });
    const g2 = rowWhere(summary(0), { level: 'barn', barn: 'G2', assay: 'PRRSV' });
    expectClose(numberIn(g1, 'barn_freedom'), 9 / 11, PRINTED, 'G1 freedom round 1');
    expectClose(numberIn(g2, 'barn_freedom'), 14 / 17, PRINTED, 'G2 freedom round 1');
    // G2, round 2: 3 ropes back of 4, SSe = 1 - C(6,3)/C(8,3) = 1 - 20/56 = 9/14; prior (14/17)(0.98) = 13.72/17;
    // PF' = (13.72/17) / (1 - (9/14)(3.28/17)) = (13.72 * 14) / 208.48 = 192.08 / 208.48.
    const g2Round2 = rowWhere(summary(1), { level: 'barn', barn: 'G2', assay: 'PRRSV' });
    expectClose(numberIn(g2Round2, 'detection_confidence'), 9 / 14, PRINTED, 'G2 round 2 detection');
    expectClose(numberIn(g2Round2, 'barn_freedom'), 192.08 / 208.48, PRINTED, 'G2 freedom round 2');
    // A positive round: the site and G1 are positive, no probability of freedom is given.
    const site2 = rowWhere(summary(1), { level: 'site', assay: 'PRRSV' });
    expect(site2).toMatchObject({ freedom: 'positive', freedom_reset: 'true', positive_since: '2' });
    expect(rowWhere(summary(1), { level: 'barn', barn: 'G1', assay: 'PRRSV' }).barn_freedom).toBe('positive');
  });

  it('round 2: the positives, the positive pens, the lost rope and the prevalence', () => {
    const g1 = rowWhere(summary(1), { level: 'barn', barn: 'G1', assay: 'PRRSV' });
    // Ct 28, 30 and 32 are below the lab's positive cutoff 36; the other seven ropes are "Not Detected".
    expect(g1).toMatchObject({ tested: '10', positive: '3', negative: '7', positive_pens: 'A2 A3 B3' });
    // Every pen roped: C(8, 10) = 0, so the detection confidence is 1.
    expectClose(numberIn(g1, 'detection_confidence'), 1, PRINTED, 'G1 round 2 detection');
    // Apparent prevalence 3/10 with its exact (Clopper & Pearson 1934, Biometrika 26:404) 95 % interval:
    // the 2.5 % quantile of Beta(3, 8) and the 97.5 % quantile of Beta(4, 7) (@stdlib as the oracle).
    expectClose(numberIn(g1, 'apparent_prevalence'), 0.3, PRINTED, 'apparent prevalence');
    expectClose(numberIn(g1, 'apparent_prevalence_low95'), betaQuantile(0.025, 3, 8), PRINTED, 'lower 95 %');
    expectClose(numberIn(g1, 'apparent_prevalence_high95'), betaQuantile(0.975, 4, 7), PRINTED, 'upper 95 %');
    for (const pen of ['A2', 'A3', 'B3'])
      expect(rowWhere(summary(1), { level: 'pen', barn: 'G1', pen, assay: 'PRRSV' }).class).toBe('positive');

    // G2: four ropes hung, MEG-1123-14 (pen B3) never came back; the round's results were due by
    // 2026-11-23 + 7 days (the program's default resultGraceDays), before the clock's 2026-12-01,
    // so the rope is missing and the round complete, not awaited.
    const g2 = rowWhere(summary(1), { level: 'barn', barn: 'G2', assay: 'PRRSV' });
    expect(g2).toMatchObject({ ropes_hung: '4', ropes_returned: '3', missing_sample_ids: 'MEG-1123-14', tested: '3' });
    const site = rowWhere(summary(1), { level: 'site', assay: 'PRRSV' });
    expect(site).toMatchObject({
      pens_in_use: '18',
      results_due_on: '2026-11-30',
      ropes_hung: '14',
      ropes_returned: '13',
      missing_sample_ids: 'MEG-1123-14',
      positive: '3',
      round_state: 'complete',
    });
  });

  it('round 2: the antibody assay keeps a detection and a freedom of its own', () => {
    // G2, PRRSV-AB, rope sensitivity 0.9, n = 3 of N = 8 with d = 2: the chance that k infected
    // pens are roped is hypergeometric, each missed with probability 0.1 (Cameron & Baldock 1998):
    // 1 - [C(6,3) + C(2,1)C(6,2)(0.1) + C(2,2)C(6,1)(0.01)] / C(8,3) = 1 - (20 + 3 + 0.06)/56 = 32.94/56.
    const g2 = rowWhere(summary(1), { level: 'barn', barn: 'G2', assay: 'PRRSV-AB' });
    expect(g2).toMatchObject({ measure: 'sp-ratio', tested: '3', positive: '0', rope_sensitivity: '0.9' });
    expectClose(numberIn(g2, 'detection_confidence'), 32.94 / 56, PRINTED, 'G2 antibody detection');
    // G2's antibody chain starts in round 2 (no antibody test in round 1): 0.5 / (1 - 0.5 (32.94/56)) = 28/39.53.
    expectClose(numberIn(g2, 'barn_freedom'), 28 / 39.53, PRINTED, 'G2 antibody freedom');
    // The site's antibody chain counts round 1 as a round of sensitivity 0 (Martin et al. 2007 with
    // SSe = 0): PF stays 0.5, then 0.49 after the interval, and round 2 (only G2 tested, G1 p = 0):
    // 0.49 / (1 - (32.94/56)(0.51)) = 27.44 / 39.2006. An antibody negative never touches the PCR freedom.
    const site = rowWhere(summary(1), { level: 'site', assay: 'PRRSV-AB' });
    expectClose(numberIn(site, 'detection_confidence'), 32.94 / 56, PRINTED, 'site antibody detection');
    expectClose(numberIn(site, 'freedom'), 27.44 / 39.2006, PRINTED, 'site antibody freedom');
    // S/P 0.12, 0.31 and 0.05 are below the positive cutoff 0.4 (Kittawornrat et al. 2012).
    expect(rowWhere(summary(1), { level: 'pen', barn: 'G2', pen: 'A4', assay: 'PRRSV-AB' })).toMatchObject({
      sp: '0.31',
      class: 'negative',
    });
  });
});

describe('clusters.csv, key cells by hand', () => {
  // Join counts (Cliff & Ord 1981, Spatial Processes, ch. 2) among the ten ropes of G1 in round 2.
  // Every pen is roped and the rows share a fence line (alley 0), so each pen's two nearest ropes
  // (the pipeline's weights, ties kept) are its rook neighbours at distance 1: the weights are the
  // rook contacts of the 2 x 5 grid, 4 + 4 joins along the rows and 5 across, W = 13 joins.
  // Degrees: the 4 corner pens 2, the 6 others 3.
  it('G1 round 2: BB, its moments and its exact p-value', () => {
    const g1 = rowWhere(clusters(1), { level: 'barn', barn: 'G1', assay: 'PRRSV' });
    expect(g1).toMatchObject({ sampled: '10', positives: '3', p_method: 'exact' });
    // Positives A2, A3, B3: joins A2-A3 (along the row) and A3-B3 (across); A2-B3 is diagonal, not rook. BB = 2.
    expect(g1.bb).toBe('2');
    // Without replacement (n = 10, 3 positives): E[BB] = W * 3*2/(10*9) = 13/15.
    expectClose(numberIn(g1, 'expected_bb'), 13 / 15, PRINTED, 'E[BB]');
    // E[BB^2] = W p2 + (ordered pairs of joins sharing a pen) p3 = 13 (6/90) + 2*sum C(deg,2) (6/720),
    // sum C(deg,2) = 4*1 + 6*3 = 22, so 13/15 + 44/120 = 37/30; Var = 37/30 - (13/15)^2 = 217/450.
    expectClose(numberIn(g1, 'variance_bb'), 217 / 450, PRINTED, 'Var[BB]');
    expectClose(numberIn(g1, 'z_bb'), (2 - 13 / 15) / Math.sqrt(217 / 450), PRINTED, 'z of BB');
    // Exact p = P(BB >= 2) over the C(10,3) = 120 equally likely placements: a grid has no triangle,
    // so BB = 2 exactly for the 3-pen paths, one per pen and pair of its neighbours: 22 of 120.
    expectClose(numberIn(g1, 'p_join_count'), 22 / 120, PRINTED, 'exact join-count p');
  });

  it("G1 round 2: Moran's I on the load score and its permutation p-value against exact enumeration", () => {
    const g1 = rowWhere(clusters(1), { level: 'barn', barn: 'G1', assay: 'PRRSV' });
    // Load = cycle limit 40 - Ct: A2 12, A3 10, B3 8, the seven others 0; mean 3, so z = 9, 7, 5 and -3.
    // Sum z^2 = 81 + 49 + 25 + 7 * 9 = 218. Over the 13 rook joins, sum z_i z_j: row A
    // (-27 + 63 - 21 + 9) = 24, row B (9 - 15 - 15 + 9) = -12, across (9 - 27 + 35 + 9 + 9) = 35, so 47.
    // Moran 1950: I = (n / S0) sum_ij w_ij z_i z_j / sum z^2 = (10 / 26) (2 * 47) / 218 = 940 / 5668.
    expectClose(numberIn(g1, 'moran_i'), 940 / 5668, PRINTED, "Moran's I, G1 round 2");
    // Exact permutation p (Besag & Clifford 1989): of the 10 * 9 * 8 = 720 placements of the loads
    // 12, 10, 8 on the ten pens, 120 give I >= 940/5668 (enumerated below with the same rook joins),
    // so p = 1/6. The printed p is a Monte Carlo estimate from 999 permutations: it must lie within
    // 3.5 binomial standard errors, sqrt((1/6)(5/6)/999) = 0.0118, of 1/6.
    const rook: [number, number][] = [];
    for (let r = 0; r < 2; r++)
      for (let c = 0; c < 5; c++) {
        if (c < 4) rook.push([r * 5 + c, r * 5 + c + 1]);
        if (r === 0) rook.push([c, 5 + c]);
      }
    const moranOf = (x: number[]) => {
      const z = x.map((v) => v - x.reduce((a, b) => a + b, 0) / x.length);
      const joins = rook.reduce((s, [i, j]) => s + z[i]! * z[j]!, 0);
      return ((x.length / (2 * rook.length)) * 2 * joins) / z.reduce((s, v) => s + v * v, 0);
    };
    const observed = 940 / 5668;
    let atLeast = 0;
    let placements = 0;
    for (let a = 0; a < 10; a++)
      for (let b = 0; b < 10; b++)
        for (let c = 0; c < 10; c++) {
          if (a === b || b === c || a === c) continue;
          const x = new Array<number>(10).fill(0);
          x[a] = 12;
          x[b] = 10;
          x[c] = 8;
          placements++;
          if (moranOf(x) >= observed - 1e-9) atLeast++;
        }
    expect([atLeast, placements]).toEqual([120, 720]);
    const se = Math.sqrt(((1 / 6) * (5 / 6)) / 999);
    expect(Math.abs(numberIn(g1, 'moran_p') - 1 / 6)).toBeLessThan(3.5 * se);
  });

  it('G1 round 2: one cluster of the three neighbouring positives, and their local join counts', () => {
    const cluster = rowWhere(clusters(1), { level: 'cluster', barn: 'G1', assay: 'PRRSV' });
    // Linked at the rope spacing (1 pen: every pen roped): A2-A3 and A3-B3 are 1 apart.
    expect(cluster).toMatchObject({ cluster: '1', cluster_pens: 'A2 A3 B3', cluster_size: '3', min_ct: '28' });
    // Mean Ct (28 + 30 + 32) / 3 = 30.
    expectClose(numberIn(cluster, 'mean_ct'), 30, PRINTED, 'mean Ct');
    // Local BB (positive neighbours of a positive pen): A2 {A3} 1, A3 {A2, B3} 2, B3 {A3} 1.
    const localBB = (pen: string) => rowWhere(clusters(1), { level: 'pen', barn: 'G1', pen, assay: 'PRRSV' }).local_bb;
    expect(['A2', 'A3', 'B3'].map(localBB)).toEqual(['1', '2', '1']);
    // G2 had no positive: BB = 0, and every placement gives BB >= 0, p = 1.
    const g2 = rowWhere(clusters(1), { level: 'barn', barn: 'G2', assay: 'PRRSV' });
    expect(g2).toMatchObject({ sampled: '3', positives: '0', bb: '0' });
    expectClose(numberIn(g2, 'p_join_count'), 1, PRINTED, 'G2 join-count p');
  });
  it('round 1: no positive, and the figures every round carries', () => {
    const g1 = rowWhere(clusters(0), { level: 'barn', barn: 'G1', assay: 'PRRSV' });
    // No positive: BB = 0 in every placement, so E[BB] = 0 and p = 1.
    expect(g1).toMatchObject({ sampled: '5', positives: '0', bb: '0', expected_bb: '0' });
    expectClose(numberIn(g1, 'p_join_count'), 1, PRINTED, 'G1 round 1 join-count p');
    // Moran's I has expectation -1/(n - 1) under randomisation (Cliff & Ord 1981): n = 5 gives -1/4;
    // round 2, n = 10, gives -1/9.
    expectClose(numberIn(g1, 'moran_expected'), -1 / 4, PRINTED, 'E[I], n = 5');
    const g1Round2 = rowWhere(clusters(1), { level: 'barn', barn: 'G1', assay: 'PRRSV' });
    expectClose(numberIn(g1Round2, 'moran_expected'), -1 / 9, PRINTED, 'E[I], n = 10');
    // The hypergeometric detection beside the spread model's is the summary's: 7/9 (see above).
    expectClose(numberIn(g1, 'detection_hypergeometric'), 7 / 9, PRINTED, 'G1 round 1 detection');
  });
});

/** ISO/IEC 7064:2003 MOD 37-2 (pure system, radix 2) check character, written here from the standard. */
function mod37Check(text: string): string {
  const alphabet = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ*';
  let p = 0;
  for (const ch of text) p = (2 * (p + alphabet.indexOf(ch))) % 37;
  return alphabet[(38 - p) % 37]!;
}

describe('next-round.csv, key cells by hand', () => {
  it('sizes the negative barn by the hypergeometric rule and monitors the positive one', () => {
    const rows = rowsOf(NEXT_ROUND);
    const of = (barn: string, reason: string) =>
      rows.filter((row) => row.barn === barn && row.reason === reason).map((row) => row.pen);
    // G2 stays negative: smallest n with 1 - C(6,n)/C(8,n) >= 0.95 is 6 (see round 1 above).
    expect(rows.filter((row) => row.barn === 'G2').map((row) => row.reason)).toEqual(Array(6).fill('routine'));
    // G1 is positive since round 2 and stays so until 2 negative rounds in a row (the program's
    // default clearance rule): no routine ropes; each positive pen is roped again...
    expect(of('G1', 'routine')).toEqual([]);
    expect(of('G1', 're-rope').sort()).toEqual(['A2', 'A3', 'B3']);
    // ...and every other pen within 1.5 pen units (followUpRadius) of a positive gets a follow-up
    // rope. Pen centres (x, y): A_i at (i - 0.5, 0.5), B_i at (i - 0.5, 1.5). Within 1.5 of A2, A3
    // or B3: A1 (1), A4 (1), B2 (1), B4 (1), B1 (sqrt 2 from A2); A5 and B5 are 2 away.
    expect(of('G1', 'follow-up').sort()).toEqual(['A1', 'A4', 'B1', 'B2', 'B4']);
    // Due one interval after round 2 began: 2026-11-23 + 14 days.
    expect(new Set(rows.map((row) => row.due_date))).toEqual(new Set(['2026-12-07']));
    expect(new Set(rows.map((row) => row.site))).toEqual(new Set([SITE_ID]));
  });

  it('numbers the sample IDs of round 3 in walking order with ISO/IEC 7064 MOD 37-2 check characters', () => {
    const rows = rowsOf(NEXT_ROUND);
    // Site code MEG, round 03, sequences 001, 002, ... down the rows, skipping a sequence whose
    // check character would be I, O, L or * (they read like digits on a tube; the plan's rule).
    const expected: string[] = [];
    for (let sequence = 1; expected.length < rows.length; sequence++) {
      const body = `MEG03${String(sequence).padStart(3, '0')}`;
      const check = mod37Check(body);
      if (!'IOL*'.includes(check)) expected.push(`MEG03-${body.slice(5)}${check}`);
    }
    expect(rows.map((row) => row.sample_id)).toEqual(expected);
    // Walking order: barns as configured; up side A (position ascending), back down side B.
    const walk = (barn: string) => rows.filter((row) => row.barn === barn).map((row) => row.pen!);
    const order = (pens: string[]) => {
      const a = pens.filter((pen) => pen.startsWith('A'));
      const b = pens.filter((pen) => pen.startsWith('B'));
      const position = (pen: string) => Number(pen.slice(1));
      return [...a.sort((x, y) => position(x) - position(y)), ...b.sort((x, y) => position(y) - position(x))];
    };
    for (const barn of ['G1', 'G2']) expect(walk(barn)).toEqual(order(walk(barn)));
    expect(rows.map((row) => row.barn)).toEqual([...Array(8).fill('G1'), ...Array(6).fill('G2')]);
    // The rope list is the plan's: next-round.json names the same IDs for the same pens.
    const plan = JSON.parse(
      fs.readFileSync(path.join(workspace!.paths.outbox, SITE_ID, 'next-round.json'), 'utf8'),
    ) as { round: number; ropes: { sampleId: string; barnId: string; penId: string; reason: string }[] };
    expect(plan.round).toBe(3);
    expect(plan.ropes.map((rope) => [rope.sampleId, rope.barnId, rope.penId, rope.reason])).toEqual(
      rows.map((row) => [row.sample_id, row.barn, row.pen, row.reason]),
    );
  });
});
