/**
 * Which of two reports of the same sample, assay and lab is current, and why. Pure.
 *
 * - A correction replaces what it corrects: HL7 v2 observation result status (table 0085, OBX-11)
 *   C is "a correction and thus replaces a final result", P a preliminary result, F final
 *   (HL7 v2.5.1, from memory).
 * - A preliminary report never replaces a final (or unmarked) one; a final report replaces a
 *   preliminary one whatever their dates (common practice, no source).
 * - Otherwise the later report date wins; on the same date (or undated) the later file does.
 * - An unmarked report replaces a correction only when it is dated after it.
 */
import type { ReportReading, ResultRow } from '../domain/records.js';
import type {
  EarlierReport,
  ReportFacts,
  SupersessionDecision,
  SupersessionLink,
  SupersessionNote,
} from '../domain/store.js';

export type { SupersessionKind } from '../domain/records.js';
export type { ReportFacts, SupersessionDecision };

const dated = (date: string | null) => date ?? 'undated';

/** True when both are dated and `a` is later than `b` (yyyy-mm-dd compares as text). */
function laterThan(a: string | null, b: string | null): boolean {
  return a !== null && b !== null && a > b;
}

/** Decides between the current report `old` and the report `next` that arrives after it. */
export function decideSupersession(old: ReportFacts, next: ReportFacts): SupersessionDecision {
  const oldPreliminary = old.status === 'preliminary';
  if (next.status === 'corrected') {
    if (old.status === 'corrected' && laterThan(old.reportedOn, next.reportedOn)) {
      return {
        current: 'old',
        kind: 'correction-kept',
        reason: `an earlier-dated correction (${dated(next.reportedOn)}) arrived after the lab's correction of ${dated(old.reportedOn)}, which stays current`,
      };
    }
    return {
      current: 'next',
      kind: 'correction',
      reason: `reissued by the lab as a correction ("${next.statusWord ?? 'corrected'}"; reported ${dated(next.reportedOn)}, the report it replaces ${dated(old.reportedOn)})`,
    };
  }
  if (next.status === 'preliminary') {
    if (!oldPreliminary) {
      return {
        current: 'old',
        kind: 'preliminary-after-final',
        reason: `a preliminary report ("${next.statusWord ?? 'preliminary'}", ${dated(next.reportedOn)}) arrived after the ${old.status === 'corrected' ? 'corrected' : 'final'} report of ${dated(old.reportedOn)}: a preliminary report never replaces a final one`,
      };
    }
    return byDate(old, next);
  }
  // The report arriving is final, or says nothing of its state (read as final).
  if (oldPreliminary) {
    return {
      current: 'next',
      kind: 'final-over-preliminary',
      reason: `the final report (${dated(next.reportedOn)}) replaces the preliminary one (${dated(old.reportedOn)})`,
    };
  }
  if (old.status === 'corrected' && !laterThan(next.reportedOn, old.reportedOn)) {
    return {
      current: 'old',
      kind: 'correction-kept',
      reason: `the lab's correction of ${dated(old.reportedOn)} stays current: a report without a correction mark (${dated(next.reportedOn)}) does not replace it unless dated after it`,
    };
  }
  return byDate(old, next);
}

function byDate(old: ReportFacts, next: ReportFacts): SupersessionDecision {
  if (laterThan(old.reportedOn, next.reportedOn)) {
    return {
      current: 'old',
      kind: 'earlier-report-kept',
      reason: `an earlier-dated report (${next.reportedOn}) arrived after ${old.reportedOn}`,
    };
  }
  if (old.reportedOn !== next.reportedOn) {
    return {
      current: 'next',
      kind: 'later-report',
      reason: `later report (${dated(next.reportedOn)} after ${dated(old.reportedOn)})`,
    };
  }
  return { current: 'next', kind: 'same-date-later-file', reason: 'a later file reports this sample and assay again' };
}

/**
 * Links an arriving row to the reports of its sample, assay and lab that are current before it
 * (oldest first): each is replaced in turn while the rule lets the arriving row govern; the first
 * that stays current keeps it, and the arriving row is linked as replaced by that one. Every link
 * comes with a note naming both readings (for the receipt).
 */
export function supersede(
  earlier: readonly EarlierReport[],
  row: ResultRow,
  newResultId: number,
): { links: SupersessionLink[]; notes: SupersessionNote[] } {
  const links: SupersessionLink[] = [];
  const notes: SupersessionNote[] = [];
  const next: ReportFacts = {
    reportedOn: row.reportedOn,
    status: row.statusKind,
    statusWord: row.statusWord ?? row.reportStatus,
  };
  const nextReading: ReportReading = {
    resultClass: row.resultClass,
    ctRaw: row.ctRaw,
    labCall: row.labCall,
    reportedOn: row.reportedOn,
    status: row.statusKind,
  };
  for (const old of earlier) {
    const decision = decideSupersession(old, next);
    const oldReading: ReportReading = {
      resultClass: old.resultClass,
      ctRaw: old.ctRaw,
      labCall: old.labCall,
      reportedOn: old.reportedOn,
      status: old.status,
    };
    const keepOld = decision.current === 'old';
    notes.push({
      line: row.line,
      sampleId: row.sampleId,
      assayId: row.assayId,
      labId: row.labId,
      kind: decision.kind,
      thisFileCurrent: !keepOld,
      replaced: keepOld ? nextReading : oldReading,
      current: keepOld ? oldReading : nextReading,
      reason: decision.reason,
    });
    const { reason, kind } = decision;
    if (keepOld) {
      links.push({ oldResultId: newResultId, newResultId: old.id, reason, kind });
      break;
    }
    links.push({ oldResultId: old.id, newResultId, reason, kind });
  }
  return { links, notes };
}
