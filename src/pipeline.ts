/**
 * One drop through the whole pipeline: ingest into the store (one transaction), write its
 * receipt, move the file into the inbox's archive/ (or rejected/ with a .reason.txt), then
 * rewrite the outputs of the sites it touched from the committed store. The file moves only
 * after the store has committed: a crash before that leaves it in the inbox, and the content
 * hash makes the retry safe. Outputs come last and show committed data only; if they cannot be
 * written the store remembers that they are behind, and the next run rebuilds them. Names,
 * moves and special-file checks are in inboxFiles.ts.
 */
import path from 'node:path';
import { RECEIPTS_FOLDER } from './config/names.js';
import { emptyReceipt, FileStillChangingError, ingestFile, type Receipt } from './ingest/ingestFile.js';
import {
  ARCHIVE_DIR,
  FileTakenError,
  inspectInput,
  isGone,
  moveInto,
  reasonPath,
  receiptNames,
  REJECTED_DIR,
  takenByAnother,
} from './inboxFiles.js';
import { OutputError, regenerateOutputs } from './outputs.js';
import { writeFileAtomic, writeJson } from './report/files.js';
import { terminalText } from './util/terminalText.js';
import type { Workspace } from './workspace.js';

export { ARCHIVE_DIR, REJECTED_DIR };

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
    lines.push(
      '',
      `rows stored: ${receipt.rows.accepted}, refused: ${receipt.rows.rejected}, already stored: ${receipt.rows.duplicate}, superseding earlier reports: ${receipt.rows.superseded}`,
    );
  }
  if (receipt.rejectedRows.length > 0) {
    lines.push('', 'refused rows (kept in the store with their reason):');
    for (const row of receipt.rejectedRows)
      lines.push(
        `  line ${row.line}${row.field ? `, ${row.field}` : ''}: [${row.code}] ${row.message}${row.value ? ` (value ${JSON.stringify(row.value)})` : ''}`,
      );
    if (receipt.rejectedRowsNotListed > 0) lines.push(`  ... and ${receipt.rejectedRowsNotListed} more`);
  }
  const more = (count: number | undefined) => {
    if ((count ?? 0) > 0) lines.push(`  ... and ${count} more`);
  };
  if ((receipt.invalidRows ?? []).length > 0) {
    lines.push('', 'rows read as invalid (retest; never counted as negative):');
    for (const row of receipt.invalidRows!)
      lines.push(`  line ${row.line}, ${row.sampleId} ${row.assayId}: ${row.reason}`);
    more(receipt.invalidRowsNotListed);
  }
  if ((receipt.callDisagreements ?? []).length > 0) {
    lines.push('', "the lab's call differs from ropewatch's reading of the value (both kept; review with the lab):");
    for (const row of receipt.callDisagreements!) {
      lines.push(
        `  line ${row.line}, ${row.sampleId} ${row.assayId}: lab "${row.labCall}" (${row.labCallClass}), ropewatch ${row.resultClass} from ${row.ctRaw === '' ? 'a blank value' : `"${row.ctRaw}"`}`,
      );
    }
    more(receipt.callDisagreementsNotListed);
  }
  if ((receipt.supersessions ?? []).length > 0) {
    lines.push('', 'reports replaced (old reading -> current reading):');
    for (const note of receipt.supersessions!) {
      const reading = (r: (typeof note)['current']) =>
        `${r.resultClass} (${r.ctRaw === '' ? 'blank value' : r.ctRaw}${r.labCall ? `, lab "${r.labCall}"` : ''}; reported ${r.reportedOn ?? 'undated'}${r.status ? `, ${r.status}` : ''})`;
      lines.push(
        `  line ${note.line}, ${note.sampleId} ${note.assayId}: ${reading(note.replaced)} -> ${reading(note.current)}${note.thisFileCurrent ? '' : ' [the earlier report stays current]'}: ${note.reason}`,
      );
    }
    more(receipt.supersessionsNotListed);
  }
  if ((receipt.sampleIdCorrections ?? []).length > 0) {
    lines.push('', 'sample IDs read as confirmed in corrections.yaml:');
    for (const note of receipt.sampleIdCorrections!)
      lines.push(`  line ${note.line}: ${note.written} read as ${note.meant}`);
  }
  if (receipt.unresolvedSampleIds.length > 0) {
    lines.push(
      '',
      `samples not yet on any rope sheet (kept; they resolve when the sheet arrives): ${receipt.unresolvedSampleIds.join(', ')}` +
        (receipt.unresolvedNotListed > 0 ? `, and ${receipt.unresolvedNotListed} more` : ''),
    );
  }
  if (receipt.resolvedSampleIds.length > 0)
    lines.push('', `earlier results now placed in their pens: ${receipt.resolvedSampleIds.join(', ')}`);
  for (const warning of receipt.warnings) lines.push(`note: ${warning}`);
  // Names, sample IDs and quoted cells come from the file: escaped so a text viewer shows them.
  return lines.map(terminalText).join('\n') + '\n';
}

