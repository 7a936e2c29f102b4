/**
 * The lab profile's hl7 section: every OBX-3 mapping names one of the lab's assays with a value
 * kind that fits the assay's measure, unknown keys are refused at their key path, and the
 * defaults (HL7 table 0085 result statuses, table 0078 abnormal flags; from memory) apply when
 * the profile gives none.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config/load.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

function withHl7(section: string) {
  const ws = workspace();
  const file = path.join(ws.paths.configDir, 'labs', 'brackenridge.yaml');
  const text = fs.readFileSync(file, 'utf8');
  fs.writeFileSync(file, `${text.slice(0, text.indexOf('hl7:'))}hl7:\n${section}`);
  return () => loadConfig(ws.paths.configDir);
}

function problems(load: () => unknown) {
  try {
    load();
  } catch (error) {
    if (error instanceof ConfigError) return error.problems.map((problem) => `${problem.keyPath}: ${problem.detail}`);
    throw error;
  }
  return [];
}

describe('hl7 section of a lab profile', () => {
  it("loads a lab's hl7 section with the defaults for OBX-11 statuses and OBX-8 flags", () => {
    const lab = withHl7(
      '  sendingFacility: BRAHL\n  observations:\n    X1: { assay: IAV M-gene rRT-PCR, value: ct }\n',
    )().labById.get('brackenridge')!;
    expect(lab.hl7).toMatchObject({
      sendingFacilities: ['brahl'],
      sampleId: 'SPM-2',
      collectedOn: 'SPM-17',
      accession: 'OBR-3',
    });
    expect(Object.fromEntries(lab.hl7!.resultStatus)).toEqual({
      P: 'preliminary',
      S: 'preliminary',
      R: 'preliminary',
      F: 'final',
      U: 'final',
      C: 'corrected',
    });
    expect(lab.hl7!.abnormalFlags.get('A')).toBe('positive');
  });

  it('refuses an observation naming no assay of the lab, and an S/P value for a PCR assay, at their key paths', () => {
    const found = problems(
      withHl7(
        '  sendingFacility: BRAHL\n  observations:\n    X1: { assay: No Such Test, value: ct }\n    X2: { assay: IAV M-gene rRT-PCR, value: sp-ratio }\n',
      ),
    );
    expect(found).toEqual([
      expect.stringMatching(/^hl7\.observations\.X1\.assay: names lab assay "No Such Test"/),
      expect.stringMatching(/^hl7\.observations\.X2\.value: is sp-ratio, but assay IAV has measure ct/),
    ]);
  });

  it('refuses an unknown key and a sample-ID place HL7 does not offer', () => {
    const found = problems(
      withHl7('  sendingFacility: BRAHL\n  sampleID: SPM-2\n  collectedOn: PID-7\n  observations: {}\n'),
    );
    expect(found.some((line) => line.startsWith('hl7') && line.includes('sampleID'))).toBe(true);
    expect(found.some((line) => line.startsWith('hl7.collectedOn'))).toBe(true);
  });
});
