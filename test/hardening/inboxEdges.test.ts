/**
 * The inbox's edges through `ropewatch ingest` and `watch` in-process (src/cli/main.ts): file
 * names at the 255-byte limit, a plain file where archive/ or rejected/ must go, files named
 * from outside the inbox, a re-drop, symbolic links, and names and cells carrying terminal
 * control characters. Exit codes are src/cli/io.ts EXIT (0 ok, 1 input refused, 2 usage).
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import type { Receipt } from '../../src/ingest/ingestFile.js';
import { processFile } from '../../src/pipeline.js';
import { openWorkspace } from '../../src/workspace.js';
import { lookIntoStore } from '../helpers/hardening.js';
import { runCli } from '../helpers/runCli.js';
import { FIXED_NOW, workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

/** NAME_MAX: the longest file name in bytes on Linux file systems (POSIX <limits.h>; 255 from memory). */
const NAME_MAX = 255;
const bytes = (text: string) => Buffer.byteLength(text, 'utf8');
const INVOICE = 'Invoice,Client\nINV-1,Someone\n';

function writeAt(file: string, content: Buffer | string): string {
  fs.mkdirSync(path.dirname(file), { recursive: true });
  fs.writeFileSync(file, content);
  return file;
}
const inboxFile = (ws: TestWorkspace, name: string, content: Buffer | string) =>
  writeAt(path.join(ws.paths.inbox, name), content);
const list = (dir: string) => (fs.existsSync(dir) ? fs.readdirSync(dir).sort() : []);
const receiptsOf = (ws: TestWorkspace) => list(path.join(ws.paths.outbox, 'receipts'));
const readReceipts = (ws: TestWorkspace): Receipt[] =>
  receiptsOf(ws)
    .filter((name) => name.endsWith('.json'))
    .map((name) => JSON.parse(fs.readFileSync(path.join(ws.paths.outbox, 'receipts', name), 'utf8')) as Receipt);

const sheet = (ws: TestWorkspace) =>
  ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, [
    { sampleId: 'C1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
    { sampleId: 'C2', barnId: 'F1', penId: 'A2', hungOn: '2026-08-03' },
  ]);

