/**
 * The normalised `hl7:` section of a lab profile (built by hl7Profile.ts). Kept apart, with no
 * import of its own, so that the configuration's types can name it without an import cycle.
 */

/** A call an OBX-8 flag or a coded OBX-5 makes (the class names of the lab's call). */
export type Hl7Call = 'positive' | 'suspect' | 'negative' | 'invalid';

/** The state of a report an OBX-11 status gives. */
export type Hl7ReportState = 'preliminary' | 'final' | 'corrected';

/** What OBX-5 of an observation holds. */
export type Hl7ValueKind = 'ct' | 'sp-ratio' | 'call';

export interface Hl7Observation {
  /** The lab's assay name (a key of the profile's `assays:`) the observation reports. */
  labAssayName: string;
  value: Hl7ValueKind;
}

export interface Hl7Profile {
  /** MSH-4 namespace IDs, folded. */
  sendingFacilities: readonly string[];
  sampleId: 'SPM-2' | 'OBR-3' | 'OBR-2';
  collectedOn: 'SPM-17' | 'OBR-7';
  accession: 'OBR-3' | 'OBR-2' | 'none';
  /** By OBX-3 identifier as written (trimmed). */
  observations: ReadonlyMap<string, Hl7Observation>;
  codedResults: ReadonlyMap<string, Hl7Call>;
  abnormalFlags: ReadonlyMap<string, Hl7Call>;
  resultStatus: ReadonlyMap<string, Hl7ReportState>;
}
