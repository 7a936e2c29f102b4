/**
 * Alerts given to a configured command as one JSON line on standard input (JSON Lines,
 * jsonlines.org); exit status 0 means delivered (POSIX: 0 is success). The commands are small
 * Node scripts written by the test. Also the hooks of the CLI: `ingest` delivers after its files,
 * `report` delivers what is owed and repeats nothing.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { deliverAlerts } from '../../src/alerts/deliver.js';
import { ropeSheet } from '../../src/demo/scenario.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';
import { dropRound, RESULTS, ROPES, withSite } from './scenario.js';

const workspace = workspacesPerTest();

/**
 * A command that appends what it reads to `received.jsonl` in the config folder (its working
 * directory) and exits 0, unless a file `fail` is there: then it writes that file's text to
 * standard error and exits 3.
 */
const HOOK = `
const fs = require('node:fs');
let input = '';
process.stdin.setEncoding('utf8');
process.stdin.on('data', (chunk) => { input += chunk; });
process.stdin.on('end', () => {
  if (fs.existsSync('fail')) { process.stderr.write(fs.readFileSync('fail', 'utf8')); process.exit(3); }
  fs.appendFileSync('received.jsonl', input);
});
`;

/** A workspace whose first site gives its alerts to `command` (run in the config folder, where hook.cjs is). */
function commandWorkspace(command: string[], timeoutSeconds = 5): TestWorkspace {
  const ws = workspace(withSite((site) => (site.alerts = { command, timeoutSeconds })));
  fs.writeFileSync(path.join(ws.paths.configDir, 'hook.cjs'), HOOK);
  return ws;
}

const hookCommand = [process.execPath, 'hook.cjs'];
const received = (ws: TestWorkspace) => {
  const file = path.join(ws.paths.configDir, 'received.jsonl');
  return fs.existsSync(file)
    ? fs
        .readFileSync(file, 'utf8')
        .split('\n')
        .filter((line) => line !== '')
        .map((line) => JSON.parse(line) as Record<string, any>)
    : [];
};

