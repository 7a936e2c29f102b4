/**
 * What a long history looks like in a round's files, and `ropewatch report` as the full rebuild:
 * ten fortnightly rounds of one pen (demo configuration, hollow-creek F1/A3, Northfield lab),
 * stored from one rope sheet and one lab file.
 */
import fs from 'node:fs';
import path from 'node:path';
import { addDays, format, parseISO } from 'date-fns';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/labFiles.js';
import { PEN_HISTORY_ROUNDS } from '../../src/analysis/summaryTypes.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
const FAST_ANALYSIS = '\nanalysis:\n  seed: 3\n  permutations: 99\n  spreadRealisations: 100\n';
const ROUNDS = 10;
const days = (n: number) => format(addDays(parseISO('2026-06-01'), n), 'yyyy-MM-dd');

/** Ten rounds, 14 days apart, a rope in F1/A3 each; Ct 30.0, 30.1, ... (all positive at the demo's cutoff 36). */
async function tenRounds(): Promise<TestWorkspace> {
  const ws = workspace();
  fs.appendFileSync(path.join(ws.paths.configDir, 'sites.yaml'), FAST_ANALYSIS);
  const ropes = Array.from({ length: ROUNDS }, (_, i) => ({
    sampleId: `HX-${i + 1}`,
    barnId: 'F1',
    penId: 'A3',
    hungOn: days(14 * i),
  }));
  const site = ws.config().siteById.get('HOLLOW-CREEK')!;
  fs.writeFileSync(path.join(ws.paths.inbox, 'ropes.csv'), ropeSheet(site, ropes));
  fs.writeFileSync(
    path.join(ws.paths.inbox, 'results.csv'),
    northfieldExport(
      ropes.map((rope, i) => ({ sampleId: rope.sampleId, assay: 'PRRSV', ct: 30 + i / 10, collectedOn: rope.hungOn })),
      days(14 * ROUNDS),
      1,
    ),
  );
  const ingest = await runCli([
    'ingest',
    path.join(ws.paths.inbox, 'ropes.csv'),
    path.join(ws.paths.inbox, 'results.csv'),
    ...ws.cliFlags,
  ]);
  expect(ingest.code, ingest.stderr).toBe(0);
  return ws;
}

const roundDirs = (ws: TestWorkspace): string[] =>
  fs
    .readdirSync(path.join(ws.paths.outbox, 'hollow-creek'))
    .filter((name) => /^r\d+-/.test(name))
    .sort();

describe('a pen with a long history', () => {
  it('shows the last eight rounds in a round summary; results.csv holds them all', async () => {
    const ws = await tenRounds();
    const dirs = roundDirs(ws);
    expect(dirs).toHaveLength(ROUNDS);
    const pen = (dir: string) =>
      (
        parse(fs.readFileSync(path.join(ws.paths.outbox, 'hollow-creek', dir, 'summary.csv'), 'utf8'), {
          columns: true,
        }) as Record<string, string>[]
      ).find((row) => row.pen === 'A3' && row.assay === 'PRRSV')!;
    expect(PEN_HISTORY_ROUNDS).toBe(8);
    // Round 10: rounds 3 to 10 (eight), each with its Ct as the export gave it.
    expect(pen(dirs[9]!).ct_history).toBe('r3:30.2 r4:30.3 r5:30.4 r6:30.5 r7:30.6 r8:30.7 r9:30.8 r10:30.9');
    // Round 4: all four so far.
    expect(pen(dirs[3]!).ct_history).toBe('r1:30 r2:30.1 r3:30.2 r4:30.3');
    const summary = JSON.parse(
      fs.readFileSync(path.join(ws.paths.outbox, 'hollow-creek', dirs[9]!, 'summary.json'), 'utf8'),
    );
    expect(summary.pens.find((entry: { penId: string }) => entry.penId === 'A3').results.PRRSV.history).toHaveLength(8);
    const results = parse(fs.readFileSync(path.join(ws.paths.outbox, 'hollow-creek', 'results.csv'), 'utf8'), {
      columns: true,
    }) as Record<string, string>[];
    expect(results.filter((row) => row.pen === 'A3').map((row) => Number(row.round))).toEqual(
      Array.from({ length: ROUNDS }, (_, i) => i + 1),
    );
  });
});

describe('ropewatch report', () => {
  it('rewrites every round, and shows progress only on a terminal', async () => {
    const ws = await tenRounds();
    const first = path.join(ws.paths.outbox, 'hollow-creek', roundDirs(ws)[0]!, 'summary.json');
    const before = fs.statSync(first).mtimeMs;
    let clock = Date.parse('2026-12-01T12:00:00Z');
    const quiet = await runCli(['report', ...ws.cliFlags]);
    expect(quiet.code, quiet.stderr).toBe(0);
    expect(quiet.stderr).toBe('');
    expect(fs.statSync(first).mtimeMs).toBeGreaterThan(before);
    const shown = await runCli(['report', ...ws.cliFlags], {
      stderrIsTerminal: true,
      // Each reading of the clock is 3 s after the one before (the first is the start).
      now: () => new Date((clock += 3000)),
    });
    expect(shown.code, shown.stderr).toBe(0);
    // The clock is read by the build too: the second site's elapsed time is later, whatever it is.
    const lines = [...shown.stderr.matchAll(/\rsite (\d) of 2 \((\S+)\), (\d+) s elapsed\x1b\[K/g)];
    expect(lines.map((line) => [line[1], line[2]])).toEqual([
      ['1', 'hollow-creek'],
      ['2', 'tamsin-ridge'],
    ]);
    expect(Number(lines[0]![3])).toBe(3);
    expect(Number(lines[1]![3])).toBeGreaterThan(3);
    expect(shown.stderr.endsWith('\n')).toBe(true);
    expect(shown.stdout).toBe('wrote hollow-creek: 10 round(s)\nwrote tamsin-ridge: 0 round(s)\n');
  });
});
