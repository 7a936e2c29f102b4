/**
 * A round with alerts for the delivery tests: the rope sheet and results of the end-to-end
 * pipeline test (one PRRSV positive and one suspect in barn F1, a rope of barn F3 that never
 * came back), written with the demo scenario's exporters into a workspace whose sites.yaml is
 * the demo's with one site edited.
 */
import YAML from 'yaml';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { demoText } from '../config/configCases.js';
import type { TestWorkspace, TestWorkspaceOptions } from '../helpers/workspace.js';

export const ROPES = [
  { sampleId: 'HC-0803-F1-01', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
  { sampleId: 'HC-0803-F1-02', barnId: 'F1', penId: 'A4', hungOn: '2026-08-03' },
  { sampleId: 'HC-0803-F1-03', barnId: 'F1', penId: 'B7', hungOn: '2026-08-03' },
  { sampleId: 'HC-0803-F3-01', barnId: 'F3', penId: 'N2', hungOn: '2026-08-04' },
];

export const RESULTS = northfieldExport(
  [
    { sampleId: 'HC-0803-F1-01', assay: 'PRRSV', ct: 28.4, collectedOn: '2026-08-03' },
    { sampleId: 'HC-0803-F1-02', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' },
    { sampleId: 'HC-0803-F1-03', assay: 'PRRSV', ct: 37.1, collectedOn: '2026-08-03' },
  ],
  '2026-08-06',
  1,
);

/** Workspace options: the demo config with `edit` applied to the first site (hollow-creek) of sites.yaml. */
export function withSite(
  edit: (site: Record<string, unknown>, doc: Record<string, unknown>) => void,
): TestWorkspaceOptions {
  const doc = YAML.parse(demoText('sites.yaml')) as { sites: Record<string, unknown>[] };
  edit(doc.sites[0]!, doc);
  return { configFiles: { 'sites.yaml': YAML.stringify(doc) } };
}

/** Drops the rope sheet, then the results: one round of hollow-creek with alerts. */
export async function dropRound(ws: TestWorkspace): Promise<void> {
  await ws.drop('hollow-creek_ropes.csv', ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, ROPES));
  await ws.drop('nvdl_results_2026-08-06.csv', RESULTS);
}
