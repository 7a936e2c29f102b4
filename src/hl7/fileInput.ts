/**
 * A `.hl7` file from the inbox: one ORU^R01 message or a batch (FHS/BHS), read whole and stored
 * in one transaction by receive.ts, with the receipt a CSV export gets.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Receipt } from '../ingest/receipt.js';
import { emptyReceipt } from '../ingest/receipt.js';
import { receiveHl7, type ReceiveDeps } from './receive.js';

/** HL7 files are read whole: a batch bigger than this is refused (split it). */
export const HL7_FILE_MAX_BYTES = 64 * 1024 * 1024;

/** Whether a file name is an HL7 v2 message file. */
export function isHl7File(name: string): boolean {
  return /\.hl7$/i.test(name);
}

/**
 * Ingests one HL7 file. Never throws for bad input (a refused file is a receipt with status
 * `rejected`); throws `changed(why)` when the file changed while it was read (nothing stored).
 */
export function ingestHl7File(file: string, deps: ReceiveDeps, changed: (why: string) => Error): Receipt {
  const name = path.basename(file);
  let bytes: Buffer;
  try {
    const before = fs.statSync(file);
    if (before.size > HL7_FILE_MAX_BYTES)
      return refused(
        name,
        deps,
        `the file has ${before.size} bytes; HL7 files are read whole, at most ${HL7_FILE_MAX_BYTES}: split the batch`,
      );
    bytes = fs.readFileSync(file);
    const after = fs.statSync(file);
    if (
      after.size !== before.size ||
      after.mtimeMs !== before.mtimeMs ||
      after.ino !== before.ino ||
      bytes.length !== after.size
    )
      throw changed(
        `${name} changed while it was read; nothing was stored and the file stays in the inbox for the next run`,
      );
  } catch (error) {
    if (!(error as NodeJS.ErrnoException).code) throw error;
    const receipt = emptyReceipt(name, '', deps.now().toISOString());
    receipt.status = 'rejected';
    receipt.reason = {
      code: 'file-read-error',
      message: `${name}: cannot be read (${(error as NodeJS.ErrnoException).code})`,
      line: null,
      field: null,
    };
    return receipt;
  }
  return receiveHl7({ name, bytes, source: 'file' }, deps).receipt;
}

function refused(name: string, deps: ReceiveDeps, message: string): Receipt {
  const receipt = emptyReceipt(name, '', deps.now().toISOString());
  receipt.status = 'rejected';
  receipt.kind = 'results';
  receipt.reason = { code: 'malformed-message', message: `${name}: ${message}`, line: null, field: null };
  return receipt;
}
