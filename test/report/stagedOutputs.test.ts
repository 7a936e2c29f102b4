/**
 * Staged outputs and stray temporary files (src/report/files.ts). rename(2) replaces a file
 * atomically and fails with EISDIR over a folder (Linux rename(2) man page); kill(pid, 0) fails
 * with ESRCH for a process that no longer exists (POSIX kill()).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { removeStrayTemps, StagedOutputs } from '../../src/report/files.js';

let dirs: string[] = [];
afterEach(() => {
  for (const dir of dirs) fs.rmSync(dir, { recursive: true, force: true });
  dirs = [];
});
const tempDir = () => {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-staged-'));
  dirs.push(dir);
  return dir;
};

describe('StagedOutputs', () => {
  it('shows nothing of the new set until publish, then all of it', () => {
    const dir = tempDir();
    fs.writeFileSync(path.join(dir, 'a.csv'), 'old a\n');
    const staged = new StagedOutputs();
    staged.write(path.join(dir, 'a.csv'), 'new a\n');
    staged.write(path.join(dir, 'sub', 'b.csv'), 'new b\n');
    expect(fs.readFileSync(path.join(dir, 'a.csv'), 'utf8')).toBe('old a\n');
    expect(fs.existsSync(path.join(dir, 'sub', 'b.csv'))).toBe(false);
    staged.publish();
    expect(fs.readFileSync(path.join(dir, 'a.csv'), 'utf8')).toBe('new a\n');
    expect(fs.readFileSync(path.join(dir, 'sub', 'b.csv'), 'utf8')).toBe('new b\n');
    expect(fs.readdirSync(dir, { recursive: true, encoding: 'utf8' }).filter((name) => name.endsWith('.tmp'))).toEqual(
      [],
    );
  });

  it('swaps in no file of the set when a folder stands where one of them goes, and leaves no temp file', () => {
    const dir = tempDir();
    fs.writeFileSync(path.join(dir, 'a.csv'), 'old a\n');
    fs.mkdirSync(path.join(dir, 'next-round.csv'));
    const staged = new StagedOutputs();
    staged.write(path.join(dir, 'a.csv'), 'new a\n');
    staged.write(path.join(dir, 'next-round.csv'), 'new list\n');
    expect(() => staged.publish()).toThrow(/EISDIR/);
    staged.discard();
    expect(fs.readFileSync(path.join(dir, 'a.csv'), 'utf8')).toBe('old a\n');
    expect(fs.readdirSync(dir).filter((name) => name.endsWith('.tmp'))).toEqual([]);
  });
});

describe('removeStrayTemps', () => {
  it('removes temp files of processes that have exited, keeps those of running ones and every other file', () => {
    const dir = tempDir();
    const exited = spawnSync(process.execPath, ['-e', '0']).pid!;
    const stray = path.join(dir, 'site', `.summary.json.${exited}.3.tmp`);
    const live = path.join(dir, 'site', `.summary.json.${process.pid}.4.tmp`);
    const output = path.join(dir, 'site', 'summary.json');
    const lookalike = path.join(dir, 'site', 'notes.tmp');
    fs.mkdirSync(path.dirname(stray), { recursive: true });
    for (const file of [stray, live, output, lookalike]) fs.writeFileSync(file, 'x');
    expect(removeStrayTemps(dir)).toEqual([stray]);
    expect([live, output, lookalike].every((file) => fs.existsSync(file))).toBe(true);
  });
});
