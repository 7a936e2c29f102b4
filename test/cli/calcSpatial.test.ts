import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/runCli.js';
import { expectClose } from '../helpers/expectClose.js';

const dir = mkdtempSync(join(tmpdir(), 'ropewatch-calc-spatial-'));
function write(name: string, value: unknown): string {
  writeFileSync(join(dir, name), typeof value === 'string' ? value : JSON.stringify(value));
  return name;
}

// Row of six pens, positives at pens 2 and 3 (hand-derived check values), fence neighbours listed.
const row = [1, 2, 3, 4, 5, 6].map((p) => ({
  id: `P${p}`,
  x: p - 1,
  y: 0,
  positive: p === 2 || p === 3,
  load: p === 2 || p === 3 ? 1 : 0,
}));
const fence = Object.fromEntries(
  row.map((p, i) => [p.id, [row[i - 1]?.id, row[i + 1]?.id].filter((x): x is string => x !== undefined)]),
);

describe('ropewatch calc spatial', () => {
  it('prints the hand-derived values for a row of six pens with fence neighbours', async () => {
    const file = write('row.json', { pens: row, neighbours: fence, style: 'binary', permutations: 999, seed: 1 });
    const run = await runCli(['calc', 'spatial', '--input', file, '--json'], { cwd: dir });
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    // Cliff & Ord 1981, Spatial Processes (non-free sampling moments): BB = 1, E(BB) = 1/3, Var(BB) = 2/9;
    // exact P(BB >= 1) = 5/15 by enumeration of the C(6,2) placements.
    expect(out.joinCount.bb).toBe(1);
    expectClose(out.joinCount.expectedBB, 1 / 3, { rel: 1e-12 }, 'E(BB)');
    expectClose(out.joinCount.varianceBB, 2 / 9, { rel: 1e-12 }, 'Var(BB)');
    expectClose(out.joinCount.pPermutation, 5 / 15, { rel: 1e-12 }, 'exact p');
    expectClose(out.joinCount.zBB, 2 / 3 / Math.sqrt(2 / 9), { rel: 1e-12 }, 'zBB');
    // Moran 1950; Cliff & Ord 1981 (moments), by hand: I = 0.2, Var_normality = 0.128, E[I] = -1/(n-1) = -0.2.
    expectClose(out.moran.I, 0.2, { rel: 1e-12 }, 'I');
    expectClose(out.moran.expected, -0.2, { rel: 1e-12 }, 'E[I]');
    expectClose(out.moran.varianceNormality, 0.128, { rel: 1e-12 }, 'Var_N');
    for (const key of ['varianceRandomisation', 'zRandomisation', 'pPermutation'])
      expect(typeof out.moran[key]).toBe('number');
    // Getis & Ord 1992; Ord & Getis 1995, by hand: Gi* pen 2 = 1.581139 (self included).
    expectClose(out.localGiStar[1].z, 1.581139, { rel: 1e-6 }, 'Gi* pen 2');
    expect(out.localGiStar[1].id).toBe('P2');
    // Scan (Kulldorff 1997), hand value as in test/spatial/scan.test.ts: ln 3 + 2 ln 1.5.
    expect(out.scan.pens).toEqual(['P1', 'P2', 'P3']);
    expectClose(out.scan.llr, Math.log(3) + 2 * Math.log(1.5), { rel: 1e-12 }, 'scan LLR');
    expect(out.scan.p).toBeGreaterThan(0);
  });

  it('accepts k or band instead of neighbour lists, with the same fence joins on a unit row', async () => {
    // On unit spacing, k = 1 (ties included) and band 1 both give the fence joins: same BB moments.
    for (const extra of [{ k: 1 }, { band: 1 }]) {
      const file = write('kb.json', { pens: row, ...extra, style: 'binary', permutations: 99, seed: 2 });
      const run = await runCli(['calc', 'spatial', '--input', file, '--json'], { cwd: dir });
      expect(run.code).toBe(0);
      expectClose(
        JSON.parse(run.stdout).joinCount.varianceBB,
        2 / 9,
        { rel: 1e-12 },
        `Var(BB) ${JSON.stringify(extra)}`,
      );
    }
  });

  it('writes null, not NaN, for zero-variance z-scores and Moran I of constant loads', async () => {
    const flat = row.map((p) => ({ ...p, positive: false, load: 0 }));
    const file = write('flat.json', { pens: flat, neighbours: fence, style: 'row', permutations: 99, seed: 1 });
    const run = await runCli(['calc', 'spatial', '--input', file, '--json'], { cwd: dir });
    expect(run.code).toBe(0);
    const out = JSON.parse(run.stdout);
    expect(out.joinCount.zBB).toBeNull();
    expect(out.moran.I).toBeNull();
    expect(out.moran.zRandomisation).toBeNull();
    expect(out.localGiStar.every((g: { z: unknown }) => g.z === null)).toBe(true);
    expect(out.scan).toMatchObject({ pens: [], llr: 0, p: 1 });
    expect(run.stdout).not.toMatch(/NaN/);
  });

  it('prints a short human summary without --json', async () => {
    const file = write('human.json', { pens: row, neighbours: fence, style: 'binary', permutations: 99, seed: 1 });
    const run = await runCli(['calc', 'spatial', '--input', file], { cwd: dir });
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/join count: BB=1 /);
    expect(run.stdout).toMatch(/Moran's I: 0\.2 /);
  });

  it.each([
    ['an unknown neighbour id', { pens: row, neighbours: { P1: ['Q9'] } }, /Q9/],
    ['no pens', { pens: [] }, /pens/],
    ['one pen', { pens: [row[0]] }, /pens/],
    ['both k and band', { pens: row, k: 1, band: 2 }, /only one/],
    ['a pen without load', { pens: [{ id: 'A', x: 0, y: 0, positive: true }, row[1]] }, /load/],
    ['duplicate pen ids', { pens: [row[0], row[0]] }, /twice/],
  ])('exits 2 with a clear message for %s', async (_name, body, message) => {
    const file = write('bad.json', body);
    const run = await runCli(['calc', 'spatial', '--input', file, '--json'], { cwd: dir });
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(message);
  });

  it('exits 2 for an unreadable file or bad JSON, resolving the path against the working directory', async () => {
    const missing = await runCli(['calc', 'spatial', '--input', 'nope.json', '--json'], { cwd: dir });
    expect(missing.code).toBe(2);
    expect(missing.stderr).toContain(join(dir, 'nope.json'));
    const bad = await runCli(['calc', 'spatial', '--input', write('broken.json', '{ "pens": [ '), '--json'], {
      cwd: dir,
    });
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/not valid JSON/);
  });
});