describe('file names at the 255-byte limit', () => {
  it('refuses a file with a 230-character name with its reason and receipts, and goes on with the next file', async () => {
    const ws = workspace();
    const longName = `nvdl_${'r'.repeat(221)}.csv`; // 230 bytes
    const bad = inboxFile(ws, longName, INVOICE);
    const good = inboxFile(ws, 'ropes.csv', sheet(ws));
    const run = await runCli(['ingest', bad, good, ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(1);
    expect(run.stderr).not.toMatch(/ENAMETOOLONG|warning/);
    expect(run.stdout).toContain('accepted ropes.csv');
    const rejected = list(path.join(ws.paths.inbox, 'rejected'));
    expect(rejected).toHaveLength(2);
    const reason = rejected.find((name) => name.endsWith('.reason.txt'))!;
    expect(rejected).toContain(reason.slice(0, -'.reason.txt'.length));
    expect(fs.readFileSync(path.join(ws.paths.inbox, 'rejected', reason), 'utf8')).toContain(
      `ropewatch receipt for ${longName}`,
    );
    expect(list(path.join(ws.paths.inbox, 'archive'))).toEqual(['ropes.csv']);
    expect(receiptsOf(ws)).toHaveLength(4);
    expect(
      readReceipts(ws)
        .map((receipt) => receipt.file)
        .sort(),
    ).toEqual([longName, 'ropes.csv'].sort());
    for (const name of [...rejected, ...receiptsOf(ws)]) expect(bytes(name)).toBeLessThanOrEqual(NAME_MAX);
    expect(fs.readdirSync(ws.paths.inbox).sort()).toEqual(['archive', 'rejected']);
  });

  it('gives an accepted file with a 222-character name its receipts, and one named in 84 multibyte characters (244 bytes) too', async () => {
    const ws = workspace();
    const ascii = `${'a'.repeat(218)}.csv`; // 222 bytes
    const euros = `${'€'.repeat(80)}.csv`; // '€' is 3 bytes in UTF-8 (RFC 3629): 84 characters, 244 bytes
    const first = inboxFile(ws, ascii, sheet(ws));
    const second = inboxFile(
      ws,
      euros,
      ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, [
        { sampleId: 'C3', barnId: 'F1', penId: 'A3', hungOn: '2026-08-03' },
      ]),
    );
    const run = await runCli(['ingest', first, second, ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stderr).toBe('');
    expect(receiptsOf(ws)).toHaveLength(4);
    expect(
      readReceipts(ws)
        .map((receipt) => receipt.file)
        .sort(),
    ).toEqual([ascii, euros].sort());
    for (const name of receiptsOf(ws)) expect(bytes(name)).toBeLessThanOrEqual(NAME_MAX);
    expect(list(path.join(ws.paths.inbox, 'archive'))).toEqual([ascii, euros].sort());
  });
});

describe('a plain file where inbox/archive or inbox/rejected must go', () => {
  it.each(['archive', 'rejected'])(
    'ingest and watch refuse to start (exit 2) naming inbox/%s, and store nothing',
    async (dir) => {
      const ws = workspace();
      writeAt(path.join(ws.paths.inbox, dir), 'not a folder\n');
      const file = inboxFile(ws, 'ropes.csv', sheet(ws));
      const run = await runCli(['ingest', file, ...ws.cliFlags]);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain(path.join(ws.paths.inbox, dir));
      expect(run.stderr).toMatch(/not a folder.*rename or move/);
      expect(run.stderr.trim().split('\n')).toHaveLength(1);
      expect(lookIntoStore(ws.paths.db).files).toEqual([]);
      expect(fs.existsSync(file)).toBe(true);
      const watch = await runCli(['watch', ...ws.cliFlags], { stopSignal: Promise.resolve() });
      expect(watch.code).toBe(2);
      expect(watch.stderr).toContain(path.join(ws.paths.inbox, dir));
      expect(lookIntoStore(ws.paths.db).files).toEqual([]);
    },
  );

  it('does not crash when the folder cannot be made after the commit: the file stays in the inbox and one line says why', async () => {
    const ws = workspace();
    const lines: string[] = [];
    const open = openWorkspace(
      ws.paths,
      () => FIXED_NOW,
      (line) => lines.push(line),
    );
    try {
      const file = inboxFile(ws, 'ropes.csv', sheet(ws));
      // Made after any start-up check could see it (a watcher running for days).
      writeAt(path.join(ws.paths.inbox, 'archive'), 'not a folder\n');
      const { receipt, movedTo } = await processFile(open, file);
      expect(receipt.status).toBe('accepted');
      expect(movedTo).toBe(file);
      expect(fs.existsSync(file)).toBe(true);
      expect(lines).toHaveLength(1);
      expect(lines[0]).toContain(path.join(ws.paths.inbox, 'archive'));
      expect(lines[0]).toMatch(/rename/);
      expect(open.store.counts().files).toBe(1);
    } finally {
      open.close();
    }
  });
});

describe('files named from outside the inbox', () => {
  it('go to the inbox archive/ and rejected/, not to folders beside them', async () => {
    const ws = workspace();
    const elsewhere = path.join(ws.root, 'downloads');
    const good = writeAt(path.join(elsewhere, 'ropes.csv'), sheet(ws));
    const bad = writeAt(path.join(elsewhere, 'nvdl_invoice.csv'), INVOICE);
    const run = await runCli(['ingest', good, bad, ...ws.cliFlags]);
    expect(run.code).toBe(1);
    expect(list(path.join(ws.paths.inbox, 'archive'))).toEqual(['ropes.csv']);
    expect(list(path.join(ws.paths.inbox, 'rejected'))).toEqual(['nvdl_invoice.csv', 'nvdl_invoice.csv.reason.txt']);
    expect(list(elsewhere)).toEqual([]);
  });
});

describe('a re-drop of the same bytes', () => {
  it('is a duplicate with the refusal code duplicate-file and a message, and exits 0', async () => {
    const ws = workspace();
    const bytesOfSheet = sheet(ws);
    expect((await runCli(['ingest', inboxFile(ws, 'ropes.csv', bytesOfSheet), ...ws.cliFlags])).code).toBe(0);
    const again = await runCli(['ingest', inboxFile(ws, 'ropes-again.csv', bytesOfSheet), ...ws.cliFlags, '--json']);
    expect(again.code, again.stderr).toBe(0);
    const [receipt] = JSON.parse(again.stdout) as Receipt[];
    expect(receipt!.status).toBe('duplicate');
    expect(receipt!.reason).toMatchObject({ code: 'duplicate-file', message: expect.stringContaining('ropes.csv') });
  });
});

describe('symbolic links', () => {
  it('a link to a regular file is read; the link is archived and its target left alone', async () => {
    const ws = workspace();
    const target = writeAt(path.join(ws.root, 'exports', 'ropes.csv'), sheet(ws));
    const link = path.join(ws.paths.inbox, 'ropes-link.csv');
    fs.symlinkSync(target, link);
    const run = await runCli(['ingest', link, ...ws.cliFlags]);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout).toContain('accepted ropes-link.csv');
    expect(fs.lstatSync(path.join(ws.paths.inbox, 'archive', 'ropes-link.csv')).isSymbolicLink()).toBe(true);
    expect(fs.existsSync(target)).toBe(true);
  });
});

describe('control characters in names and cells', () => {
  it('reach the terminal and the text receipts escaped, and the JSON receipt raw', async () => {
    const ws = workspace();
    // ESC [ 2 J clears the screen, ESC ] 0 ; ... BEL sets the window title (ECMA-48 CSI ED; the OSC
    // title sequence is common practice, no source); U+009B is the 8-bit CSI (ECMA-48 5.3).
    const name = 'nvdl_\u001b[2J\u001b]0;owned\u0007_\u009b31m.csv';
    const sample = 'X\u001b[1A\u001b[2KY';
    const file = inboxFile(
      ws,
      name,
      northfieldExport([{ sampleId: sample, assay: 'PRRSV', ct: 31, collectedOn: '2026-08-03' }], '2026-08-06', 1),
    );
    const bad = inboxFile(ws, 'nvdl_\r\u001b[Kok.csv', INVOICE);
    const run = await runCli(['ingest', file, bad, ...ws.cliFlags]);
    const status = await runCli(['status', ...ws.cliFlags]);
    const unsafe = /[\u0000-\u0009\u000b-\u001f\u007f-\u009f]/; // every C0 but LF, DEL, C1
    for (const text of [run.stdout, run.stderr, status.stdout]) expect(text).not.toMatch(unsafe);
    expect(run.stdout).toContain('nvdl_\\x1b[2J\\x1b]0;owned\\x07_\\x9b31m.csv');
    expect(run.stdout).toContain('nvdl_\\r\\x1b[Kok.csv');
    expect(status.stdout).toContain('X\\x1b[1A\\x1b[2KY');
    const texts = receiptsOf(ws).filter((entry) => entry.endsWith('.txt'));
    expect(texts).toHaveLength(2);
    for (const entry of texts)
      expect(fs.readFileSync(path.join(ws.paths.outbox, 'receipts', entry), 'utf8')).not.toMatch(unsafe);
    const reason = list(path.join(ws.paths.inbox, 'rejected')).find((entry) => entry.endsWith('.reason.txt'))!;
    expect(fs.readFileSync(path.join(ws.paths.inbox, 'rejected', reason), 'utf8')).not.toMatch(unsafe);
    const raw = readReceipts(ws).find((receipt) => receipt.status === 'accepted')!;
    expect(raw.file).toBe(name);
    expect(raw.unresolvedSampleIds).toEqual([sample]);
  });
});
