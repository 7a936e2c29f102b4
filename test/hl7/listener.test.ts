/**
 * The MLLP listener in-process: each message stored in its own transaction and acknowledged only
 * after its commit (HL7 Version 2.5.1 chapter 2, 2.9 original acknowledgement mode: MSA-1 AA, AE,
 * AR; MSA-2 the message's MSH-10). Acknowledgements are read back with an independent library's
 * parser (node-hl7-client 3.2.0).
 */
import { Message } from 'node-hl7-client';
import { describe, expect, it } from 'vitest';
import { startListener, type RunningListener } from '../../src/hl7/listener.js';
import { frame } from '../../src/hl7/mllp.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { exchange } from './mllpClient.js';
import { oracleText, type OracleMessage } from './oracle.js';

const workspace = workspacesPerTest();

const spec = (controlId: string, extra: Partial<OracleMessage> = {}): OracleMessage => ({
  controlId,
  orders: [
    {
      sampleId: 'LAB-9001',
      accession: 'BR-26-0001',
      collected: '20260803',
      reported: '20260806',
      observations: [{ code: 'BR-PRRS-CT', type: 'NM', value: ['28.7'] }],
    },
  ],
  ...extra,
});

async function listen(ws: ReturnType<typeof workspace>, lines: string[] = []): Promise<RunningListener> {
  const w = ws.ws();
  return startListener({
    host: '127.0.0.1',
    port: 0,
    deps: { config: w.config, store: w.store, now: w.now },
    log: (line) => lines.push(line),
  });
}

const msa = (ack: string) => {
  const parsed = new Message({ text: ack });
  return {
    code: parsed.get('MSA.1').toString(),
    control: parsed.get('MSA.2').toString(),
    type: parsed.get('MSH.9.1').toString(),
  };
};

describe('ropewatch listen (in-process)', () => {
  it('acknowledges a stored message AA with its control ID, a repeat AA again, and stores it once', async () => {
    const ws = workspace();
    const listener = await listen(ws);
    try {
      const text = oracleText(spec('L-1'));
      const first = await exchange(listener.port, [frame(text), frame(text)]);
      expect(first.acks.map(msa)).toEqual([
        { code: 'AA', control: 'L-1', type: 'ACK' },
        { code: 'AA', control: 'L-1', type: 'ACK' },
      ]);
      expect(ws.ws().store.counts().results).toBe(1);
    } finally {
      await listener.close();
    }
  });

  it('answers AR to a message of the wrong type and AE with ERR to a refused OBX, on the same connection', async () => {
    const ws = workspace();
    const listener = await listen(ws);
    try {
      const wrong = oracleText(spec('L-2', { type: ['ADT', 'A01'] }));
      const bad = oracleText({
        ...spec('L-3'),
        orders: [{ ...spec('L-3').orders[0]!, observations: [{ code: 'BR-PRRS-CT', type: 'NM', value: ['0.0.1'] }] }],
      });
      const { acks } = await exchange(listener.port, [frame(wrong), frame(bad)]);
      expect(acks.map(msa).map((ack) => ack.code)).toEqual(['AR', 'AE']);
      expect(acks[0]).toContain('wrong-message-type^^ropewatch');
      const err = new Message({ text: acks[1]! });
      expect(err.get('ERR.2.1').toString()).toBe('OBX');
      expect(err.get('ERR.2.3').toString()).toBe('5');
    } finally {
      await listener.close();
    }
  });

  it('never acknowledges a message whose commit failed: the connection closes, and the resend is stored once', async () => {
    const ws = workspace();
    const store = ws.ws().store;
    const commit = store.commit.bind(store);
    let failures = 1;
    store.commit = () => {
      if (failures-- > 0) throw new Error('disk gone before the commit');
      commit();
    };
    const lines: string[] = [];
    const listener = await listen(ws, lines);
    try {
      const text = oracleText(spec('L-4'));
      const lost = await exchange(listener.port, [frame(text)]);
      expect(lost).toEqual({ acks: [], closedEarly: true });
      expect(store.counts().results).toBe(0);
      expect(lines.join('\n')).toMatch(/not acknowledged/);
      const resent = await exchange(listener.port, [frame(text)]);
      expect(resent.acks.map(msa)[0]!.code).toBe('AA');
      const again = await exchange(listener.port, [frame(text)]);
      expect(again.acks.map(msa)[0]!.code).toBe('AA');
      expect(store.counts().results).toBe(1);
    } finally {
      await listener.close();
    }
  });

  it('refuses a frame over the size limit with AR and goes on with the next', async () => {
    const ws = workspace();
    const w = ws.ws();
    const listener = await startListener({
      host: '127.0.0.1',
      port: 0,
      deps: { config: w.config, store: w.store, now: w.now },
      log: () => undefined,
      maxFrameBytes: 1000,
    });
    try {
      const { acks } = await exchange(listener.port, [frame('x'.repeat(5000)), frame(oracleText(spec('L-5')))]);
      // (The library's parser takes "MSH|" inside ERR-2 for a second message, so MSA-1 is read here by position.)
      expect(acks.map((ack) => /\rMSA\|([A-Z]{2})\|/.exec(ack)?.[1])).toEqual(['AR', 'AA']);
      expect(acks[0]).toContain('malformed-message^^ropewatch');
    } finally {
      await listener.close();
    }
  });
});
