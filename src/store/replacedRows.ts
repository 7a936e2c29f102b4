/**
 * A row of the replaced-reports query (both backends select the same aliased columns from the
 * view `supersession_readings`) as the ReplacedReport the round model reads.
 */
import type { ReportStatusKind } from '../config/types.js';
import type { ReplacedReport, StoredReading, SupersessionKind } from '../domain/records.js';
import type { ResultClass } from '../interpret/classify.js';

export type ReplacedRow = Record<string, string | number | null>;

function reading(row: ReplacedRow, side: 'old' | 'new'): StoredReading {
  return {
    resultClass: row[`${side}Class`] as ResultClass,
    ct: row[`${side}Ct`] as number | null,
    ctRaw: (row[`${side}CtRaw`] as string | null) ?? '',
    labCall: row[`${side}LabCall`] as string | null,
    reportedOn: row[`${side}ReportedOn`] as string | null,
    status: row[`${side}Status`] as ReportStatusKind | null,
    statusWord: (row[`${side}StatusWord`] as string | null) ?? (row[`${side}ReportStatus`] as string | null),
  };
}

export function replacedReportOfRow(row: ReplacedRow): ReplacedReport {
  return {
    sampleId: row.sampleId as string,
    assayId: row.assayId as string,
    labId: row.labId as string,
    kind: row.kind as SupersessionKind | null,
    reason: row.reason as string,
    replaced: reading(row, 'old'),
    inPlace: reading(row, 'new'),
  };
}