/** A receipt for an entry that is not a regular file: refused unread, left where it is. */
export function notRegularFileReceipt(name: string, what: string, receivedAt: string): Receipt {
  return {
    ...emptyReceipt(name, '', receivedAt),
    status: 'rejected',
    reason: {
      code: 'not-a-regular-file',
      message: `${name}: not a regular file but ${what}; not read, and left where it is (remove it from the inbox)`,
      line: null,
      field: null,
    },
  };
}

export interface ProcessOutcome {
  receipt: Receipt;
  movedTo: string;
  /** Set when the file was stored but the outputs of its sites could not be written. */
  outputError?: OutputError;
}

/**
 * Processes one inbox file end to end. An entry that is not a regular file (FIFO, socket, device,
 * folder) is refused from its stat, never opened, and left where it is.
 * @throws FileStillChangingError when the file changed while it was read: nothing stored, the
 *   file stays where it is for the next run.
 * @throws FileTakenError when the file left before this process read it (another process took it).
 */
export async function processFile(ws: Workspace, file: string): Promise<ProcessOutcome> {
  // Only regular files are opened: opening a FIFO blocks until a writer comes.
  const entry = inspectInput(file);
  if (entry.kind === 'missing') throw new FileTakenError(file);
  if (entry.kind === 'special') {
    const receipt = notRegularFileReceipt(path.basename(file), entry.what, ws.now().toISOString());
    writeReceipts(ws, receipt);
    return { receipt, movedTo: file };
  }
  const receipt = await ingestFile(file, { config: ws.config, store: ws.store, now: ws.now });
  // Unreadable because another process archived it meanwhile: nothing was stored for it here.
  if (receipt.status === 'rejected' && receipt.reason?.code === 'file-read-error' && isGone(file))
    throw new FileTakenError(file);
  writeReceipts(ws, receipt);
  const movedTo = fileAway(ws, file, receipt);
  if (receipt.status !== 'accepted' || receipt.sites.length === 0) return { receipt, movedTo };
  try {
    regenerateOutputs(ws, receipt.sites);
  } catch (error) {
    if (error instanceof OutputError) return { receipt, movedTo, outputError: error };
    throw error;
  }
  return { receipt, movedTo };
}

export function writeReceipts(ws: Workspace, receipt: Receipt): void {
  const names = receiptNames(receipt.file, receipt.sha256);
  try {
    writeJson(path.join(ws.outbox, RECEIPTS_FOLDER, names.json), receipt);
    writeFileAtomic(path.join(ws.outbox, RECEIPTS_FOLDER, names.txt), receiptText(receipt));
  } catch (error) {
    // The store has committed; the receipt is a courtesy copy of what the store holds.
    ws.log(terminalText(`warning: receipt for ${receipt.file} could not be written (${(error as Error).message})`));
  }
}

/**
 * Moves a processed file into the inbox's archive/ (or rejected/, with its reason), wherever it
 * was named from. The store has committed, so a failed move is told, never thrown: the file
 * stays where it is and a later run finds it a duplicate.
 */
function fileAway(ws: Workspace, file: string, receipt: Receipt): string {
  const dir = path.join(ws.inbox, receipt.status === 'rejected' ? REJECTED_DIR : ARCHIVE_DIR);
  let movedTo: string;
  try {
    movedTo = moveInto(dir, file, receipt.sha256, receipt.status === 'rejected');
  } catch (error) {
    // Another process moved it first: it is in its folder already.
    if (takenByAnother(error, file)) return file;
    const code = (error as NodeJS.ErrnoException).code;
    const why =
      code === 'EEXIST' || code === 'ENOTDIR'
        ? `${dir} is not a folder: rename or move whatever is there`
        : (error as Error).message;
    ws.log(
      terminalText(
        `warning: ${receipt.file} (${receipt.status}) stays at ${file}: it cannot be moved into ${dir} (${why})`,
      ),
    );
    return file;
  }
  if (receipt.status === 'rejected') {
    try {
      writeFileAtomic(reasonPath(movedTo), receiptText(receipt));
    } catch (error) {
      ws.log(
        terminalText(
          `warning: the reason beside ${movedTo} could not be written (${(error as Error).message}); the receipt holds it`,
        ),
      );
    }
  }
  return movedTo;
}

export { FileStillChangingError, OutputError };
