/**
 * HL7 ORU^R01 files through the inbox pipeline and single messages through receiveHl7, with the
 * acknowledgement each earns. Messages are built by an independent library (node-hl7-client
 * 3.2.0, test/hl7/oracle.ts). Rules: HL7 Version 2.5.1 chapter 2 (2.9 acknowledgement codes:
 * AA accepted, AE error, AR reject; 2.10.3 batch protocol: BHS/BTS with BTS-1 the message count),
 * chapter 7 (ORU^R01). The lab profile is the demo's invented HL7 lab (labs/brackenridge.yaml).
 */
import { describe, expect, it } from 'vitest';
import { buildAck } from '../../src/hl7/ack.js';
import { segmentLines } from '../../src/hl7/parse.js';
import { receiveHl7 } from '../../src/hl7/receive.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { oracleBatch, oracleText, type OracleMessage, type OracleObservation } from './oracle.js';

const workspace = workspacesPerTest();

const IAV_POSITIVE: OracleObservation[] = [
  { code: 'BR-IAV-CT', type: 'NM', value: ['31.2'], flag: 'A' },
  { code: 'BR-IAV-RES', type: 'CWE', value: ['260373001', 'Detected', 'SCT'] },
];

function spec(
  controlId: string,
  observations: OracleObservation[] = IAV_POSITIVE,
  extra: Partial<OracleMessage> = {},
): OracleMessage {
  return {
    controlId,
    orders: [
      { sampleId: 'LAB-7781', accession: 'BR-26-0412', collected: '20260803', reported: '20260806', observations },
    ],
    ...extra,
  };
}

function receive(ws: ReturnType<typeof workspace>, text: string | Buffer) {
  const w = ws.ws();
  return receiveHl7(
    { name: 'mllp_test.hl7', bytes: typeof text === 'string' ? Buffer.from(text, 'utf8') : text, source: 'mllp' },
    { config: w.config, store: w.store, now: w.now },
  );
}

describe('HL7 result files in the inbox', () => {
  it('stores an ORU^R01 file like a CSV export: one row per assay, the Ct and the coded call of one assay together', async () => {
    const ws = workspace();
    const outcome = await ws.drop('brahl_20260806.hl7', oracleText(spec('MSG-1')));
    expect(outcome.receipt.status).toBe('accepted');
    expect(outcome.receipt.lab).toBe('brackenridge');
    expect(outcome.receipt.rows).toMatchObject({ accepted: 1, rejected: 0 });
    expect(outcome.movedTo).toContain('archive');
    expect(ws.ws().store.counts().results).toBe(1);
  });

  it('names the segment line and the field (OBX-5) of a refused observation, and stores the rest', async () => {
    const ws = workspace();
    const text = oracleText(
      spec('MSG-2', [
        { code: 'BR-IAV-CT', type: 'NM', value: ['not a number'] },
        { code: 'BR-PRRS-CT', type: 'NM', value: ['33.1'] },
      ]),
    );
    const { receipt } = await ws.drop('brahl_bad.hl7', text);
    expect(receipt.status).toBe('accepted');
    expect(receipt.rows).toMatchObject({ accepted: 1, rejected: 1 });
    // Line 3: MSH, OBR, then the first OBX.
    expect(receipt.rejectedRows[0]).toMatchObject({ code: 'bad-ct', field: 'OBX-5', line: 3 });
  });

  it('stores a re-drop once: by its bytes, and by MSH-10 when the same message comes with another header time', async () => {
    const ws = workspace();
    const text = oracleText(spec('MSG-3'));
    expect((await ws.drop('brahl_a.hl7', text)).receipt.status).toBe('accepted');
    expect((await ws.drop('brahl_b.hl7', text)).receipt.status).toBe('duplicate');
    const resent = text.replace('20260807120000', '20260808090000');
    expect(resent).not.toBe(text);
    const again = await ws.drop('brahl_c.hl7', resent);
    expect(again.receipt.status).toBe('duplicate');
    expect(again.receipt.reason?.message).toContain('MSG-3');
    expect(ws.ws().store.counts().results).toBe(1);
  });

  it('stores a BHS/BTS batch of two messages in one file', async () => {
    const ws = workspace();
    const other = spec('MSG-5', [{ code: 'BR-PRRS-CT', type: 'NM', value: ['29.4'] }]);
    const { receipt } = await ws.drop('brahl_batch.hl7', oracleBatch([spec('MSG-4'), other]));
    expect(receipt.status).toBe('accepted');
    expect(receipt.rows.accepted).toBe(2);
  });

  it('refuses a batch whose BTS-1 count does not match its messages (cut off in transit), storing nothing', async () => {
    const ws = workspace();
    const batch = oracleBatch([spec('MSG-6'), spec('MSG-7')]).replace(/BTS\|2$/, 'BTS|3');
    const { receipt, movedTo } = await ws.drop('brahl_cut.hl7', batch);
    expect(receipt.status).toBe('rejected');
    expect(receipt.reason).toMatchObject({ code: 'malformed-message', field: 'BTS' });
    expect(movedTo).toContain('rejected');
    expect(ws.ws().store.counts().results).toBe(0);
  });
});

