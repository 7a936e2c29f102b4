/**
 * One drop through the whole pipeline: ingest into the store, rewrite the outputs of the sites it
 * touched, then move the file (archive/ or rejected/ with a .reason.txt) and write its receipt.
 * The file moves only after the store has committed: a crash before that leaves it in the inbox,
 * and the content hash makes the retry safe.
 */
import fs from 'node:fs';
import path from 'node:path';
import { RECEIPTS_FOLDER } from './config/names.js';
import { ingestFile, OutputError, type Receipt } from './ingest/ingestFile.js';
import { regenerateOutputs } from './outputs.js';
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

export function receiptText(receipt: Receipt): string {
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
  for (const warning of receipt.warnings) lines.push(`note: ${warning}`);
  return lines.join('\n') + '\n';
}

export interface ProcessOutcome {
  receipt: Receipt;
  movedTo: string;
}

/**
 * Processes one inbox file end to end.
 * @throws OutputError when outputs cannot be written: nothing stored, the file stays where it is.
 */
export async function processFile(ws: Workspace, file: string): Promise<ProcessOutcome> {
  const receipt = await ingestFile(file, {
    config: ws.config,
    store: ws.store,
    now: ws.now,
    regenerate: (siteIds) => {
      regenerateOutputs(ws, siteIds);
    },
  });
  const name = path.basename(file);
  const stamp = receipt.sha256.slice(0, 8) || 'unread';
  try {
    writeJson(path.join(ws.outbox, RECEIPTS_FOLDER, `${name}.${stamp}.receipt.json`), receipt);
    writeFileAtomic(path.join(ws.outbox, RECEIPTS_FOLDER, `${name}.${stamp}.receipt.txt`), receiptText(receipt));
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
  return { receipt, movedTo };
}

export { OutputError };
