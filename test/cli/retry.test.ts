/**
 * Refused files read again once their cause is put right: `ropewatch retry`, and `watch`
 * reloading its configuration. The refusal comes from a typing mistake in a lab profile (the
 * lab's Ct column is "Ct Value"); expected counts are by hand from the rows written.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
const GOOD_PROFILE = fs.readFileSync(path.join(DEMO_CONFIG_DIR, 'labs', 'northfield.yaml'), 'utf8');
const WRONG_PROFILE = GOOD_PROFILE.replace('result: Ct Value', 'result: Ct Valeu');

function dropInbox(ws: TestWorkspace): { sheet: string; results: string } {
  const site = ws.config().siteById.get('HOLLOW-CREEK')!;
  const sheet = path.join(ws.paths.inbox, 'ropes.csv');
  fs.writeFileSync(
    sheet,
    ropeSheet(site, [
      { sampleId: 'RY-01', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
      { sampleId: 'RY-02', barnId: 'F1', penId: 'A4', hungOn: '2026-08-03' },
    ]),
  );
  const results = path.join(ws.paths.inbox, 'nvdl_0806.csv');
  fs.writeFileSync(
    results,
    northfieldExport(
      [
        { sampleId: 'RY-01', assay: 'PRRSV', ct: 27.5, collectedOn: '2026-08-03' },
        { sampleId: 'RY-02', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' },
      ],
      '2026-08-06',
      1,
    ),
  );
  return { sheet, results };
}

const rejectedPath = (ws: TestWorkspace, name: string) => path.join(ws.paths.inbox, 'rejected', name);
const archivedPath = (ws: TestWorkspace, name: string) => path.join(ws.paths.inbox, 'archive', name);

describe('ropewatch retry', () => {
  it('keeps a file refused while the mistake stands, and accepts it once the lab profile is put right', async () => {
    const ws = workspace({ configFiles: { 'labs/northfield.yaml': WRONG_PROFILE } });
    const { sheet, results } = dropInbox(ws);
    const first = await runCli(['ingest', sheet, results, ...ws.cliFlags]);
    expect(first.code).toBe(1);
    expect(fs.existsSync(rejectedPath(ws, 'nvdl_0806.csv'))).toBe(true);
    const firstReason = fs.readFileSync(rejectedPath(ws, 'nvdl_0806.csv.reason.txt'), 'utf8');

    // Nothing fixed yet: still refused, the file stays where it is with its reason.
    const early = await runCli(['retry', ...ws.cliFlags]);
    expect(early.code).toBe(1);
    expect(early.stdout).toContain('0 of 1 accepted now; 1 still refused');
    expect(fs.existsSync(rejectedPath(ws, 'nvdl_0806.csv'))).toBe(true);
    expect(fs.readFileSync(rejectedPath(ws, 'nvdl_0806.csv.reason.txt'), 'utf8')).toContain(
      firstReason.split('\n').find((line) => line.startsWith('code:'))!,
    );

    fs.writeFileSync(path.join(ws.paths.configDir, 'labs', 'northfield.yaml'), GOOD_PROFILE);
    const fixed = await runCli(['retry', '--json', ...ws.cliFlags]);
    expect(fixed.code, fixed.stderr).toBe(0);
    expect(JSON.parse(fixed.stdout)).toMatchObject([
      { status: 'accepted', rows: { accepted: 2 }, sites: ['hollow-creek'] },
    ]);
    expect(fs.existsSync(rejectedPath(ws, 'nvdl_0806.csv'))).toBe(false);
    expect(fs.existsSync(rejectedPath(ws, 'nvdl_0806.csv.reason.txt'))).toBe(false);
    expect(fs.existsSync(archivedPath(ws, 'nvdl_0806.csv'))).toBe(true);
    // The outputs now show the positive (Ct 27.5 < the lab's cutoff 36: positive).
    const summary = JSON.parse(
      fs.readFileSync(path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-03', 'summary.json'), 'utf8'),
    );
    expect(summary.barns.find((barn: { barnId: string }) => barn.barnId === 'F1').assays[0].positivePens).toEqual([
      'A1',
    ]);

    const nothing = await runCli(['retry', ...ws.cliFlags]);
    expect(nothing.code).toBe(0);
    expect(nothing.stdout).toContain('nothing to retry');
  });

  it('retries only the files named, and refuses a name that does not exist', async () => {
    const ws = workspace({ configFiles: { 'labs/northfield.yaml': WRONG_PROFILE } });
    const { sheet, results } = dropInbox(ws);
    await runCli(['ingest', sheet, results, ...ws.cliFlags]);
    fs.writeFileSync(path.join(ws.paths.configDir, 'labs', 'northfield.yaml'), GOOD_PROFILE);
    expect((await runCli(['retry', rejectedPath(ws, 'nope.csv'), ...ws.cliFlags])).code).toBe(2);
    const run = await runCli(['retry', rejectedPath(ws, 'nvdl_0806.csv'), ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(0);
    expect(fs.existsSync(archivedPath(ws, 'nvdl_0806.csv'))).toBe(true);
  });
});

describe('watch and a changed configuration', () => {
  it('reloads it, says so, keeps the old one when the new one is broken, and tries refused files again', async () => {
    const ws = workspace({ configFiles: { 'labs/northfield.yaml': WRONG_PROFILE } });
    dropInbox(ws);
    let stop!: () => void;
    const stopSignal = new Promise<void>((resolve) => (stop = resolve));
    let stdout = '';
    let stderr = '';
    const running = runCli(['watch', '--stable-ms', '50', ...ws.cliFlags], {
      stopSignal,
      stdout: (text) => (stdout += text),
      stderr: (text) => (stderr += text),
    });
    const waitFor = async (condition: () => boolean, label: string) => {
      const deadline = Date.now() + 15_000;
      while (!condition()) {
        if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}\n${stdout}\n${stderr}`);
        await new Promise((resolve) => setTimeout(resolve, 20));
      }
    };
    try {
      await waitFor(
        () => fs.existsSync(rejectedPath(ws, 'nvdl_0806.csv')) && fs.existsSync(archivedPath(ws, 'ropes.csv')),
        'the sheet stored and the export refused',
      );
      // A broken edit: told, and the previous configuration stays in force.
      fs.writeFileSync(path.join(ws.paths.configDir, 'labs', 'northfield.yaml'), 'id: [unclosed\n');
      await waitFor(() => stderr.includes('cannot be loaded'), 'the broken configuration reported');
      expect(stderr).toContain('previous configuration stays in force');
      // The fix: reloaded, and the refused export accepted.
      fs.writeFileSync(path.join(ws.paths.configDir, 'labs', 'northfield.yaml'), GOOD_PROFILE);
      await waitFor(() => fs.existsSync(archivedPath(ws, 'nvdl_0806.csv')), 'the refused export accepted');
      expect(stdout).toMatch(/^\d{4}-\d{2}-\d{2}T[\d:.]+Z configuration reloaded from /m);
      expect(stdout).toContain('1 accepted now, 0 still refused');
      expect(fs.existsSync(rejectedPath(ws, 'nvdl_0806.csv.reason.txt'))).toBe(false);
    } finally {
      stop();
    }
    const run = await running;
    expect(run.code, run.stderr).toBe(0);
  });
});
