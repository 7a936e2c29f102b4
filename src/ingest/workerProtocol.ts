/** Messages between the main thread and the parse worker, and how failures cross over. */
import { RecordTooLongError, UnclosedQuoteError } from './csvRecords.js';
import { EncodingError } from './decode.js';
import type { WireBatch } from './batchWire.js';
import { FileChangedError, type MappingInput } from './mappedBatches.js';

/** Batches posted but not yet stored. */
export const BATCHES_IN_FLIGHT = 4;

export type WorkerFailure =
  | { kind: 'encoding'; line: number; message: string }
  | { kind: 'unclosed-quote'; line: number }
  | { kind: 'record-too-long'; line: number }
  | { kind: 'changed'; message: string }
  | { kind: 'unexpected'; name: string; message: string; stack: string | undefined };

export type ToWorker = { type: 'start'; input: MappingInput } | { type: 'taken' };

export type FromWorker =
  | { type: 'batch'; batch: WireBatch }
  | { type: 'done' }
  | { type: 'failed'; failure: WorkerFailure };

export function describeWorkerFailure(error: unknown): WorkerFailure {
  if (error instanceof EncodingError) return { kind: 'encoding', line: error.line, message: error.message };
  if (error instanceof UnclosedQuoteError) return { kind: 'unclosed-quote', line: error.line };
  if (error instanceof RecordTooLongError) return { kind: 'record-too-long', line: error.line };
  if (error instanceof FileChangedError) return { kind: 'changed', message: error.message };
  const { name, message, stack } =
    error instanceof Error ? error : { name: 'Error', message: String(error), stack: undefined };
  return { kind: 'unexpected', name, message, stack };
}

/** The error the worker met, as the main thread's own (the same types the inline path throws). */
export function failureAsError(failure: WorkerFailure): Error {
  switch (failure.kind) {
    case 'encoding':
      return new EncodingError(failure.line, failure.message);
    case 'unclosed-quote':
      return new UnclosedQuoteError(failure.line);
    case 'record-too-long':
      return new RecordTooLongError(failure.line);
    case 'changed':
      return new FileChangedError(failure.message);
    case 'unexpected': {
      const error = new Error(`parse worker: ${failure.name}: ${failure.message}`);
      if (failure.stack) error.stack = failure.stack;
      return error;
    }
  }
}
