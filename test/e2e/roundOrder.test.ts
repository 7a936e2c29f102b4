/**
 * The usual order of events through the pipeline: a round comes back with a positive, the next
 * round's rope sheet arrives on the day the ropes were hung, and its results days later. The
 * sheet alone raises no missing-rope alert and gives no detection figure; the next plan keeps the
 * follow-ups and retests of the last round with results; once the grace period has passed
 * without results the ropes are missing, in words whose numbers add up. Expected values are by
 * hand from the files written below (demo configuration: hollow-creek, intervalDays 14,
 * default resultGraceDays 7).
 */
import fs from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import type { Site } from '../../src/config/types.js';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { regenerateSite, type SiteAnalysis } from '../../src/outputs.js';
import { processFile } from '../../src/pipeline.js';
import { roundAlerts } from '../../src/report/html/alerts.js';
import { openWorkspace } from '../../src/workspace.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const ROUND_1 = [
  { sampleId: 'HC-1102-F1-01', barnId: 'F1', penId: 'A1', hungOn: '2026-11-02' },
  { sampleId: 'HC-1102-F1-02', barnId: 'F1', penId: 'A4', hungOn: '2026-11-02' },
  { sampleId: 'HC-1102-F1-03', barnId: 'F1', penId: 'B7', hungOn: '2026-11-02' },
  { sampleId: 'HC-1102-F1-04', barnId: 'F1', penId: 'A10', hungOn: '2026-11-02' },
];
const ROUND_1_RESULTS = northfieldExport(
  [
    // Ct 28.4 < 36: positive; 37.1 in [36, 40): suspect (the demo profile's Northfield cutoffs).
    { sampleId: 'HC-1102-F1-01', assay: 'PRRSV', ct: 28.4, collectedOn: '2026-11-02' },
    { sampleId: 'HC-1102-F1-02', assay: 'PRRSV', ct: null, collectedOn: '2026-11-02' },
    { sampleId: 'HC-1102-F1-03', assay: 'PRRSV', ct: 37.1, collectedOn: '2026-11-02' },
    { sampleId: 'HC-1102-F1-04', assay: 'PRRSV', ct: null, collectedOn: '2026-11-02' },
  ],
  '2026-11-05',
  1,
);

type Clocked = {
  at: (iso: string) => void;
  drop: (name: string, bytes: Buffer) => Promise<void>;
  analyse: () => SiteAnalysis;
  close: () => void;
  outbox: string;
  site: Site;
};

/** A workspace whose clock the test sets. */
function clockedWorkspace(): Clocked {
  const made = workspace();
  let clock = new Date('2026-11-06T08:00:00Z');
  const ws = openWorkspace(
    made.paths,
    () => clock,
    () => {},
  );
  return {
    at: (iso) => {
      clock = new Date(iso);
    },
    drop: async (name, bytes) => {
      const file = path.join(made.paths.inbox, name);
      fs.writeFileSync(file, bytes);
      const { receipt } = await processFile(ws, file);
      expect(receipt.status).toBe('accepted');
    },
    analyse: () => regenerateSite(ws, made.config().siteById.get('HOLLOW-CREEK')!, { full: true }),
    close: () => ws.close(),
    outbox: made.paths.outbox,
    site: made.config().siteById.get('HOLLOW-CREEK')!,
  };
}

const extraRopes = (analysis: SiteAnalysis) =>
  analysis.plan.ropes
    .filter((rope) => rope.reason !== 'routine')
    .map((rope) => `${rope.barnId} ${rope.penId} ${rope.reason}`)
    .sort();

