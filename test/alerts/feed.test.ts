/**
 * The alert feed (outbox/alerts.jsonl): one JSON object a line (JSON Lines, jsonlines.org), once
 * per alert however often the outputs are rebuilt. Expected alerts and numbers are by hand from
 * the rows written (test/alerts/scenario.ts) and the demo's PRRSV cutoffs (positive below Ct 36,
 * suspect below 40).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { deliverAlerts } from '../../src/alerts/deliver.js';
import { workspaceDeliveryStateFile } from '../../src/alerts/deliveryState.js';
import { feedKeys } from '../../src/alerts/feed.js';
import { alertKey } from '../../src/alerts/records.js';
import { regenerateOutputs } from '../../src/outputs.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { ropeSheet } from '../../src/demo/scenario.js';
import { dropRound, ROPES } from './scenario.js';

const workspace = workspacesPerTest();
const feedOf = (outbox: string) =>
  fs
    .readFileSync(path.join(outbox, 'alerts.jsonl'), 'utf8')
    .split('\n')
    .filter((line) => line !== '')
    .map((line) => JSON.parse(line) as Record<string, any>);

/** `text` as a regular expression that matches it literally. */
const escapeRegExp = (text: string) => text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');

describe('alert feed', () => {
  it('appends each alert of a round once, with its site, round, assay, kind, message and numbers', async () => {
    const ws = workspace();
    await dropRound(ws);
    const report = await deliverAlerts(ws.ws(), { env: {} });
    const feed = feedOf(ws.paths.outbox);
    expect(report).toMatchObject({ appended: feed.length, failed: 0, busy: false });
    const kinds = feed.map((line) => `${line.kind}/${line.assay ?? '-'}/${line.barn ?? '-'}`);
    // By hand: Ct 28.4 < 36 is the site's first PRRSV positive; 37.1 in [36, 40) is suspect;
    // HC-0803-F3-01 has no result.
    expect(kinds).toEqual(
      expect.arrayContaining(['first-positive/PRRSV/F1', 'suspect/PRRSV/F1', 'missing-ropes/-/F3']),
    );
    const first = feed.find((line) => line.kind === 'first-positive')!;
    expect(first).toMatchObject({
      key: 'hollow-creek/r01-2026-08-03/PRRSV/first-positive/F1',
      site: 'hollow-creek',
      round: 1,
      roundId: 'r01-2026-08-03',
      assay: 'PRRSV',
      seenAt: '2026-12-01T12:00:00.000Z',
    });
    expect(first.message).toEqual(expect.any(String));
    // By hand: three results in F1, one positive; F3's rope never came back.
    expect(first.numbers).toMatchObject({ tested: 3, positive: 1 });
    // A site positive for a PCR assay is not free: it has a status, not a probability of freedom.
    expect(first.numbers.freedom).toBeNull();
    expect(feed.find((line) => line.kind === 'missing-ropes')!.numbers).toMatchObject({
      ropesHung: 1,
      ropesReturned: 0,
      missingRopes: 1,
    });
    expect(new Set(feed.map((line) => line.key)).size).toBe(feed.length);
  });

  it('appends nothing again when the outputs are rebuilt (catch-up, changed configuration, report)', async () => {
    const ws = workspace();
    await dropRound(ws);
    await deliverAlerts(ws.ws(), { env: {} });
    const before = fs.readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8');
    regenerateOutputs(ws.ws());
    regenerateOutputs(ws.ws(), ['hollow-creek']);
    const again = await deliverAlerts(ws.ws(), { env: {} });
    expect(again).toMatchObject({ recorded: 0, appended: 0 });
    expect(fs.readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8')).toBe(before);
  });

  it('appends no line twice when the delivery record was lost after the feed was written', async () => {
    const ws = workspace();
    await dropRound(ws);
    await deliverAlerts(ws.ws(), { env: {} });
    const before = fs.readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8');
    // A crash between appending and recording it leaves the alerts owed to the feed.
    fs.rmSync(workspaceDeliveryStateFile(ws.paths));
    const again = await deliverAlerts(ws.ws(), { env: {} });
    expect(again.recorded).toBeGreaterThan(0);
    expect(again.appended).toBe(0);
    expect(fs.readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8')).toBe(before);
  });

  it('ends a line cut short by a crash before appending, so that every new line stands alone', async () => {
    const ws = workspace();
    await dropRound(ws);
    fs.writeFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), '{"key":"cut sh');
    await deliverAlerts(ws.ws(), { env: {} });
    const lines = fs.readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8').split('\n');
    expect(lines[0]).toBe('{"key":"cut sh');
    expect(() =>
      lines
        .slice(1)
        .filter((line) => line !== '')
        .map((line) => JSON.parse(line)),
    ).not.toThrow();
  });

  it('leaves the alerts owed when the feed cannot be written, logs one line, and appends them on the next run', async () => {
    const ws = workspace();
    await dropRound(ws);
    const feed = path.join(ws.paths.outbox, 'alerts.jsonl');
    fs.mkdirSync(feed);
    const lines: string[] = [];
    const open = { ...ws.ws(), log: (line: string) => lines.push(line) };
    const failed = await deliverAlerts(open, { env: {} });
    expect(failed.appended).toBe(0);
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(
      /^warning: \d+ alert\(s\) not appended to .*alerts\.jsonl \(.*\); retried on the next run$/,
    );
    fs.rmdirSync(feed);
    const next = await deliverAlerts(open, { env: {} });
    expect(next.appended).toBe(failed.recorded);
    expect(feedKeys(fs.readFileSync(feed, 'utf8')).size).toBe(failed.recorded);
  });

  it('delivers nothing while another live process holds the delivery lock', async () => {
    const ws = workspace();
    await dropRound(ws);
    // This process's own pid is a live process (kill(2) with signal 0 finds it).
    fs.writeFileSync(`${workspaceDeliveryStateFile(ws.paths)}.lock`, String(process.pid));
    expect(await deliverAlerts(ws.ws(), { env: {} })).toMatchObject({ busy: true, appended: 0 });
    expect(fs.existsSync(path.join(ws.paths.outbox, 'alerts.jsonl'))).toBe(false);
  });

  it('keeps a damaged delivery record aside, says so in one line, and still appends nothing twice', async () => {
    const ws = workspace();
    await dropRound(ws);
    await deliverAlerts(ws.ws(), { env: {} });
    const before = fs.readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8');
    const state = workspaceDeliveryStateFile(ws.paths);
    fs.writeFileSync(state, '{"schema": "ropewatch.alert-deliveries/1", "alerts": {');
    const lines: string[] = [];
    const again = await deliverAlerts({ ...ws.ws(), log: (line: string) => lines.push(line) }, { env: {} });
    expect(lines).toEqual([
      expect.stringMatching(
        new RegExp(
          `${escapeRegExp(state)} cannot be read \\(.*\\); moved to ${escapeRegExp(path.basename(state))}\\.damaged, starting a new delivery record$`,
        ),
      ),
    ]);
    expect(fs.readFileSync(`${state}.damaged`, 'utf8')).toContain('"alerts": {');
    expect(again.appended).toBe(0);
    expect(fs.readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8')).toBe(before);
  });

  it('takes over a lock left by a process that is gone', async () => {
    const ws = workspace();
    await dropRound(ws);
    // The pid of a process that has exited (kill(2) with signal 0 then fails with ESRCH).
    const gone = spawnSync(process.execPath, ['-e', '0']).pid!;
    fs.writeFileSync(`${workspaceDeliveryStateFile(ws.paths)}.lock`, String(gone));
    const report = await deliverAlerts(ws.ws(), { env: {} });
    expect(report.busy).toBe(false);
    expect(report.appended).toBeGreaterThan(0);
    expect(fs.existsSync(`${workspaceDeliveryStateFile(ws.paths)}.lock`)).toBe(false);
  });

  it('takes no missing-rope alert from a rope sheet whose results have not come back yet', async () => {
    const ws = workspace();
    await ws.drop('hollow-creek_ropes.csv', ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, ROPES));
    await deliverAlerts(ws.ws(), { env: {} });
    const early = fs.existsSync(path.join(ws.paths.outbox, 'alerts.jsonl')) ? feedOf(ws.paths.outbox) : [];
    // The pages say "0 of 3 hung ropes came back" for F1 at this point: true, but not news.
    expect(early.filter((line) => line.kind === 'missing-ropes')).toEqual([]);
    await dropRound(ws);
    await deliverAlerts(ws.ws(), { env: {} });
    // By hand: once F1's results are back, F3's one rope is missing, and F1's are not.
    expect(
      feedOf(ws.paths.outbox)
        .filter((line) => line.kind === 'missing-ropes')
        .map((line) => line.barn),
    ).toEqual(['F3']);
  });

  it('builds keys from site, round id, assay, kind and subject', () => {
    // Common practice, no source: a key of the parts that name an alert, "-" for a part it lacks.
    expect(alertKey('s', 'r01-2026-08-03', null, 'late-round', null)).toBe('s/r01-2026-08-03/-/late-round/-');
    expect(alertKey('s', 'r02-2026-08-17', 'IAV', 'suspect', 'F2')).toBe('s/r02-2026-08-17/IAV/suspect/F2');
  });
});
