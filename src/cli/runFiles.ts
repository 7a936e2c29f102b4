/**
 * Running files through the pipeline for a command and telling the user: one line per receipt,
 * outputs caught up first, files still being written or taken by another process told apart
 * from refusals, and a stop signal honoured between files.
 */
import os from 'node:os';
import { deliverAlerts } from '../alerts/deliver.js';
import path from 'node:path';
import type { Receipt } from '../ingest/ingestFile.js';
import { FileTakenError, takenByAnother } from '../inboxFiles.js';
import { catchUpOutputs, OutputError } from '../outputs.js';
import { FileStillChangingError, processFile, type ProcessOutcome } from '../pipeline.js';
import { terminalText } from '../util/terminalText.js';
import { StoreBusyError } from '../domain/store.js';
import type { Workspace } from '../workspace.js';
import type { CliIo } from './io.js';

/** One line per receipt for the terminal; names and messages from the file are escaped. */
export function receiptLine(receipt: Receipt): string {
  return terminalText(receiptSummary(receipt));
}

function receiptSummary(receipt: Receipt): string {
  if (receipt.status === 'rejected') return `rejected ${receipt.file}: ${receipt.reason?.message ?? 'see receipt'}`;
  if (receipt.status === 'duplicate') return `skipped  ${receipt.file}: the same bytes were ingested before`;
  const parts = [`${receipt.rows.accepted} rows stored`];
  if (receipt.rows.rejected) parts.push(`${receipt.rows.rejected} refused`);
  if (receipt.rows.duplicate) parts.push(`${receipt.rows.duplicate} already stored`);
  if (receipt.rows.superseded) parts.push(`${receipt.rows.superseded} superseding earlier reports`);
  if (receipt.unresolvedSampleIds.length)
    parts.push(`${receipt.unresolvedSampleIds.length + receipt.unresolvedNotListed} samples awaiting a rope sheet`);
  if (receipt.resolvedSampleIds.length) parts.push(`${receipt.resolvedSampleIds.length} earlier results now placed`);
  return `accepted ${receipt.file} (${receipt.kind}${receipt.lab ? `, ${receipt.lab}` : ''}): ${parts.join(', ')}`;
}

/**
 * Rebuilds outputs left behind the store by an earlier run (a crash or a full disk between a
 * commit and its outputs). Returns false when they still cannot be written.
 */
export function catchUp(ws: Workspace, io: CliIo): boolean {
  try {
    const rebuilt = catchUpOutputs(ws);
    if (rebuilt.length > 0)
      io.stderr(
        `ropewatch: the outputs of ${rebuilt.join(', ')} were behind the store (an earlier run stopped before writing them); rebuilt\n`,
      );
    return true;
  } catch (error) {
    if (!(error instanceof OutputError)) throw error;
    io.stderr(`ropewatch: ${terminalText(error.message)}\n`);
    return false;
  }
}

/**
 * Delivers the alerts of the outputs written so far (outbox/alerts.jsonl, e-mail, commands): after
 * the outputs, outside the store's write lock. Failures are logged (one line each) and wait for
 * the next run; nothing here fails the command.
 */
export async function deliverOwedAlerts(ws: Workspace, io: CliIo): Promise<void> {
  try {
    await deliverAlerts(ws, { env: io.env });
  } catch (error) {
    ws.log(
      terminalText(
        `warning: alerts not delivered (${(error as Error).message ?? String(error)}); retried on the next run`,
      ),
    );
  }
}

/** The line for a file another process took first: no receipt, not a refusal. */
function takenLine(file: string): string {
  return terminalText(`skipped  ${path.basename(file)}: already taken by another process`);
}

/**
 * Runs one file through the pipeline and tells the user. Returns the outcome; 'changing' when
 * the file was still being written (nothing stored, left in the inbox); 'busy' when another
 * process held the store's write lock past the busy timeout (the same); 'taken' when another
 * process took it first (it stored or refused it and wrote its receipt).
 */
export async function processAndTell(
  ws: Workspace,
  file: string,
  io: CliIo,
  json: boolean,
): Promise<ProcessOutcome | 'changing' | 'busy' | 'taken'> {
  let outcome: ProcessOutcome;
  try {
    outcome = await processFile(ws, file);
  } catch (error) {
    if (error instanceof FileTakenError || takenByAnother(error, file)) {
      if (json) io.stderr(`ropewatch: ${takenLine(file)}\n`);
      else io.stdout(`${takenLine(file)}\n`);
      return 'taken';
    }
    if (error instanceof StoreBusyError) {
      io.stderr(
        `ropewatch: store busy: ${terminalText(path.basename(file))} not read: ${error.message}; nothing stored, the file stays in the inbox (run again)\n`,
      );
      return 'busy';
    }
    if (!(error instanceof FileStillChangingError)) throw error;
    io.stderr(`ropewatch: not read yet: ${terminalText(error.message)}\n`);
    return 'changing';
  }
  if (!json) io.stdout(`${receiptLine(outcome.receipt)}\n`);
  if (outcome.outputError)
    io.stderr(`ropewatch: ${terminalText(`${path.basename(file)} stored, but ${outcome.outputError.message}`)}\n`);
  return outcome;
}

/**
 * Exit code of a command stopped by a signal: 128 + its number (signal(7): SIGINT 2 -> 130,
 * SIGTERM 15 -> 143), the shell's convention (POSIX Shell Command Language 2.8.2: above 128).
 * A stop with no signal named counts as an interrupt.
 */
export function signalExitCode(signal: string): number {
  const number = (os.constants.signals as Record<string, number | undefined>)[signal];
  return 128 + (number ?? os.constants.signals.SIGINT);
}

export interface IngestRun {
  receipts: Receipt[];
  failed: boolean;
  /** The signal that stopped the run (`a stop request` when it came without a name), or null. */
  stoppedBy: string | null;
  /** Files not started because of the stop: still where they were. */
  left: string[];
}

/**
 * Runs files through the pipeline in order; returns receipts. Exit 1 follows from refusals, from
 * files still being written and from outputs that could not be written. A stop request lets the
 * file in hand finish (its transaction commits or rolls back whole) and leaves the others untouched.
 */
export async function ingestFiles(
  ws: Workspace,
  files: readonly string[],
  io: CliIo,
  json: boolean,
): Promise<IngestRun> {
  const receipts: Receipt[] = [];
  let failed = !catchUp(ws, io);
  const stop: { by: string | null } = { by: null };
  void io.stopSignal?.then((signal) => {
    stop.by = signal ?? 'a stop request';
  });
  for (const [index, file] of files.entries()) {
    // A signal is delivered through the event loop: give it a turn before taking the next file.
    await new Promise<void>((resolve) => setImmediate(resolve));
    if (stop.by !== null) return { receipts, failed, stoppedBy: stop.by, left: files.slice(index) };
    const outcome = await processAndTell(ws, file, io, json);
    if (outcome === 'taken') continue;
    if (outcome === 'changing' || outcome === 'busy') {
      failed = true;
      continue;
    }
    receipts.push(outcome.receipt);
    if (outcome.receipt.status === 'rejected' || outcome.receipt.rows.rejected > 0 || outcome.outputError)
      failed = true;
  }
  await deliverOwedAlerts(ws, io);
  return { receipts, failed, stoppedBy: null, left: [] };
}
