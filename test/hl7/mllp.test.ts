/**
 * MLLP framing: HL7 Version 2.5.1 Appendix C (minimal lower layer protocol) and HL7 MLLP
 * release 2: <VT 0x0B> message <FS 0x1C><CR 0x0D>. TCP may cut the stream anywhere, so frames are
 * reassembled across chunks; bytes outside a frame are skipped.
 */
import { MLLPCodec } from 'node-hl7-client';
import { describe, expect, it } from 'vitest';
import { FrameDecoder, frame } from '../../src/hl7/mllp.js';
import { oracleText } from './oracle.js';

const message = oracleText({
  controlId: 'F-1',
  orders: [
    {
      sampleId: 'S-1',
      accession: 'A-1',
      collected: '20260803',
      reported: '20260806',
      observations: [{ code: 'BR-IAV-CT', type: 'NM', value: ['30.5'] }],
    },
  ],
});

describe('MLLP framing', () => {
  it('frames a message as 0x0B, the bytes, 0x1C 0x0D', () => {
    const framed = frame('MSH|x');
    expect([...framed]).toEqual([0x0b, ...Buffer.from('MSH|x'), 0x1c, 0x0d]);
  });

  it('reads our frames the same way the independent library frames them (node-hl7-client MLLPCodec)', () => {
    const codec = new MLLPCodec();
    expect(codec.receiveData(frame(message))).toBe(true);
    expect(codec.getLastMessage()).toBe(message);
    const ours = new FrameDecoder().push(frame(message));
    expect(ours).toEqual([{ kind: 'frame', bytes: Buffer.from(message, 'utf8') }]);
  });

  it('reassembles frames cut at every byte boundary, with junk before them and two frames in one chunk', () => {
    const stream = Buffer.concat([Buffer.from('junk\r\n'), frame(message), frame(message.replace('F-1', 'F-2'))]);
    for (let cut = 1; cut < stream.length; cut++) {
      const decoder = new FrameDecoder();
      const events = [...decoder.push(stream.subarray(0, cut)), ...decoder.push(stream.subarray(cut))];
      expect(
        events.map((event) => (event.kind === 'frame' ? event.bytes.toString() : 'too-large')),
        `cut at ${cut}`,
      ).toEqual([message, message.replace('F-1', 'F-2')]);
    }
  });

  it('keeps an 0x1C not followed by a carriage return as data', () => {
    const body = Buffer.from([0x41, 0x1c, 0x42]);
    expect(new FrameDecoder().push(frame(body))).toEqual([{ kind: 'frame', bytes: body }]);
  });

  it('drops a frame over the size limit and reads the next one', () => {
    const decoder = new FrameDecoder(100);
    const events = decoder.push(Buffer.concat([frame('x'.repeat(500)), frame('small')]));
    expect(events).toEqual([
      { kind: 'too-large', bytes: 500 },
      { kind: 'frame', bytes: Buffer.from('small') },
    ]);
  });
});
