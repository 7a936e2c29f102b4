/**
 * What the rows of one file did, told on its receipt: stored, duplicate, superseded, refused,
 * with the lists a person reads kept to RECEIPT_LIST_LIMIT entries. Pure: the store's counts
 * come in, the receipt is filled.
 */
import { type InsertCounts, RECEIPT_LIST_LIMIT } from '../domain/store.js';
import type { RowRejection } from './errors.js';
import type { Receipt } from './receipt.js';
import type { RopeRow } from '../domain/records.js';

/** Appends to a receipt list up to RECEIPT_LIST_LIMIT; returns how many did not fit. */
export function listInto<T>(list: T[], items: readonly T[]): number {
  const room = Math.max(0, RECEIPT_LIST_LIMIT - list.length);
  for (let i = 0; i < items.length && i < room; i++) list.push(items[i]!);
  return Math.max(0, items.length - room);
}

/** Adds what the store did with one batch (and the rope IDs a confirmed correction replaced) to the receipt. */
export function tallyBatch(receipt: Receipt, counts: InsertCounts, ropes: readonly RopeRow[]): void {
  receipt.rows.accepted += counts.inserted;
  receipt.rows.duplicate += counts.duplicates;
  receipt.rows.superseded += counts.superseded;
  receipt.warnings.push(...counts.warnings);
  receipt.invalidRowsNotListed! += listInto(receipt.invalidRows!, counts.invalid);
  receipt.callDisagreementsNotListed! += listInto(receipt.callDisagreements!, counts.callDisagreements);
  receipt.supersessionsNotListed! += listInto(receipt.supersessions!, counts.supersessions);
  listInto(receipt.sampleIdCorrections!, counts.idCorrections);
  for (const rope of ropes) {
    if (rope.sampleIdAsWritten !== null)
      listInto(receipt.sampleIdCorrections!, [
        { line: rope.line, written: rope.sampleIdAsWritten, meant: rope.sampleId },
      ]);
  }
}

/**
 * The refusals to store now. Mistyped IDs wait in `mistyped` for the whole file: the planned ID
 * meant is the one whose rope still has no result once every other row is stored.
 */
export function setAsideMistyped(given: readonly RowRejection[], mistyped: RowRejection[]): readonly RowRejection[] {
  if (!given.some((rejection) => rejection.code === 'bad-check-character')) return given;
  for (const rejection of given) if (rejection.code === 'bad-check-character') mistyped.push(rejection);
  return given.filter((rejection) => rejection.code !== 'bad-check-character');
}

/** Counts refused rows on the receipt and lists them up to RECEIPT_LIST_LIMIT. */
export function listRejections(receipt: Receipt, list: readonly RowRejection[]): void {
  receipt.rows.rejected += list.length;
  for (const rejection of list) {
    if (receipt.rejectedRows.length < RECEIPT_LIST_LIMIT) receipt.rejectedRows.push(rejection);
    else receipt.rejectedRowsNotListed++;
  }
}

/** No row at all (accepted, refused or duplicate): the file has a header but no data. */
export function noRows(receipt: Receipt): boolean {
  return receipt.rows.accepted + receipt.rows.rejected + receipt.rows.duplicate === 0;
}