describe('HL7 results read by the same rules as a CSV export', () => {
  it("reads the Ct with the lab's cutoffs and lists an OBX-8 call that differs (Brackenridge IAV: positive below 37, suspect below 40)", () => {
    const ws = workspace();
    const { receipt } = receive(
      ws,
      oracleText(spec('R-1', [{ code: 'BR-IAV-CT', type: 'NM', value: ['38.2'], flag: 'A' }])),
    );
    expect(receipt.rows.accepted).toBe(1);
    // 38.2 is at or above 37 and below 40: suspect by the lab's cutoffs; the flag A calls it positive.
    expect(receipt.callDisagreements).toEqual([
      expect.objectContaining({
        sampleId: 'LAB-7781',
        assayId: 'IAV',
        labCallClass: 'positive',
        resultClass: 'suspect',
        ctRaw: '38.2',
      }),
    ]);
  });

  it('lets a corrected report (OBX-11 C) replace the preliminary one (P) it corrects, keeping both', () => {
    const ws = workspace();
    receive(ws, oracleText(spec('R-2', [{ code: 'BR-IAV-CT', type: 'NM', value: ['39.1'], status: 'P' }])));
    const corrected = receive(
      ws,
      oracleText(spec('R-3', [{ code: 'BR-IAV-CT', type: 'NM', value: ['33.0'], status: 'C' }])),
    );
    expect(corrected.receipt.rows).toMatchObject({ accepted: 1, superseded: 1 });
    expect(corrected.receipt.supersessions![0]).toMatchObject({
      thisFileCurrent: true,
      replaced: expect.objectContaining({ ctRaw: '39.1' }),
      current: expect.objectContaining({ ctRaw: '33.0' }),
    });
    const counts = ws.ws().store.counts();
    expect(counts).toMatchObject({ results: 2, currentResults: 1 });
  });
});

