/**
 * A configuration with several problems: the CLI prints every one, each with its file and key
 * path, and exits 2 (src/cli/io.ts EXIT: usage or configuration); a watcher told of a broken
 * configuration logs them all on its one line. Cases are edits of the demo config
 * (src/demo/config); expected key paths by hand from its files.
 */
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { reloadConfiguration } from '../../src/cli/retry.js';
import type { Workspace } from '../../src/workspace.js';
import { demoText } from '../config/configCases.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const BROKEN = {
  'sites.yaml': demoText('sites.yaml')
    .replace('  designPrevalence: 0.1\n', '  designPrevalance: 0.1\n')
    .replace('rows: 2\n          pensPerRow: 24', 'rows: 7\n          pensPerRow: 24'),
  'assays.yaml': demoText('assays.yaml').replace(
    'positiveBelow: 38\n    suspectBelow: 40',
    'positiveBelow: 41\n    suspectBelow: 40',
  ),
  'labs/ostermark.yaml': demoText('labs/ostermark.yaml').replace(/^name:/m, 'nmae:'),
};

describe('several configuration problems through the CLI', () => {
  it('prints every problem with its file and key path, and exits 2', async () => {
    const ws = workspace({ configFiles: BROKEN });
    const run = await runCli(['status', ...ws.cliFlags]);
    expect(run.code).toBe(2);
    const file = (name: string) => path.join(ws.paths.configDir, name);
    const expected = [
      `${file('assays.yaml')} at assays[1].suspectBelow: must be at or above positiveBelow`,
      `${file('sites.yaml')} at programDefaults.designPrevalance: unknown key "designPrevalance": did you mean designPrevalence?`,
      `${file('sites.yaml')} at sites[0].barns[1].layout.rows: `,
      `${file('labs/ostermark.yaml')} at nmae: unknown key "nmae": did you mean name?`,
    ];
    for (const line of expected) expect(run.stderr).toContain(line);
    // The first problem heads the message; the others follow, one a line.
    expect(
      run.stderr.startsWith(`ropewatch: configuration: ${expected[0]}\nand 3 more configuration problems:\n`),
    ).toBe(true);
    expect(run.stderr.trimEnd().split('\n')).toHaveLength(5);
    expect(run.stdout).toBe('');
  });

  it('tells a watcher every problem on one log line', async () => {
    const ws = workspace({ configFiles: BROKEN });
    let stderr = '';
    const io = {
      stdout: () => {},
      stderr: (text: string) => (stderr += text),
      cwd: ws.root,
      now: () => new Date(0),
      env: {},
    };
    await reloadConfiguration({ configDir: ws.paths.configDir } as Workspace, io);
    expect(stderr.split('\n')).toEqual([
      expect.stringMatching(
        /^ropewatch: the configuration changed but cannot be loaded \(.*\); the previous configuration stays in force$/,
      ),
      '',
    ]);
    for (const key of [
      'assays[1].suspectBelow',
      'programDefaults.designPrevalance',
      'sites[0].barns[1].layout.rows',
      'at nmae',
    ])
      expect(stderr).toContain(key);
  });
});
