/**
 * An ORU^R01 message to the same result rows a CSV export gives: each OBX observation the lab
 * profile maps becomes one record under a header named by HL7 fields (SPM-2, OBX-3, OBX-5,
 * OBX-8, OBR-3, SPM-17, OBR-22, OBX-11) and goes through the CSV path's row mapping
 * (src/ingest/rows.ts), so interpretation, cutoffs, supersession and disagreements apply
 * unchanged and refusals name the segment's line and its field. Pure.
 *
 * Structure read (HL7 Version 2.5.1, chapter 7, ORU^R01): MSH, then per order an OBR, its
 * observations (OBX), then the specimen (SPM) with observations about the specimen (OBX after
 * the SPM, not results: skipped). A Ct (or S/P) OBX and a coded-call OBX of the same assay in
 * one order make one result, as one CSV row carries both the value and the lab's call.
 */
import { DEFAULT_CALL_WORDS, DEFAULT_STATUS_WORDS } from '../config/labWords.js';
import type { LabProfile } from '../config/types.js';
import type { Hl7Profile } from '../config/hl7Types.js';
import { rowRejection, type RowRejection } from '../ingest/errors.js';
import type { ResultRow } from '../domain/records.js';
import type { PlannedIdCheck } from '../ingest/recordCells.js';
import { mapResultRow, type ResultContext } from '../ingest/resultRecords.js';
import type { Assay, Site } from '../config/types.js';
import { foldToken } from '../util/fold.js';
import { Hl7Error } from './hl7Error.js';
import { components, type Hl7Message, repetitions, type Segment, valueAt } from './parse.js';

/** The longest OBX-5 value read as a Ct, an S/P or a code: anything longer is no such value. */
export const MAX_VALUE_CHARS = 200;

/** What the message header says: who sent it, which message it is. */
export interface MessageHeader {
  lab: LabProfile;
  hl7: Hl7Profile;
  /** MSH-4's namespace ID as sent. */
  sendingFacility: string;
  /** MSH-10, the message control ID. */
  controlId: string;
}

const msh = (message: Hl7Message): Segment => message.segments[0]!;

/** MSH-10 as written, or '' (for an acknowledgement of a message refused before its header was read). */
export function controlIdOf(message: Hl7Message): string {
  return valueAt(message, msh(message), 10);
}

/**
 * Checks the header: an ORU^R01 of HL7 version 2, production processing, a control ID, from a
 * sending facility a lab profile names.
 * @throws Hl7Error wrong-message-type, missing-value (MSH-10), unknown-sender
 */
export function readHeader(message: Hl7Message, labs: readonly LabProfile[]): MessageHeader {
  const header = msh(message);
  const fail = (code: Hl7Error['code'], field: number, detail: string) =>
    new Hl7Error({ code, segment: 'MSH', sequence: 1, field, line: header.line, detail });
  const type = `${valueAt(message, header, 9, 1)}^${valueAt(message, header, 9, 2)}`;
  if (type !== 'ORU^R01')
    throw fail(
      'wrong-message-type',
      9,
      `MSH-9 is ${JSON.stringify(type)}: ropewatch reads unsolicited observation results (ORU^R01) only`,
    );
  const version = valueAt(message, header, 12);
  if (!version.startsWith('2.'))
    throw fail('wrong-message-type', 12, `MSH-12 is ${JSON.stringify(version)}: ropewatch reads HL7 version 2`);
  const processing = valueAt(message, header, 11);
  if (processing !== 'P')
    throw fail(
      'wrong-message-type',
      11,
      `MSH-11 processing ID is ${JSON.stringify(processing)}: only production messages (P) are stored, never training (T) or debugging (D) ones`,
    );
  const controlId = controlIdOf(message);
  if (controlId.trim() === '') throw fail('missing-value', 10, 'MSH-10, the message control ID, is empty');
  const sendingFacility = valueAt(message, header, 4);
  const folded = foldToken(sendingFacility);
  const senders = labs.filter((lab) => lab.hl7?.sendingFacilities.includes(folded));
  if (senders.length !== 1)
    throw fail(
      'unknown-sender',
      4,
      senders.length === 0
        ? `MSH-4 sending facility ${JSON.stringify(sendingFacility)} is in no lab profile's hl7.sendingFacility`
        : `MSH-4 sending facility ${JSON.stringify(sendingFacility)} is named by more than one lab profile (${senders.map((lab) => lab.id).join(', ')})`,
    );
  const lab = senders[0]!;
  return { lab, hl7: lab.hl7!, sendingFacility, controlId };
}

/** The fixed header a lab's records are mapped under, and the profile that reads it. */
interface RecordLayout {
  lab: LabProfile;
  columnIndex: Map<string, number>;
}
const layouts = new WeakMap<LabProfile, RecordLayout>();

const COLUMN_ORDER = [
  'sampleId',
  'assay',
  'result',
  'call',
  'accession',
  'collectedOn',
  'reportedOn',
  'reportStatus',
] as const;