describe('a rope sheet that arrives before its results', () => {
  it('awaits its results, keeps the plan, and has missing ropes only after the grace period', async () => {
    const run = clockedWorkspace();
    try {
      const site = run.site;
      await run.drop('hollow-creek_ropes_2026-11-02.csv', ropeSheet(site, ROUND_1));
      await run.drop('nvdl_results_2026-11-05.csv', ROUND_1_RESULTS);
      const afterRound1 = run.analyse();
      const followUps = extraRopes(afterRound1);
      // By hand: a positive in F1 A1 draws follow-up ropes around it, the suspect B7 a retest.
      expect(followUps.some((entry) => entry.endsWith('follow-up'))).toBe(true);
      expect(followUps).toContain('F1 B7 retest');

      // The farm hangs the planned ropes on their due date (2026-11-02 + 14) and sends the sheet that day.
      const hung = afterRound1.plan.ropes.map((rope) => ({
        sampleId: rope.sampleId,
        barnId: rope.barnId,
        penId: rope.penId,
        hungOn: '2026-11-16',
      }));
      expect(afterRound1.plan.dueDate).toBe('2026-11-16');
      run.at('2026-11-16T17:00:00Z');
      await run.drop('hollow-creek_ropes_2026-11-16.csv', ropeSheet(site, hung));
      const awaiting = run.analyse();
      const round2 = awaiting.summaries[1]!;
      // By hand: results due 2026-11-16 + 7 = 2026-11-23.
      expect(round2.round).toMatchObject({ number: 2, state: 'awaiting-results', resultsDueOn: '2026-11-23' });
      expect(round2.barns.flatMap((barn) => barn.missingSampleIds)).toEqual([]);
      expect(round2.barns.reduce((sum, barn) => sum + barn.awaitingSampleIds.length, 0)).toBe(hung.length);
      expect(
        roundAlerts(awaiting.summaries, awaiting.spatial, 1, awaiting.plan).map((alert) => alert.kind),
      ).not.toContain('missing-ropes');
      // No detection figure yet: the round is neither evidence of freedom nor a missed round.
      expect(awaiting.confidence[1]).toMatchObject({ barns: [], sites: [] });
      expect(round2.assays).toEqual([]);
      // The plan keeps the follow-ups and retests of round 1, the last round with results.
      expect(extraRopes(awaiting)).toEqual(followUps);
      expect(awaiting.plan.notes.join(' ')).toContain(
        'Round 2 is awaiting its results (due by 2026-11-23): follow-up and retest ropes come from round 1',
      );

      const roundDir = path.join(run.outbox, 'hollow-creek', 'r02-2026-11-16');
      const page = fs.readFileSync(path.join(roundDir, 'summary.html'), 'utf8');
      expect(page).toContain('Awaiting results, due by 2026-11-23');
      expect(page).not.toContain('without a result');
      const json = JSON.parse(fs.readFileSync(path.join(roundDir, 'summary.json'), 'utf8'));
      expect(json.round).toMatchObject({ state: 'awaiting-results', resultsDueOn: '2026-11-23' });
      const rows = parse(fs.readFileSync(path.join(roundDir, 'summary.csv'), 'utf8'), { columns: true }) as Record<
        string,
        string
      >[];
      const siteRow = rows.find((row) => row.level === 'site')!;
      expect(siteRow).toMatchObject({
        round_state: 'awaiting-results',
        results_due_on: '2026-11-23',
        ropes_hung: String(hung.length),
        ropes_returned: '0',
        missing_sample_ids: '',
      });

      // The last day of the grace period still awaits; the day after, the ropes are missing.
      run.at('2026-11-23T20:00:00Z');
      expect(run.analyse().summaries[1]!.round.state).toBe('awaiting-results');
      run.at('2026-11-24T08:00:00Z');
      const late = run.analyse();
      expect(late.summaries[1]!.round.state).toBe('complete');
      expect(late.summaries[1]!.barns.flatMap((barn) => barn.missingSampleIds).sort()).toEqual(
        hung.map((rope) => rope.sampleId).sort(),
      );
      const missingAlerts = roundAlerts(late.summaries, late.spatial, 1, late.plan).filter(
        (alert) => alert.kind === 'missing-ropes',
      );
      expect(missingAlerts.length).toBeGreaterThan(0);
      for (const alert of missingAlerts) {
        const barn = late.summaries[1]!.barns.find((entry) => entry.barnId === alert.barnId)!;
        // The words add up: returned + missing = ropes on sheets or plans.
        expect(alert.message).toContain(
          `${barn.missingSampleIds.length} rope${barn.missingSampleIds.length === 1 ? '' : 's'} in barn ${barn.barnId} without a result`,
        );
        expect(alert.message).toContain(`0 of ${barn.missingSampleIds.length} ropes on sheets or plans came back`);
      }
      // A round that brought nothing back proves nothing: 0 detection, and freedom decays over it.
      expect(late.confidence[1]!.sites.map((entry) => entry.detectionConfidence)).toEqual([0]);
      expect(extraRopes(late)).toEqual(followUps);
    } finally {
      run.close();
    }
  });
});

describe('ropewatch status after a rope sheet dated today', () => {
  it('names the last round as awaiting results, with no rope missing', async () => {
    // The in-process CLI's clock reads 2026-12-01 (test/helpers/runCli.ts).
    const ws = workspace();
    const ropes = ROUND_1.map((rope) => ({
      ...rope,
      sampleId: rope.sampleId.replace('1102', '1201'),
      hungOn: '2026-12-01',
    }));
    fs.writeFileSync(
      path.join(ws.paths.inbox, 'hollow-creek_ropes_2026-12-01.csv'),
      ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, ropes),
    );
    expect(
      (await runCli(['ingest', path.join(ws.paths.inbox, 'hollow-creek_ropes_2026-12-01.csv'), ...ws.cliFlags])).code,
    ).toBe(0);
    const status = JSON.parse((await runCli(['status', '--json', ...ws.cliFlags])).stdout);
    // By hand: results due 2026-12-01 + 7 = 2026-12-08.
    expect(status.sites.find((site: { site: string }) => site.site === 'hollow-creek')).toMatchObject({
      lastRound: { id: 'r01-2026-12-01', state: 'awaiting-results', resultsDueOn: '2026-12-08' },
      missingRopesLastRound: [],
    });
    expect((await runCli(['status', ...ws.cliFlags])).stdout).toContain(
      'last r01-2026-12-01 (awaiting results, due by 2026-12-08)',
    );
  });
});
