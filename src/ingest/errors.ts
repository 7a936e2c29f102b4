/**
 * Refused files and rows as errors. The refusal codes are declared once in src/domain/rejections.ts
 * (re-exported here), where the store reads them too.
 */
import { REJECTION_CODES, type RejectionCode, type RowRejection } from '../domain/rejections.js';

export { REJECTION_CODES, type RejectionCode, type RowRejection };

/** A refused file or row, with the context a person needs to fix it. */
export class IngestError extends Error {
  override readonly name = 'IngestError';
  constructor(
    readonly code: RejectionCode,
    readonly file: string,
    readonly line: number | undefined,
    readonly field: string | undefined,
    readonly value: string | undefined,
    detail?: string,
  ) {
    super(
      `${file}${line !== undefined ? `, line ${line}` : ''}${field ? `, field "${field}"` : ''}: ${detail ?? REJECTION_CODES[code]}` +
        (value !== undefined && value !== ''
          ? ` (value ${JSON.stringify(value.length > 80 ? `${value.slice(0, 80)}...` : value)})`
          : ''),
    );
  }
}

export function rowRejection(
  code: RejectionCode,
  line: number,
  field: string | undefined,
  value: string | undefined,
  detail?: string,
): RowRejection {
  return {
    line,
    field,
    code,
    value: value === undefined ? undefined : value.slice(0, 200),
    message: detail ?? REJECTION_CODES[code],
  };
}
