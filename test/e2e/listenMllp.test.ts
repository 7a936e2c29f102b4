/**
 * End to end: the compiled `ropewatch listen` receives the demo's HL7 file (the invented
 * Brackenridge lab's ORU^R01 message of round 2) over MLLP from a plain TCP client, answers
 * MSA|AA only once the message is in the store, answers a resend AA without storing it twice,
 * and stops cleanly on SIGTERM (exit 0). HL7 Version 2.5.1 Appendix C (MLLP framing) and
 * chapter 2 (2.9 acknowledgements); the ACK is read with node-hl7-client 3.2.0's parser.
 */
import { spawn } from 'node:child_process';
import { Message } from 'node-hl7-client';
import { describe, expect, it } from 'vitest';
import { hollowCreekRound } from '../../src/demo/scenario.js';
import { frame } from '../../src/hl7/mllp.js';
import { compiledBin, REPO_ROOT } from '../helpers/compiledCli.js';
import { lookIntoStore } from '../helpers/hardening.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { exchange } from '../hl7/mllpClient.js';

const workspace = workspacesPerTest();

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
      const stored = lookIntoStore(ws.paths.dbFile).results;
      // One influenza result per rope hung in round 2, all in the store when the ACK came.
      expect(stored).toBeGreaterThan(0);
      const again = await exchange(port, [frame(hl7!.bytes)]);
      expect(new Message({ text: again.acks[0]! }).get('MSA.1').toString()).toBe('AA');
      expect(lookIntoStore(ws.paths.dbFile).results).toBe(stored);
    } finally {
      child.kill('SIGTERM');
    }
    expect(await exited).toBe(0);
    expect(stdout).toMatch(/stopped/);
  }, 60_000);
});
