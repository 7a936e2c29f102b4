/**
 * One drop through the whole pipeline: ingest into the store (one transaction), write its
 * receipt, move the file (archive/ or rejected/ with a .reason.txt), then rewrite the outputs of
 * the sites it touched from the committed store. The file moves only after the store has
 * committed: a crash before that leaves it in the inbox, and the content hash makes the retry
 * safe. Outputs come last and show committed data only; if they cannot be written the store
 * remembers that they are behind, and the next run rebuilds them.
 */
import fs from 'node:fs';
import path from 'node:path';
import { FileStillChangingError, ingestFile, type Receipt } from './ingest/ingestFile.js';
import { OutputError, regenerateOutputs } from './outputs.js';
import { disagreementLines, type ReceiptDisagreements } from './report/callDisagreements.js';
import { writeFileAtomic, writeJson } from './report/files.js';
import type { Workspace } from './workspace.js';

export const ARCHIVE_DIR = 'archive';
export const REJECTED_DIR = 'rejected';

/** A destination path that does not overwrite an earlier file of the same name. */
function freeDestination(dir: string, name: string, sha256: string): string {
  const target = path.join(dir, name);
  if (!fs.existsSync(target)) return target;
  const ext = path.extname(name);
  return path.join(dir, `${path.basename(name, ext)}.${sha256.slice(0, 8)}${ext}`);
}

function moveFile(from: string, to: string): void {
  fs.mkdirSync(path.dirname(to), { recursive: true });
  try {
    fs.renameSync(from, to);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code !== 'EXDEV') throw error;
    fs.copyFileSync(from, to);
    fs.rmSync(from);
  }
}

export function receiptText(receipt: Receipt & ReceiptDisagreements): string {
  const lines = [
    `ropewatch receipt for ${receipt.file}`,
    `status: ${receipt.status}${receipt.kind !== 'unknown' ? ` (${receipt.kind}${receipt.lab ? `, lab ${receipt.lab}` : ''})` : ''}`,
    `received: ${receipt.receivedAt}`,
    `sha256: ${receipt.sha256}`,
  ];
  if (receipt.encoding) lines.push(`encoding: ${receipt.encoding}`);
  if (receipt.reason) lines.push('', `reason: ${receipt.reason.message}`, `code: ${receipt.reason.code}`);
  if (receipt.status === 'accepted') {
    lines.push('', `rows stored: ${receipt.rows.accepted}, refused: ${receipt.rows.rejected}, already stored: ${receipt.rows.duplicate}, superseding earlier reports: ${receipt.rows.superseded}`);
  }
  if (receipt.rejectedRows.length > 0) {
    lines.push('', 'refused rows (kept in the store with their reason):');
    for (const row of receipt.rejectedRows) lines.push(`  line ${row.line}${row.field ? `, ${row.field}` : ''}: [${row.code}] ${row.message}${row.value ? ` (value ${JSON.stringify(row.value)})` : ''}`);
    if (receipt.rejectedRowsNotListed > 0) lines.push(`  ... and ${receipt.rejectedRowsNotListed} more`);
  }
  if (receipt.unresolvedSampleIds.length > 0) {
    lines.push(
      '',
      `samples not yet on any rope sheet (kept; they resolve when the sheet arrives): ${receipt.unresolvedSampleIds.join(', ')}` +
        (receipt.unresolvedNotListed > 0 ? `, and ${receipt.unresolvedNotListed} more` : ''),
    );
  }
  if (receipt.resolvedSampleIds.length > 0) lines.push('', `earlier results now placed in their pens: ${receipt.resolvedSampleIds.join(', ')}`);
  lines.push(...disagreementLines(receipt));
  for (const warning of receipt.warnings) lines.push(`note: ${warning}`);
  return lines.join('\n') + '\n';
}

export interface ProcessOutcome {
  receipt: Receipt;
  movedTo: string;
  /** Set when the file was stored but the outputs of its sites could not be written. */
  outputError?: OutputError;
}

/**
 * Processes one inbox file end to end.
 * @throws FileStillChangingError when the file changed while it was read: nothing stored, the
 *   file stays where it is for the next run.
 */
export async function processFile(ws: Workspace, file: string): Promise<ProcessOutcome> {
  const receipt = await ingestFile(file, { config: ws.config, store: ws.store, now: ws.now });
  const name = path.basename(file);
  const stamp = receipt.sha256.slice(0, 8) || 'unread';
  try {
    writeJson(path.join(ws.outbox, 'receipts', `${name}.${stamp}.receipt.json`), receipt);
    writeFileAtomic(path.join(ws.outbox, 'receipts', `${name}.${stamp}.receipt.txt`), receiptText(receipt));
  } catch (error) {
    // The store has committed; the receipt is a courtesy copy of what the store holds.
    ws.log(`warning: receipt for ${name} could not be written (${(error as Error).message})`);
  }
  const inboxOf = path.dirname(file);
  let movedTo = file;
  if (fs.existsSync(file)) {
    if (receipt.status === 'rejected') {
      movedTo = freeDestination(path.join(inboxOf, REJECTED_DIR), name, receipt.sha256 || stamp);
      moveFile(file, movedTo);
      writeFileAtomic(`${movedTo}.reason.txt`, receiptText(receipt));
    } else {
      movedTo = freeDestination(path.join(inboxOf, ARCHIVE_DIR), name, receipt.sha256);
      moveFile(file, movedTo);
    }
  }
  if (receipt.status !== 'accepted' || receipt.sites.length === 0) return { receipt, movedTo };
  try {
    regenerateOutputs(ws, receipt.sites);
  } catch (error) {
    if (error instanceof OutputError) return { receipt, movedTo, outputError: error };
    throw error;
  }
  return { receipt, movedTo };
}

export { FileStillChangingError, OutputError };