describe('alerts given to a command', () => {
  it('gives each alert as one JSON line on standard input, once', async () => {
    const ws = commandWorkspace(hookCommand);
    expect(ws.config().sites[0]!.alerts?.command).toEqual([process.execPath, 'hook.cjs']);
    await dropRound(ws);
    const report = await deliverAlerts(ws.ws(), { env: {} });
    expect(report).toMatchObject({ failed: 0, waiting: 0 });
    const lines = received(ws);
    expect(lines).toHaveLength(report.recorded);
    expect(lines.find((line) => line.kind === 'first-positive')).toMatchObject({
      key: 'hollow-creek/r01-2026-08-03/PRRSV/first-positive/F1',
      site: 'hollow-creek',
      round: 1,
      assay: 'PRRSV',
      numbers: { positive: 1 },
    });
    // What the command reads is what the feed holds.
    const feed = fs
      .readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8')
      .split('\n')
      .filter((line) => line !== '')
      .map((line) => JSON.parse(line));
    expect(lines).toEqual(feed);
    await deliverAlerts(ws.ws(), { env: {} });
    expect(received(ws)).toHaveLength(report.recorded);
  });

  it('logs a failing command in one line with its status and message, and delivers on the next run', async () => {
    const ws = commandWorkspace(hookCommand);
    fs.writeFileSync(path.join(ws.paths.configDir, 'fail'), 'relay unreachable\nsecond line');
    await dropRound(ws);
    const lines: string[] = [];
    const open = { ...ws.ws(), log: (line: string) => lines.push(line) };
    const failed = await deliverAlerts(open, { env: {} });
    expect(failed).toMatchObject({ delivered: 0, failed: 1, waiting: failed.recorded });
    expect(lines).toEqual([
      expect.stringMatching(
        /^warning: alert \S+ not delivered by command \(attempt 1\): the command \S+ exited with status 3: relay unreachable; retried on the next run$/,
      ),
    ]);
    fs.rmSync(path.join(ws.paths.configDir, 'fail'));
    const next = await deliverAlerts(open, { env: {} });
    expect(next).toMatchObject({ delivered: failed.recorded, failed: 0, waiting: 0 });
    expect(new Set(received(ws).map((line) => line.key)).size).toBe(failed.recorded);
    expect(received(ws)).toHaveLength(failed.recorded);
  });

  it('stops a command that outlives the configured time and keeps its alert owed', async () => {
    const ws = commandWorkspace([process.execPath, '-e', 'setTimeout(() => {}, 60000)'], 0.5);
    await dropRound(ws);
    const lines: string[] = [];
    const started = performance.now();
    const report = await deliverAlerts({ ...ws.ws(), log: (line: string) => lines.push(line) }, { env: {} });
    expect(report).toMatchObject({ delivered: 0, failed: 1 });
    expect(lines[0]).toMatch(/did not finish within 0\.5 s and was stopped/);
    // Common practice, no source: one timeout of 0.5 s, not one per alert nor the command's 60 s.
    expect((performance.now() - started) / 1000).toBeLessThan(5);
  });

  it('tells a command that cannot be started', async () => {
    const ws = commandWorkspace(['/nonexistent/notify-vet']);
    await dropRound(ws);
    const lines: string[] = [];
    await deliverAlerts({ ...ws.ws(), log: (line: string) => lines.push(line) }, { env: {} });
    // spawn(2) of a missing file: ENOENT (POSIX errno).
    expect(lines[0]).toMatch(/the command \/nonexistent\/notify-vet cannot be run \(ENOENT\)/);
  });

  it('delivers from the CLI after ingest, and `report` repeats nothing', async () => {
    const ws = commandWorkspace(hookCommand);
    const sheet = path.join(ws.paths.inbox, 'hollow-creek_ropes.csv');
    const results = path.join(ws.paths.inbox, 'nvdl_results_2026-08-06.csv');
    fs.writeFileSync(sheet, ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, ROPES));
    fs.writeFileSync(results, RESULTS);
    const ingest = await runCli(['ingest', sheet, results, ...ws.cliFlags]);
    expect(ingest.code).toBe(0);
    const count = received(ws).length;
    expect(count).toBeGreaterThan(0);
    const feed = fs.readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8');
    const report = await runCli(['report', ...ws.cliFlags]);
    expect(report.code).toBe(0);
    expect(received(ws)).toHaveLength(count);
    expect(fs.readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8')).toBe(feed);
  });

  it('delivers from `watch` after each file, logging a failure with the time and retrying after the next file', async () => {
    const ws = commandWorkspace(hookCommand);
    fs.writeFileSync(path.join(ws.paths.configDir, 'fail'), 'relay unreachable');
    let stop!: () => void;
    const stopSignal = new Promise<void>((resolve) => (stop = resolve));
    let stderr = '';
    const running = runCli(['watch', '--stable-ms', '50', ...ws.cliFlags], {
      stopSignal,
      stderr: (text) => (stderr += text),
    });
    const waitFor = async (condition: () => boolean, label: string) => {
      const deadline = Date.now() + 30_000;
      while (!condition()) {
        if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}\n${stderr}`);
        await new Promise((resolve) => setTimeout(resolve, 20));
      }
    };
    try {
      fs.writeFileSync(
        path.join(ws.paths.inbox, 'hollow-creek_ropes.csv'),
        ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, ROPES),
      );
      await waitFor(
        () => fs.existsSync(path.join(ws.paths.inbox, 'archive', 'hollow-creek_ropes.csv')),
        'the rope sheet stored',
      );
      fs.writeFileSync(path.join(ws.paths.inbox, 'nvdl_results_2026-08-06.csv'), RESULTS);
      await waitFor(() => stderr.includes('not delivered by command'), 'the failed delivery logged');
      // One line, beginning with the time of the injected clock (ISO 8601).
      expect(stderr).toMatch(
        /^2026-12-01T12:00:00\.000Z warning: alert \S+ not delivered by command \(attempt 1\): the command \S+ exited with status 3: relay unreachable; retried on the next run$/m,
      );
      expect(received(ws)).toEqual([]);
      fs.rmSync(path.join(ws.paths.configDir, 'fail'));
      // Any next file brings the next delivery run (a duplicate of the sheet: nothing stored twice).
      fs.writeFileSync(
        path.join(ws.paths.inbox, 'again.csv'),
        ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, ROPES),
      );
      await waitFor(
        () => received(ws).some((line) => line.kind === 'first-positive'),
        'the alerts given to the command',
      );
    } finally {
      stop();
    }
    const run = await running;
    expect(run.code, run.stderr).toBe(0);
    expect(new Set(received(ws).map((line) => line.key)).size).toBe(received(ws).length);
  });
});
