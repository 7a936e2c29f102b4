/**
 * A result as the round model takes it (src/rounds/roundModel.ts `ResultInput`), with what the
 * tests' rounds share: lab northfield, assay PRRSV, no load band, cycle limit 40 (a common PCR run
 * length; common practice, no source), the lab's call agreeing with the reading. A test gives the
 * sample, the class and the Ct, and whatever else it is about.
 */
import type { ResultInput, RopeInput } from '../../src/rounds/roundModel.js';

export function resultInput(
  fields: Pick<ResultInput, 'id' | 'sampleId' | 'resultClass' | 'ct'> & Partial<ResultInput>,
): ResultInput {
  return {
    labId: 'northfield',
    assayId: 'PRRSV',
    reason: 'test',
    loadBand: null,
    cycleLimit: 40,
    callDiffers: false,
    labCall: null,
    ...fields,
  };
}

/** A rope from a rope sheet in barn `barnId` of the site, as the round model takes it. */
export function sheetRopeIn(
  siteId: string,
  barnId: string,
): (sampleId: string, penId: string, hungOn: string) => RopeInput {
  return (sampleId, penId, hungOn) => ({ sampleId, siteId, barnId, penId, hungOn, source: 'sheet' });
}