/**
 * The lab profile as the row mapping reads HL7 records: its columns are HL7 field names (so a
 * refusal names OBX-5), its dates are already ISO, its call and status cells hold the class and
 * state names this module writes into them.
 */
function recordLayout(lab: LabProfile): RecordLayout {
  let layout = layouts.get(lab);
  if (layout !== undefined) return layout;
  const hl7 = lab.hl7!;
  const columns: LabProfile['columns'] = {
    sampleId: hl7.sampleId,
    assay: 'OBX-3',
    result: 'OBX-5',
    call: 'OBX-8',
    accession: hl7.accession === 'none' || hl7.accession === hl7.sampleId ? undefined : hl7.accession,
    collectedOn: hl7.collectedOn,
    reportedOn: 'OBR-22',
    internalControl: undefined,
    reportStatus: 'OBX-11',
  };
  const columnIndex = new Map<string, number>();
  COLUMN_ORDER.forEach((key, position) => {
    const name = columns[key];
    if (name !== undefined) columnIndex.set(foldToken(name), position);
  });
  layout = {
    lab: Object.freeze({
      ...lab,
      layout: 'long',
      dateFormat: 'yyyy-MM-dd',
      columns,
      controlFailedTokens: [],
      // The call cell holds a class name (mapped) or the coded result's text, read by the English words.
      callWords: DEFAULT_CALL_WORDS,
      statusWords: DEFAULT_STATUS_WORDS,
      statusColumns: ['OBX-11'],
    }),
    columnIndex,
  };
  layouts.set(lab, layout);
  return layout;
}

/** An HL7 date/time (DTM: YYYYMMDD[HHMM[SS]]...) as yyyy-MM-dd; anything shorter is returned as written (and refused as a date). */
export function dtmDay(text: string): string {
  const match = /^(\d{4})(\d{2})(\d{2})/.exec(text.trim());
  return match ? `${match[1]}-${match[2]}-${match[3]}` : text.trim();
}

/** One order (OBR) with its result observations and its specimen. */
interface OrderGroup {
  obr: Segment;
  observations: Segment[];
  spm: Segment | undefined;
}

function orderGroups(message: Hl7Message): OrderGroup[] {
  const groups: OrderGroup[] = [];
  let current: OrderGroup | undefined;
  for (const segment of message.segments) {
    if (segment.id === 'OBR') groups.push((current = { obr: segment, observations: [], spm: undefined }));
    else if (segment.id === 'SPM' && current !== undefined) current.spm ??= segment;
    // OBX after the specimen describe the specimen, not a result.
    else if (segment.id === 'OBX' && current !== undefined && current.spm === undefined)
      current.observations.push(segment);
  }
  return groups;
}

export interface MessageRecords {
  rows: ResultRow[];
  rejections: RowRejection[];
  /** The segment at each line a row or refusal names (for the acknowledgement's ERR-2). */
  segmentAt: ReadonlyMap<number, Segment>;
}

export interface RecordContext {
  fileName: string;
  sites: readonly Site[];
  assayById: ReadonlyMap<string, Assay>;
  plannedIdCheck: PlannedIdCheck;
}

/** The parts of one result: its value observation and its coded-call observation. */
interface ResultParts {
  assay: string;
  value: Segment | undefined;
  call: Segment | undefined;
}

/**
 * The message's results, mapped as CSV rows are, and its refusals.
 * @throws Hl7Error missing-segment when the message has no OBR or no OBX at all
 */
export function messageRecords(message: Hl7Message, header: MessageHeader, context: RecordContext): MessageRecords {
  const groups = orderGroups(message);
  const line = msh(message).line;
  if (groups.length === 0)
    throw new Hl7Error({
      code: 'missing-segment',
      segment: 'OBR',
      sequence: undefined,
      field: undefined,
      line,
      detail: 'the message has no OBR (observation request) segment',
    });
  if (groups.every((group) => group.observations.length === 0))
    throw new Hl7Error({
      code: 'missing-segment',
      segment: 'OBX',
      sequence: undefined,
      field: undefined,
      line,
      detail: 'the message has no OBX (observation result) segment',
    });
  const layout = recordLayout(header.lab);
  const resultContext: ResultContext = {
    fileName: context.fileName,
    lab: layout.lab,
    columnIndex: layout.columnIndex,
    assayById: context.assayById,
    sites: context.sites,
    plannedIdCheck: context.plannedIdCheck,
  };
  const out: MessageRecords = {
    rows: [],
    rejections: [],
    segmentAt: new Map(message.segments.map((s) => [s.line, s])),
  };
  for (const group of groups) {
    const parts = new Map<string, ResultParts>();
    for (const obx of group.observations) {
      const code = valueAt(message, obx, 3, 1).trim();
      const observation =
        header.hl7.observations.get(code) ?? header.hl7.observations.get(valueAt(message, obx, 3, 4).trim());
      if (observation === undefined) {
        out.rejections.push(
          rowRejection({
            code: 'unknown-assay',
            line: obx.line,
            field: 'OBX-3',
            value: code,
            detail: `lab ${header.lab.id} profile maps no observation code "${code}" under hl7.observations`,
          }),
        );
        continue;
      }
      let entry = parts.get(observation.labAssayName);
      if (entry === undefined)
        parts.set(
          observation.labAssayName,
          (entry = { assay: observation.labAssayName, value: undefined, call: undefined }),
        );
      entry[observation.value === 'call' ? 'call' : 'value'] = obx;
    }
    for (const entry of parts.values()) {
      const outcome = resultRecord(message, header.hl7, group, entry);
      if ('rejection' in outcome) {
        out.rejections.push(outcome.rejection);
        continue;
      }
      const mapped = mapResultRow(outcome.cells, outcome.line, resultContext);
      if (mapped.ok) out.rows.push(mapped.row);
      else out.rejections.push(mapped.rejection);
    }
  }
  return out;
}

