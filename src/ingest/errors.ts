/**
 * Refused files and rows as errors. The refusal codes are declared once in src/domain/rejections.ts
 * (re-exported here), where the store reads them too.
 */
import { REJECTION_CODES, type RejectionCode, type RowRejection } from '../domain/rejections.js';

export { REJECTION_CODES, type RejectionCode, type RowRejection };

/** What names a refused file or row: the code, the file, and where in it (line, field, the value as written). */
export interface IngestErrorOptions {
  code: RejectionCode;
  file: string;
  line?: number | undefined;
  field?: string | undefined;
  value?: string | undefined;
  /** The sentence a person reads; the code's description when absent. */
  detail?: string | undefined;
}

/** A refused file (or a row that refuses its whole file), with the context a person needs to fix it. */
export class IngestError extends Error {
  override readonly name = 'IngestError';
  readonly code: RejectionCode;
  readonly file: string;
  readonly line: number | undefined;
  readonly field: string | undefined;
  readonly value: string | undefined;

  constructor({ code, file, line, field, value, detail }: IngestErrorOptions) {
    super(
      `${file}${line !== undefined ? `, line ${line}` : ''}${field ? `, field "${field}"` : ''}: ${detail ?? REJECTION_CODES[code]}` +
        (value !== undefined && value !== ''
          ? ` (value ${JSON.stringify(value.length > 80 ? `${value.slice(0, 80)}...` : value)})`
          : ''),
    );
    this.code = code;
    this.file = file;
    this.line = line;
    this.field = field;
    this.value = value;
  }
}

/** What names a refused row: the code, the line where its record starts, the field and the value as written. */
export interface RowRejectionOptions {
  code: RejectionCode;
  line: number;
  field?: string | undefined;
  value?: string | undefined;
  /** The sentence a person reads; the code's description when absent. */
  detail?: string | undefined;
}

/** Builds every row refusal: the value is kept to its first 200 characters. */
export function rowRejection({ code, line, field, value, detail }: RowRejectionOptions): RowRejection {
  return {
    line,
    field,
    code,
    value: value === undefined ? undefined : value.slice(0, 200),
    message: detail ?? REJECTION_CODES[code],
  };
}
