/**
 * `ropewatch demo` writes its configuration only into a config folder that is absent, empty, or
 * holds nothing but files the demo wrote; a hand-written profile makes it stop with exit 2
 * (src/cli/io.ts EXIT) naming the folder, before it removes anything, with or without --force.
 * Common practice, no source: a tool never deletes a person's files to show a demonstration.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { DEMO_CONFIG_MARK, guardConfig } from '../../src/demo/runDemo.js';
import { openStore } from '../../src/store/openStore.js';
import { runCli } from '../helpers/runCli.js';
import { treeHashes, workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const HAND_WRITTEN = `# our own lab, written by hand
id: valley-lab
name: Valley Lab
fileNamePattern: '^valley_'
`;

describe('demo and a configuration it did not write', () => {
  it('keeps a hand-written labs/x.yaml in an empty-store workspace and says why it stops, also with --force', async () => {
    const ws = workspace();
    fs.writeFileSync(path.join(ws.paths.configDir, 'labs', 'x.yaml'), HAND_WRITTEN);
    // An empty store (created, no files): the store guard alone lets the demo through.
    openStore(ws.paths.storeLocation).close();
    fs.writeFileSync(path.join(ws.paths.inbox, 'waiting.csv'), 'sample_id,site,barn,pen,hung_on\n');
    const before = treeHashes(ws.root);
    for (const extra of [[], ['--force']]) {
      const run = await runCli(['demo', ...ws.cliFlags, ...extra]);
      expect(run.code, run.stderr).toBe(2);
      expect(run.stderr).toContain(ws.paths.configDir);
      expect(run.stderr).toContain('labs/x.yaml');
      expect(run.stderr).toMatch(/did not write/);
      expect(run.stderr).toContain('--config');
      expect(run.stdout).toBe('');
    }
    // Nothing was touched: the profile, the store, the inbox, the outbox.
    expect(fs.readFileSync(path.join(ws.paths.configDir, 'labs', 'x.yaml'), 'utf8')).toBe(HAND_WRITTEN);
    expect(treeHashes(ws.root)).toEqual(before);
  });

  it('refuses a demo file a person edited', () => {
    const ws = workspace();
    const sites = path.join(ws.paths.configDir, 'sites.yaml');
    fs.appendFileSync(sites, '# our barns\n');
    expect(() => guardConfig(ws.paths.configDir)).toThrow(/sites\.yaml/);
  });

  it('lets the demo write into a folder that is absent, empty, holds only README.md, or only its own files', () => {
    const ws = workspace();
    expect(() => guardConfig(path.join(ws.root, 'absent'))).not.toThrow();
    const empty = path.join(ws.root, 'empty');
    fs.mkdirSync(empty);
    expect(() => guardConfig(empty)).not.toThrow();
    fs.writeFileSync(path.join(empty, 'README.md'), 'Put your configuration here.\n');
    expect(() => guardConfig(empty)).not.toThrow();
    // The test workspace's config is a byte copy of the demo's.
    expect(() => guardConfig(ws.paths.configDir)).not.toThrow();
  });

  it("recognises files an earlier demo wrote by the hashes it recorded, not only today's bytes", () => {
    const ws = workspace();
    const labs = path.join(ws.paths.configDir, 'labs');
    // An older demo's profile: other bytes than today's, recorded in the mark.
    const older = 'id: old-demo-lab\n';
    fs.writeFileSync(path.join(labs, 'retired.yaml'), older);
    expect(() => guardConfig(ws.paths.configDir)).toThrow(/labs\/retired\.yaml/);
    fs.writeFileSync(
      path.join(ws.paths.configDir, DEMO_CONFIG_MARK),
      JSON.stringify({ 'labs/retired.yaml': createHash('sha256').update(older).digest('hex') }),
    );
    expect(() => guardConfig(ws.paths.configDir)).not.toThrow();
  });

  it('a config path that is a file is refused', () => {
    const ws = workspace();
    const file = path.join(ws.root, 'config.yaml');
    fs.writeFileSync(file, 'x: 1\n');
    expect(() => guardConfig(file)).toThrow(/not a configuration folder/);
    expect(fs.readFileSync(file, 'utf8')).toBe('x: 1\n');
  });
});