/** The cells of one result under the fixed header, or the refusal of its observation. */
function resultRecord(
  message: Hl7Message,
  hl7: Hl7Profile,
  group: OrderGroup,
  parts: ResultParts,
): { cells: string[]; line: number } | { rejection: RowRejection } {
  const main = (parts.value ?? parts.call)!;
  const refuse = (code: RowRejection['code'], field: string, value: string, detail: string) => ({
    rejection: rowRejection({ code, line: main.line, field, value, detail }),
  });
  for (const obx of [parts.value, parts.call]) {
    if (obx === undefined) continue;
    const raw = repetitions(message, obx, 5)[0] ?? '';
    if (raw.length > MAX_VALUE_CHARS)
      return {
        rejection: rowRejection({
          code: 'field-too-long',
          line: obx.line,
          field: 'OBX-5',
          value: raw.slice(0, 40),
          detail: `OBX-5 holds ${raw.length} characters; a Ct, an S/P ratio or a code is at most ${MAX_VALUE_CHARS}`,
        }),
      };
  }
  const status = valueAt(message, main, 11).trim();
  const state = hl7.resultStatus.get(status);
  if (state === undefined)
    return refuse(
      'unmapped-result-status',
      'OBX-11',
      status,
      status === ''
        ? 'OBX-11 (result status) is empty'
        : `OBX-11 result status ${JSON.stringify(status)} is not mapped to preliminary, final or corrected (hl7.resultStatus); nothing to store`,
    );
  const spm = group.spm;
  if ((hl7.sampleId === 'SPM-2' || hl7.collectedOn === 'SPM-17') && spm === undefined)
    return refuse(
      'missing-segment',
      'SPM',
      '',
      `the order (OBR at line ${group.obr.line}) has no SPM segment, where the lab profile reads the ${hl7.sampleId === 'SPM-2' ? 'sample ID (SPM-2)' : 'collection date (SPM-17)'}`,
    );
  const sampleId =
    hl7.sampleId === 'SPM-2'
      ? valueAt(message, spm!, 2, 1) || valueAt(message, spm!, 2, 2)
      : valueAt(message, group.obr, hl7.sampleId === 'OBR-3' ? 3 : 2, 1);
  const collected = hl7.collectedOn === 'SPM-17' ? valueAt(message, spm!, 17, 1, 1) : valueAt(message, group.obr, 7, 1);
  const accession = hl7.accession === 'none' ? '' : valueAt(message, group.obr, hl7.accession === 'OBR-3' ? 3 : 2, 1);
  const reported = valueAt(message, group.obr, 22, 1) || (parts.value ? valueAt(message, parts.value, 19, 1) : '');
  const cells = [
    sampleId,
    parts.assay,
    parts.value === undefined ? '' : numericText(message, parts.value),
    callText(message, hl7, parts),
    accession,
    collected === '' ? '' : dtmDay(collected),
    reported === '' ? '' : dtmDay(reported),
    state,
  ];
  return { cells, line: main.line };
}

/** OBX-5 of a numeric observation: NM or ST as written, SN (structured numeric) as comparator and number. */
function numericText(message: Hl7Message, obx: Segment): string {
  if (valueAt(message, obx, 2) === 'SN') {
    const [comparator = '', number = ''] = components(message, obx, 5);
    return `${comparator === '=' ? '' : comparator}${number}`;
  }
  return valueAt(message, obx, 5);
}

/**
 * The lab's call for one result: the coded-call observation's code mapped (hl7.codedResults) or,
 * unmapped, its text; else the first OBX-8 flag the profile maps; else none.
 */
function callText(message: Hl7Message, hl7: Hl7Profile, parts: ResultParts): string {
  if (parts.call !== undefined) {
    const code = valueAt(message, parts.call, 5, 1).trim();
    const mapped = hl7.codedResults.get(code);
    if (mapped !== undefined) return mapped;
    return valueAt(message, parts.call, 5, 2).trim() || code;
  }
  const obx = parts.value;
  if (obx === undefined) return '';
  for (const flag of repetitions(message, obx, 8)) {
    const mapped = hl7.abnormalFlags.get(flag.trim());
    if (mapped !== undefined) return mapped;
  }
  return '';
}
