/**
 * End to end: the compiled `ropewatch listen` receives the demo's HL7 file (the invented
 * Brackenridge lab's ORU^R01 message of round 2) over MLLP from a plain TCP client, answers
 * MSA|AA only once the message is in the store, answers a resend AA without storing it twice,
 * and stops cleanly on SIGTERM (exit 0). HL7 Version 2.5.1 Appendix C (MLLP framing) and
 * chapter 2 (2.9 acknowledgements); the ACK is read with node-hl7-client 3.2.0's parser.
 */
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { Message } from 'node-hl7-client';
import { describe, expect, it } from 'vitest';
import { hollowCreekRound } from '../../src/demo/scenario.js';
import { frame } from '../../src/hl7/mllp.js';
import { compiledBin, REPO_ROOT } from '../helpers/compiledCli.js';
import { lookIntoStore } from '../helpers/hardening.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { exchange } from '../hl7/mllpClient.js';

const workspace = workspacesPerTest();

/** Starts the compiled CLI and resolves once its stdout matches `ready` (with the match). */
function startCli(args: string[], ready: RegExp) {
  const child = spawn(process.execPath, [compiledBin(), ...args], {
    cwd: REPO_ROOT,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  const out = { stdout: '', stderr: '' };
  child.stderr!.on('data', (chunk: Buffer) => (out.stderr += chunk.toString()));
  // Collected before any pattern looks at it (listeners run in the order they were added).
  child.stdout!.on('data', (chunk: Buffer) => (out.stdout += chunk.toString()));
  const exited = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
  const waitFor = (pattern: RegExp) =>
    new Promise<RegExpExecArray>((resolve, reject) => {
      const look = () => {
        const found = pattern.exec(out.stdout);
        if (found) resolve(found);
      };
      child.stdout!.on('data', look);
      child.on('close', () => reject(new Error(`${args[0]} ended early: ${out.stderr}`)));
      look();
    });
  return { child, out, exited, ready: waitFor(ready), waitFor };
}

describe('ropewatch listen over MLLP (compiled)', () => {
  it('stores the demo HL7 file sent over MLLP, acknowledges it AA after the commit, and stops on SIGTERM', async () => {
    const ws = workspace();
    const drops = await hollowCreekRound(ws.config(), 1, []);
    const hl7 = drops.find((drop) => drop.name.endsWith('.hl7'));
    expect(hl7, 'the demo drops an HL7 file in round 2').toBeDefined();
    const child = spawn(process.execPath, [compiledBin(), 'listen', '--port', '0', ...ws.cliFlags], {
      cwd: REPO_ROOT,
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let stdout = '';
    let stderr = '';
    child.stderr!.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
    const exited = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
    const port = await new Promise<number>((resolve, reject) => {
      child.stdout!.on('data', (chunk: Buffer) => {
        stdout += chunk.toString();
        const found = /listening for MLLP on 127\.0\.0\.1:(\d+)/.exec(stdout);
        if (found) resolve(Number(found[1]));
      });
      child.on('close', () => reject(new Error(`listen ended early: ${stderr}`)));
    });
    try {
      const first = await exchange(port, [frame(hl7!.bytes)]);
      const ack = new Message({ text: first.acks[0]! });
      expect(ack.get('MSH.9.1').toString()).toBe('ACK');
      expect(ack.get('MSA.1').toString()).toBe('AA');
      expect(ack.get('MSA.2').toString()).toBe('BRAHL-20260820-001');
      const stored = lookIntoStore(ws.paths.db).results;
      // One influenza result per rope hung in round 2, all in the store when the ACK came.
      expect(stored).toBeGreaterThan(0);
      const again = await exchange(port, [frame(hl7!.bytes)]);
      expect(new Message({ text: again.acks[0]! }).get('MSA.1').toString()).toBe('AA');
      expect(lookIntoStore(ws.paths.db).results).toBe(stored);
    } finally {
      child.kill('SIGTERM');
    }
    expect(await exited).toBe(0);
    expect(stdout).toMatch(/stopped/);
  }, 60_000);
});

describe('ropewatch listen beside ropewatch watch on the same store', () => {
  it('stores a message over MLLP and a file dropped in the inbox while both run, each once', async () => {
    const ws = workspace();
    const drops = await hollowCreekRound(ws.config(), 1, []);
    const hl7 = drops.find((drop) => drop.name.endsWith('.hl7'))!;
    const csv = drops.find((drop) => drop.name.startsWith('nvdl_prrsv'))!;
    const listen = startCli(['listen', '--port', '0', ...ws.cliFlags], /listening for MLLP on 127\.0\.0\.1:(\d+)/);
    // The listener first: it creates the store (two processes creating one store at the same moment would both migrate it).
    const port = Number((await listen.ready)[1]);
    const watch = startCli(['watch', '--stable-ms', '200', ...ws.cliFlags], /watching /);
    try {
      await watch.ready;
      fs.writeFileSync(path.join(ws.paths.inbox, csv.name), csv.bytes);
      const { acks } = await exchange(port, [frame(hl7.bytes)]);
      expect(new Message({ text: acks[0]! }).get('MSA.1').toString()).toBe('AA');
      await watch.waitFor(/accepted/);
      const look = lookIntoStore(ws.paths.db);
      expect(look.integrity).toBe('ok');
      expect(Object.keys(look.resultsByFile).sort()).toEqual([csv.name, 'mllp_BRAHL_BRAHL-20260820-001.hl7'].sort());
    } finally {
      listen.child.kill('SIGTERM');
      watch.child.kill('SIGTERM');
    }
    expect(await listen.exited).toBe(0);
    expect(await watch.exited).toBe(0);
  }, 90_000);
});
