/**
 * MLLP framing (HL7 Version 2.5.1, Appendix C "Lower layer protocols", minimal lower layer
 * protocol, and HL7 MLLP release 2): each message travels as a start block 0x0B, the message's
 * bytes, an end block 0x1C and a carriage return 0x0D. Bytes outside a frame are skipped.
 */

export const START_BLOCK = 0x0b;
export const END_BLOCK = 0x1c;
export const CARRIAGE_RETURN = 0x0d;

/** A frame over this many bytes is not read (the limit is told, the frame skipped). */
export const MAX_FRAME_BYTES = 16 * 1024 * 1024;

/** The bytes of one message, framed for the wire. */
export function frame(message: string | Buffer): Buffer {
  const body = typeof message === 'string' ? Buffer.from(message, 'utf8') : message;
  return Buffer.concat([Buffer.from([START_BLOCK]), body, Buffer.from([END_BLOCK, CARRIAGE_RETURN])]);
}

/** What the decoder found in the bytes so far. */
export type FrameEvent = { kind: 'frame'; bytes: Buffer } | { kind: 'too-large'; bytes: number };

/**
 * Reassembles frames from a byte stream that TCP may cut anywhere. Push chunks as they come;
 * each call returns the frames (and oversized frames, dropped) completed by that chunk.
 */
export class FrameDecoder {
  private parts: Buffer[] = [];
  private size = 0;
  private inFrame = false;
  /** Skipping the rest of an oversized frame. */
  private skipping = false;
  private skipped = 0;
  /** The last byte was an end block (the carriage return may come in the next chunk). */
  private pendingEnd = false;

  constructor(private readonly maxBytes = MAX_FRAME_BYTES) {}

  push(chunk: Buffer): FrameEvent[] {
    const events: FrameEvent[] = [];
    for (let at = 0; at < chunk.length; at++) {
      const byte = chunk[at]!;
      if (this.pendingEnd) {
        this.pendingEnd = false;
        if (byte === CARRIAGE_RETURN) {
          this.finish(events);
          continue;
        }
        // An end block inside the message is data after all.
        this.append(Buffer.from([END_BLOCK]));
      }
      if (!this.inFrame) {
        if (byte === START_BLOCK) {
          this.inFrame = true;
          this.parts = [];
          this.size = 0;
          this.skipping = false;
          this.skipped = 0;
        }
        continue;
      }
      if (byte === END_BLOCK) {
        this.pendingEnd = true;
        continue;
      }
      // Copy the run of message bytes up to the next end block in one go.
      let end = chunk.indexOf(END_BLOCK, at);
      if (end === -1) end = chunk.length;
      this.append(chunk.subarray(at, end));
      at = end - 1;
    }
    return events;
  }

  private append(bytes: Buffer): void {
    if (this.skipping) {
      this.skipped += bytes.length;
      return;
    }
    if (this.size + bytes.length > this.maxBytes) {
      this.skipping = true;
      this.skipped = this.size + bytes.length;
      this.parts = [];
      this.size = 0;
      return;
    }
    this.parts.push(Buffer.from(bytes));
    this.size += bytes.length;
  }

  private finish(events: FrameEvent[]): void {
    this.inFrame = false;
    if (this.skipping) events.push({ kind: 'too-large', bytes: this.skipped });
    else events.push({ kind: 'frame', bytes: Buffer.concat(this.parts, this.size) });
    this.parts = [];
    this.size = 0;
    this.skipping = false;
  }

  /** Bytes of a frame begun and not yet ended (a peer that closed mid-message). */
  get partial(): number {
    return this.inFrame ? this.size + this.skipped : 0;
  }
}
