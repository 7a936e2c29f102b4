/**
 * The receipt's list of rows whose lab call differs from the reading with the lab's cutoffs:
 * a disagreement is never silent, so the receipt of the file that brought it names each one
 * with both readings. Pure text; the rows come from the ingest of that file.
 */
import type { ResultClass } from '../interpret/classify.js';

/** One stored row of a file whose lab call names another class than its reading. */
export interface ReceiptCallDisagreement {
  line: number;
  sampleId: string;
  assayId: string;
  /** The Ct cell as the lab wrote it. */
  ctRaw: string;
  labCall: string;
  resultClass: ResultClass;
  reason: string;
}

/** What a receipt carries about call disagreements (absent: none were gathered). */
export interface ReceiptDisagreements {
  callDisagreements?: readonly ReceiptCallDisagreement[];
  /** Disagreeing rows beyond those listed. */
  callDisagreementsNotListed?: number;
}

/** The receipt lines naming each disagreeing row; none when there is none. */
export function disagreementLines(receipt: ReceiptDisagreements): string[] {
  const listed = receipt.callDisagreements ?? [];
  const more = receipt.callDisagreementsNotListed ?? 0;
  if (listed.length === 0 && more === 0) return [];
  const lines = [
    '',
    `the lab's call differs from the reading with the lab's cutoffs in the configuration (${listed.length + more} row${listed.length + more === 1 ? '' : 's'}; stored with the reading; check the lab profile's cutoffs against the lab's report):`,
  ];
  for (const row of listed) {
    lines.push(`  line ${row.line}, sample ${row.sampleId}, ${row.assayId}, Ct ${JSON.stringify(row.ctRaw)}: lab says ${JSON.stringify(row.labCall)}, read as ${row.resultClass} (${row.reason})`);
  }
  if (more > 0) lines.push(`  ... and ${more} more`);
  return lines;
}