describe('hostile messages: each refused with a coded reason and the right acknowledgement', () => {
  const good = oracleText(spec('H-1'));
  const cases: [string, () => string | Buffer, 'AE' | 'AR', string, string | undefined][] = [
    ['truncated inside MSH', () => good.slice(0, 40), 'AR', 'wrong-message-type', 'MSH'],
    [
      'truncated before its observations',
      () => good.split('\r').slice(0, 2).join('\r'),
      'AE',
      'missing-segment',
      'OBX',
    ],
    ['wrong MSH-2', () => good.replace('MSH|^~\\&|', 'MSH|^~\\|'), 'AR', 'malformed-message', 'MSH'],
    [
      'a missing SPM',
      () =>
        good
          .split('\r')
          .filter((line) => !line.startsWith('SPM'))
          .join('\r'),
      'AE',
      'missing-segment',
      'SPM',
    ],
    [
      'a huge OBX-5',
      () => oracleText(spec('H-1', [{ code: 'BR-IAV-CT', type: 'NM', value: ['9'.repeat(10_000)] }])),
      'AE',
      'field-too-long',
      'OBX',
    ],
    [
      'invalid UTF-8',
      () => Buffer.concat([Buffer.from(good.replace('LAB-7781', 'LAB-'), 'utf8'), Buffer.from([0xc3, 0x28])]),
      'AR',
      'invalid-encoding',
      undefined,
    ],
    [
      'a wrong message type (ADT^A01)',
      () => oracleText(spec('H-1', IAV_POSITIVE, { type: ['ADT', 'A01'] })),
      'AR',
      'wrong-message-type',
      'MSH',
    ],
    [
      'a training message (MSH-11 T)',
      () => oracleText(spec('H-1', IAV_POSITIVE, { processing: 'T' })),
      'AR',
      'wrong-message-type',
      'MSH',
    ],
    [
      'an unknown sender',
      () => oracleText(spec('H-1', IAV_POSITIVE, { facility: 'ELSEWHERE' })),
      'AR',
      'unknown-sender',
      'MSH',
    ],
    [
      'an observation code the profile does not map',
      () => oracleText(spec('H-1', [{ code: 'NOPE', type: 'NM', value: ['30'] }])),
      'AE',
      'unknown-assay',
      'OBX',
    ],
    [
      'a deleted result (OBX-11 D)',
      () => oracleText(spec('H-1', [{ code: 'BR-IAV-CT', type: 'NM', value: ['30'], status: 'D' }])),
      'AE',
      'unmapped-result-status',
      'OBX',
    ],
  ];
  it.each(cases)('%s', (_label, make, ack, code, segment) => {
    const ws = workspace();
    const { receipt, outcomes } = receive(ws, make());
    expect(outcomes).toHaveLength(1);
    expect(outcomes[0]!.ack).toBe(ack);
    expect(outcomes[0]!.errors[0]!.code).toBe(code);
    if (segment !== undefined) expect(outcomes[0]!.errors[0]!.location.segment).toBe(segment);
    expect(ws.ws().store.counts().results).toBe(0);
    // Nothing lost: the refused message is kept (its bytes) or its refusal stored with it.
    const counts = ws.ws().store.counts();
    expect(counts.rejectedFiles + counts.rejectedRows).toBeGreaterThan(0);
    expect(receipt.status === 'rejected' || receipt.rows.rejected > 0).toBe(true);
    const text = buildAck({
      ...outcomes[0]!,
      code: outcomes[0]!.ack,
      ackControlId: 'A1',
      now: new Date('2026-08-07T12:00:00Z'),
    });
    const lines = segmentLines(text).map((line) => line.text);
    expect(lines[1]).toMatch(new RegExp(`^MSA\\|${ack}\\|`));
    expect(lines[2]).toMatch(/^ERR\|/);
    expect(lines[2]).toContain(`${code}^^ropewatch`);
  });

  it('acknowledges a refused OBX-5 with ERR-2 naming segment, sequence and field (OBX^1^5)', () => {
    const ws = workspace();
    const { outcomes } = receive(ws, oracleText(spec('H-2', [{ code: 'BR-IAV-CT', type: 'NM', value: ['abc'] }])));
    const text = buildAck({
      ...outcomes[0]!,
      code: outcomes[0]!.ack,
      ackControlId: 'A2',
      now: new Date('2026-08-07T12:00:00Z'),
    });
    expect(text).toContain('MSA|AE|H-2\r');
    expect(text).toMatch(/\rERR\|\|OBX\^1\^5\|102\^\^HL70357\|E\|bad-ct\^\^ropewatch\|/);
    // The same bytes again: stored once, and acknowledged AE again with the same ERR, not AA.
    const again = receive(ws, oracleText(spec('H-2', [{ code: 'BR-IAV-CT', type: 'NM', value: ['abc'] }])));
    expect(again.receipt.status).toBe('duplicate');
    expect(again.outcomes[0]).toMatchObject({ ack: 'AE', repeat: true });
    expect(again.outcomes[0]!.errors[0]).toMatchObject({
      code: 'bad-ct',
      location: { segment: 'OBX', sequence: 1, field: 5 },
    });
  });

  it('acknowledges a repeat AA and stores it once', () => {
    const ws = workspace();
    const first = receive(ws, good);
    expect(first.outcomes[0]!.ack).toBe('AA');
    const second = receive(ws, good);
    expect(second.outcomes[0]).toMatchObject({ ack: 'AA', repeat: true });
    const third = receive(ws, good.replace('20260807120000', '20260807120500'));
    expect(third.outcomes[0]).toMatchObject({ ack: 'AA', repeat: true });
    expect(ws.ws().store.counts().results).toBe(1);
  });

  it('loses nothing to a crash between receipt and commit: nothing is stored, and the resend is stored once', () => {
    const ws = workspace();
    const store = ws.ws().store;
    const commit = store.commit.bind(store);
    store.commit = () => {
      throw new Error('power lost before the commit');
    };
    expect(() => receive(ws, good)).toThrow(/power lost/);
    store.commit = commit;
    expect(store.counts().results).toBe(0);
    expect(receive(ws, good).outcomes[0]!.ack).toBe('AA');
    expect(receive(ws, good).outcomes[0]!.ack).toBe('AA');
    expect(store.counts().results).toBe(1);
  });
});
