/**
 * Entries of the inbox that are not regular files: a FIFO (mkfifo(1)), a Unix-domain socket
 * (net.Server.listen(path), Node documentation "IPC support"), a folder, a link to a FIFO. Opening
 * a FIFO for reading blocks until a writer opens it (POSIX open(), O_RDONLY without O_NONBLOCK;
 * fifo(7)), so `ingest` must refuse such entries from their stat, not by reading them. Expected:
 * a rejected receipt with code `not-a-regular-file`, exit 1, the entry left where it is, the
 * other files processed.
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import type { Receipt } from '../../src/ingest/ingestFile.js';
import { processWorkspace, spawnCli } from '../helpers/hardening.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
const ROPES = 'sample_id,site,barn,pen,hung_on\nC1,HOLLOW-CREEK,F1,A1,2026-08-03\n';

let root: string;
beforeAll(() => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-special-'));
});
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));

const servers: net.Server[] = [];
afterEach(async () => {
  await Promise.all(servers.splice(0).map((server) => new Promise((resolve) => server.close(resolve))));
});

async function listenOn(socketPath: string): Promise<void> {
  const server = net.createServer();
  servers.push(server);
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(socketPath, resolve);
  });
}

function receiptsIn(outbox: string): Receipt[] {
  const dir = path.join(outbox, 'receipts');
  return fs
    .readdirSync(dir)
    .filter((name) => name.endsWith('.json'))
    .map((name) => JSON.parse(fs.readFileSync(path.join(dir, name), 'utf8')) as Receipt);
}

describe('special files named to ingest', () => {
  it('refuses a FIFO at once instead of waiting for a writer, leaves it in place and processes the next file', async () => {
    // A child process: a hang must not take the test runner with it.
    const ws = processWorkspace(root, 'fifo');
    const fifo = path.join(ws.paths.inbox, 'nvdl_pipe.csv');
    execFileSync('mkfifo', [fifo]);
    const good = path.join(ws.paths.inbox, 'ropes.csv');
    fs.writeFileSync(good, ROPES);
    const { child, done } = spawnCli(['ingest', fifo, good, ...ws.flags, '--json']);
    const timer = setTimeout(() => child.kill('SIGKILL'), 30_000);
    const run = await done.finally(() => clearTimeout(timer));
    expect(run.signal, 'killed after 30 s: ingest waited on the FIFO').toBeNull();
    expect(run.code, run.stderr).toBe(1);
    const receipts = JSON.parse(run.stdout) as Receipt[];
    expect(receipts.map((receipt) => [receipt.file, receipt.status, receipt.reason?.code ?? null])).toEqual([
      ['nvdl_pipe.csv', 'rejected', 'not-a-regular-file'],
      ['ropes.csv', 'accepted', null],
    ]);
    expect(receipts[0]!.reason!.message).toMatch(/FIFO/);
    expect(fs.lstatSync(fifo).isFIFO()).toBe(true);
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'archive'))).toEqual(['ropes.csv']);
    expect(
      receiptsIn(ws.paths.outbox)
        .map((receipt) => receipt.reason?.code ?? null)
        .sort(),
    ).toEqual(['not-a-regular-file', null]);
  });

  it('refuses a Unix socket, a folder and a link to a FIFO with not-a-regular-file and leaves them where they are', async () => {
    const ws = workspace();
    const socket = path.join(ws.paths.inbox, 'nvdl_socket.csv');
    await listenOn(socket);
    const folder = path.join(ws.paths.inbox, 'nvdl_folder.csv');
    fs.mkdirSync(folder);
    const fifo = path.join(ws.root, 'pipe');
    execFileSync('mkfifo', [fifo]);
    const link = path.join(ws.paths.inbox, 'nvdl_link.csv');
    fs.symlinkSync(fifo, link);
    const run = await runCli(['ingest', socket, folder, link, ...ws.cliFlags, '--json']);
    expect(run.code, run.stderr).toBe(1);
    const receipts = JSON.parse(run.stdout) as Receipt[];
    expect(receipts.map((receipt) => receipt.reason?.code)).toEqual([
      'not-a-regular-file',
      'not-a-regular-file',
      'not-a-regular-file',
    ]);
    expect(receipts.map((receipt) => receipt.reason!.message)).toEqual([
      expect.stringMatching(/a socket/),
      expect.stringMatching(/a folder/),
      expect.stringMatching(/a symbolic link to a FIFO/),
    ]);
    expect(fs.lstatSync(socket).isSocket()).toBe(true);
    expect(fs.lstatSync(folder).isDirectory()).toBe(true);
    expect(fs.lstatSync(link).isSymbolicLink()).toBe(true);
    expect(fs.existsSync(path.join(ws.paths.inbox, 'rejected'))).toBe(false);
  });
});
