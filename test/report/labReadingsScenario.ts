/**
 * A small two-round scenario on the demo site hollow-creek (barn F1) in which results come from
 * two labs with different cutoffs, carry the labs' own calls, case numbers and dates, and
 * include invalid results and a lab call that disagrees with the reading. Every expected value
 * in the tests that use it is worked out by hand from the rows below.
 *
 * Round 1 (2026-08-03), lab northfield (positive below 36, suspect below 40, cycle limit 40):
 *   A1 invalid (control failed, no Ct), A2 not detected, A3 positive Ct 28.
 * Round 2 (2026-08-17), lab ostermark with cutoffs given here (positive below 37, suspect below 40,
 * cycle limit 45), case OA-0817, collected 2026-08-17 (A3's second rope 2026-08-18), reported 2026-08-20:
 *   A1 positive Ct 31.0, call "Positive" (agrees);
 *   A2 invalid with a Ct of 30 beside a failed control, call "Invalid";
 *   A3 positive Ct 36.5 (below 37), call "Negative": differs;
 *   A3 second rope, not detected, call "Positive": differs (it does not stand for the pen).
 */
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { summariseSite } from '../../src/analysis/roundSummary.js';
import { wordSummary } from '../../src/report/summaryNotices.js';
import { OutbreakCache, siteSpatial } from '../../src/analysis/spatialRound.js';
import { buildSiteRounds, type ResultInput, type RopeInput } from '../../src/rounds/roundModel.js';
import { sheetRopeIn } from '../helpers/results.js';

export const config = loadConfig(DEMO_CONFIG_DIR);
export const site = config.siteById.get('HOLLOW-CREEK')!;

const rope = sheetRopeIn(site.id, 'F1');

let nextId = 1;
const northfield = (
  sampleId: string,
  resultClass: ResultInput['resultClass'],
  ct: number | null,
  labCall: string,
): ResultInput => ({
  id: nextId++,
  labId: 'northfield',
  sampleId,
  assayId: 'PRRSV',
  ct,
  ctRaw: ct === null ? (resultClass === 'invalid' ? '' : 'Undetermined') : ct.toFixed(2),
  resultClass,
  reason: 'test',
  loadBand: null,
  positiveBelow: 36,
  suspectBelow: 40,
  cycleLimit: 40,
  callDiffers: false,
  labCall,
  accession: `NV26-0100${sampleId.slice(-1)}`,
  collectedOn: '2026-08-03',
  reportedOn: '2026-08-06',
});
const ostermark = (
  sampleId: string,
  resultClass: ResultInput['resultClass'],
  ct: number | null,
  labCall: string,
  callDiffers: boolean,
  collectedOn = '2026-08-17',
): ResultInput => ({
  id: nextId++,
  labId: 'ostermark',
  sampleId,
  assayId: 'PRRSV',
  ct,
  ctRaw: ct === null ? '0' : ct.toFixed(1).replace('.', ','),
  resultClass,
  reason: resultClass === 'positive' && ct !== null ? `Ct ${ct} below the positive cutoff 37` : 'test',
  loadBand: null,
  positiveBelow: 37,
  suspectBelow: 40,
  cycleLimit: 45,
  callDiffers,
  labCall,
  accession: 'OA-0817',
  collectedOn,
  reportedOn: '2026-08-20',
});

export const ropes: RopeInput[] = [
  rope('R1-1', 'A1', '2026-08-03'),
  rope('R1-2', 'A2', '2026-08-03'),
  rope('R1-3', 'A3', '2026-08-03'),
  rope('R2-1', 'A1', '2026-08-17'),
  rope('R2-2', 'A2', '2026-08-17'),
  rope('R2-3', 'A3', '2026-08-17'),
  rope('R2-4', 'A3', '2026-08-18'),
];

export const results: ResultInput[] = [
  northfield('R1-1', 'invalid', null, 'Invalid'),
  northfield('R1-2', 'negative', null, 'Negative'),
  northfield('R1-3', 'positive', 28, 'Positive'),
  ostermark('R2-1', 'positive', 31.0, 'Positive', false),
  ostermark('R2-2', 'invalid', 30, 'Invalid', false),
  ostermark('R2-3', 'positive', 36.5, 'Negative', true),
  ostermark('R2-4', 'negative', null, 'Positive', true, '2026-08-18'),
];

/** The rounds, summaries and spatial review of the scenario, as outputs.ts builds them. */
export function analyseScenario() {
  const rounds = buildSiteRounds(site, ropes, results);
  const confidence = siteConfidence(site, rounds);
  const summaries = summariseSite(config, site, rounds, confidence).map(wordSummary);
  const spatial = siteSpatial(site, rounds, confidence, config.analysis, new OutbreakCache(config.analysis));
  return { rounds, confidence, summaries, spatial };
}
