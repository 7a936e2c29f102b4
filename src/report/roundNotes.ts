/**
 * The words summary.csv and the summary page share for two things the store keeps beside the
 * current results: a report another took the place of (a correction, a final over a preliminary
 * report, a later report), and a result refused because its planned sample ID failed its check
 * character (ISO/IEC 7064 MOD 37-2), with the planned ID it most likely meant and the one-line
 * fix a person adds once the ID is confirmed. Pure text; no statistics.
 */
import type { ReadingInput, MistypedRope, RoundReplacement } from '../rounds/roundModel.js';
import { CONFIG_FILES, DEFAULT_PLACES } from '../workspacePaths.js';

/** A reading in short: its class and the value as the lab wrote it. */
export function readingText(reading: Pick<ReadingInput, 'resultClass' | 'ctRaw'>): string {
  return `${reading.resultClass} (${reading.ctRaw === '' ? 'blank value' : reading.ctRaw})`;
}

const dated = (date: string | null) => date ?? 'undated';

/**
 * The two report dates of a link, in the words of its kind: the date of the report set aside
 * first, then the date of the one in its place.
 */
export function reportDates(entry: Pick<RoundReplacement, 'kind' | 'replaced' | 'inPlace'>): string {
  const a = dated(entry.replaced.reportedOn);
  const b = dated(entry.inPlace.reportedOn);
  switch (entry.kind) {
    case 'correction':
      return `reported ${a}, corrected ${b}`;
    case 'final-over-preliminary':
      return `preliminary ${a}, final ${b}`;
    case 'later-report':
    case 'same-date-later-file':
      return `reported ${a}, reissued ${b}`;
    case 'correction-kept':
      return `reported ${a}, after the lab's correction of ${b}`;
    case 'preliminary-after-final':
      return `preliminary ${a}, after the final report of ${b}`;
    case 'earlier-report-kept':
      return `reported ${a}, after the report of ${b}`;
    default:
      return `reported ${a}, then ${b}`;
  }
}

/** Why the reading in place counts, in a few words (the stored reason says it at length). */
export function replacementWhy(entry: Pick<RoundReplacement, 'kind' | 'reason'>): string {
  switch (entry.kind) {
    case 'correction':
      return "the lab's correction replaces it";
    case 'correction-kept':
      return "the lab's correction stays current";
    case 'final-over-preliminary':
      return 'the final report replaces the preliminary one';
    case 'preliminary-after-final':
      return 'a preliminary report never replaces a final one';
    case 'later-report':
      return 'the later report counts';
    case 'earlier-report-kept':
      return 'an earlier-dated report arrived late; the later one counts';
    case 'same-date-later-file':
      return 'reported again the same day in a later file';
    default:
      return entry.reason;
  }
}

/** One link as a summary.csv cell: "SAMPLE: old -> new (reported A, corrected B)". */
export function replacementCell(entry: Pick<RoundReplacement, 'sampleId' | 'kind' | 'replaced' | 'inPlace'>): string {
  return `${entry.sampleId}: ${readingText(entry.replaced)} -> ${readingText(entry.inPlace)} (${reportDates(entry)})`;
}

/**
 * A sample ID as ingest and config/corrections.yaml compare it: spaces removed, upper case (the
 * rule of normaliseSampleId in src/ingest/recordCells.ts, which a test holds this to).
 */
export function comparableId(raw: string): string {
  return raw.replace(/\s+/g, '').toUpperCase();
}

/**
 * A rope's refused rows by the ID as written (compared as ingest compares it) and file, with their
 * lines: one correction covers each group, and corrections.yaml refuses two for the same ID and file.
 */
export function refusalGroups(
  rope: Pick<MistypedRope, 'refusals'>,
): { written: string; fileName: string; lines: number[] }[] {
  const groups: { written: string; fileName: string; lines: number[] }[] = [];
  for (const refusal of rope.refusals) {
    const written = comparableId(refusal.written);
    const group = groups.find((entry) => entry.written === written && entry.fileName === refusal.fileName);
    if (group) group.lines.push(refusal.line);
    else groups.push({ written, fileName: refusal.fileName, lines: [refusal.line] });
  }
  return groups;
}

/**
 * The entry to add under `sampleIds:` in config/corrections.yaml once a person has confirmed the
 * ID, on one line. Values are written as JSON strings, which YAML 1.2 reads as double-quoted
 * scalars (YAML 1.2, section 7.3.1, from memory), so no character of an ID (`*` begins an alias,
 * `#` a comment) can change what the line means. Without `line`: it covers every row of the file
 * that writes the ID so (one per assay).
 */
export function correctionsEntry(written: string, meant: string, fileName: string): string {
  return `- { written: ${JSON.stringify(written)}, meant: ${JSON.stringify(meant)}, file: ${JSON.stringify(fileName)} }`;
}

/** A POSIX shell word: as it is when it holds only safe characters, else in single quotes (POSIX.1-2017, Shell Command Language 2.2.3). */
function shellWord(text: string): string {
  return /^[A-Za-z0-9._/-]+$/.test(text) ? text : `'${text.replaceAll("'", `'\\''`)}'`;
}

/** The command that reads an archived file again once the correction is in place. */
export function ingestAgainCommand(fileName: string): string {
  return `ropewatch ingest ${shellWord(`${DEFAULT_PLACES.archive}${fileName}`)}`;
}

/** What clinic staff do about a result refused under a mistyped ID. */
export const MISTYPED_ACTION = `confirm the ID with the lab or the producer, then add it to ${DEFAULT_PLACES.config}${CONFIG_FILES.corrections} and ingest the file again`;

/** The IDs of a barn's ropes without a result for which no row came back under a mistyped ID. */
export function simplyMissing(barn: {
  missingSampleIds: readonly string[];
  mistyped: readonly Pick<MistypedRope, 'sampleId'>[];
}): string[] {
  const refused = new Set(barn.mistyped.map((rope) => rope.sampleId));
  return barn.missingSampleIds.filter((sampleId) => !refused.has(sampleId));
}
