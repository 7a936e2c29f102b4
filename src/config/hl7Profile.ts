/**
 * A lab profile's `hl7:` section: how one lab's HL7 v2 result messages (ORU^R01) map to
 * ropewatch results. Which MSH-4 sending facility the lab is, where its messages carry the
 * sample ID and the collection date, which OBX-3 observation codes are which of the lab's assays
 * (under the profile's `assays:`, with the lab's cutoffs), whether OBX-5 holds a Ct, an S/P
 * ratio or a coded call, and how OBX-8 abnormal flags and OBX-11 result statuses read.
 */
import { z } from 'zod';
import type { LabAssay } from './types.js';
import type { Hl7Call, Hl7Observation, Hl7Profile, Hl7ReportState } from './hl7Types.js';

export type { Hl7Profile };
import { foldToken } from '../util/fold.js';
import type { ProblemList } from './problems.js';

const callClass = z.enum(['positive', 'suspect', 'negative', 'invalid']);
const reportState = z.enum(['preliminary', 'final', 'corrected']);

export const hl7SenderSchema = z
  .object({
    /** MSH-4 (its first component, the namespace ID) as the lab sends it; one name or a list. */
    sendingFacility: z.union([z.string().min(1), z.array(z.string().min(1)).min(1)]),
    /** Where the sample ID (the rope's tube label) sits: SPM-2 (specimen ID), OBR-3 (filler order number) or OBR-2 (placer order number). */
    sampleId: z.enum(['SPM-2', 'OBR-3', 'OBR-2']).default('SPM-2'),
    /** The collection date: SPM-17 (specimen collection date/time) or OBR-7 (observation date/time). */
    collectedOn: z.enum(['SPM-17', 'OBR-7']).default('SPM-17'),
    /** The lab's case number: OBR-3, OBR-2, or none. */
    accession: z.enum(['OBR-3', 'OBR-2', 'none']).default('OBR-3'),
    /**
     * OBX-3 observation codes (its identifier, first or fourth component: LOINC or the lab's
     * local code) to the lab's assay name under `assays:` and what OBX-5 holds.
     */
    observations: z.record(
      z.string().min(1),
      z.object({ assay: z.string().min(1), value: z.enum(['ct', 'sp-ratio', 'call']) }).strict(),
    ),
    /** Coded OBX-5 values (first component, e.g. a SNOMED CT code) to the call they make. */
    codedResults: z.record(z.string().min(1), callClass).optional(),
    /** OBX-8 abnormal flags to the lab's call (replaces the defaults). */
    abnormalFlags: z.record(z.string().min(1), callClass).optional(),
    /** OBX-11 result statuses to the state of the report (replaces the defaults). */
    resultStatus: z.record(z.string().min(1), reportState).optional(),
  })
  .strict();

export type RawHl7Sender = z.output<typeof hl7SenderSchema>;

/**
 * OBX-8 flags read by default (HL7 table 0078: N normal, A abnormal; POS, NEG, DET, ND, IND as
 * later versions of the table add them; from memory). A lab that uses A otherwise maps its own.
 */
export const DEFAULT_ABNORMAL_FLAGS: Readonly<Record<string, Hl7Call>> = {
  A: 'positive',
  POS: 'positive',
  DET: 'positive',
  N: 'negative',
  NEG: 'negative',
  ND: 'negative',
  IND: 'suspect',
};

/**
 * OBX-11 statuses read by default (HL7 table 0085: P preliminary, S partial, R not verified; F
 * final, U changed to final; C corrected). Others (D deleted, W wrong, X cannot be obtained, I
 * pending, N not asked, O order detail) hold no result to store and are refused.
 */
export const DEFAULT_RESULT_STATUS: Readonly<Record<string, Hl7ReportState>> = {
  P: 'preliminary',
  S: 'preliminary',
  R: 'preliminary',
  F: 'final',
  U: 'final',
  C: 'corrected',
};

/**
 * The normalised `hl7:` section, every observation checked against the lab's assays (its name
 * under `assays:`, and a value kind that fits the assay's measure). Problems go to `problems`
 * at their key path.
 */
export function normaliseHl7Sender(
  raw: RawHl7Sender | undefined,
  labAssayNames: readonly string[],
  labAssays: ReadonlyMap<string, LabAssay>,
  file: string,
  problems: ProblemList,
): Hl7Profile | undefined {
  if (raw === undefined) return undefined;
  const observations = new Map<string, Hl7Observation>();
  for (const [code, entry] of Object.entries(raw.observations)) {
    const at = `hl7.observations.${code}`;
    const name = labAssayNames.find((candidate) => foldToken(candidate) === foldToken(entry.assay));
    if (name === undefined) {
      problems.add(file, `${at}.assay`, `names lab assay "${entry.assay}", which is not under assays: in this profile`);
      continue;
    }
    // Unresolved when the assay itself was refused (assays.yaml or the lab's entry): told there.
    const labAssay = labAssays.get(foldToken(name));
    if (labAssay !== undefined && entry.value !== 'call' && entry.value !== labAssay.measure) {
      problems.add(
        file,
        `${at}.value`,
        `is ${entry.value}, but assay ${labAssay.assayId} has measure ${labAssay.measure}: give ${labAssay.measure} or call`,
      );
      continue;
    }
    observations.set(code.trim(), { labAssayName: name, value: entry.value });
  }
  if (Object.keys(raw.observations).length === 0)
    problems.add(file, 'hl7.observations', 'names no OBX-3 code: map each observation code the lab sends to an assay');
  const facilities = typeof raw.sendingFacility === 'string' ? [raw.sendingFacility] : raw.sendingFacility;
  return Object.freeze({
    sendingFacilities: facilities.map(foldToken),
    sampleId: raw.sampleId,
    collectedOn: raw.collectedOn,
    accession: raw.accession,
    observations,
    codedResults: new Map(Object.entries(raw.codedResults ?? {}).map(([code, call]) => [code.trim(), call])),
    abnormalFlags: new Map(Object.entries(raw.abnormalFlags ?? DEFAULT_ABNORMAL_FLAGS)),
    resultStatus: new Map(Object.entries(raw.resultStatus ?? DEFAULT_RESULT_STATUS)),
  });
}
