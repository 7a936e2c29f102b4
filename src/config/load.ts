/**
 * Loads the configuration folder: sites.yaml (loadSites.ts), assays.yaml (loadAssays.ts), every
 * labs/*.yaml (loadLab.ts) and corrections.yaml (loadCorrections.ts), each checked against its
 * schema (*Schema.ts), normalised once and frozen.
 */
import fs from 'node:fs';
import path from 'node:path';
import { checkAntibodySensitivity, loadAssays } from './loadAssays.js';
import { CORRECTIONS_FILE, loadCorrections } from './loadCorrections.js';
import { loadLab } from './loadLab.js';
import { loadSites } from './loadSites.js';
import { matchKey } from './names.js';
import { ProblemList } from './problems.js';
import { CONFIG_FILES } from '../workspacePaths.js';
import type { Config, LabProfile } from './types.js';

export { ConfigError, formatProblem, type ConfigProblem } from './problems.js';
export { DEFAULT_CALL_WORDS, DEFAULT_STATUS_WORDS } from './labWords.js';
export { CORRECTIONS_FILE } from './loadCorrections.js';
export {
  DEFAULT_CLEAR_AFTER_NEGATIVE_ROUNDS,
  DEFAULT_RESULT_GRACE_DAYS,
  DEFAULT_TRACKING_ROPES,
  perAssayValue,
} from './program.js';

/**
 * Loads `sites.yaml`, `assays.yaml`, every `labs/*.yaml` and `corrections.yaml` (optional) from
 * a config folder. Every file is checked, as far as its own problems allow, before anything is
 * refused: a person fixes all there is in one go.
 * @throws ConfigError with every problem found, each naming its file and key path.
 */
export function loadConfig(dir: string): Config {
  const sitesFile = path.join(dir, CONFIG_FILES.sites);
  const assaysFile = path.join(dir, CONFIG_FILES.assays);
  const labsDir = path.join(dir, CONFIG_FILES.labsDir);
  const problems = new ProblemList();
  const assays = loadAssays(assaysFile, problems);
  const assayById = assays === undefined ? undefined : new Map(assays.map((assay) => [assay.id, assay]));
  const sitesPart = loadSites(sitesFile, assayById === undefined ? undefined : new Set(assayById.keys()), problems);
  if (sitesPart !== undefined && assays !== undefined)
    problems.guard(() => checkAntibodySensitivity(sitesPart.sites, assays, sitesFile));
  let labFiles: string[] = [];
  try {
    labFiles = fs
      .readdirSync(labsDir)
      .filter((name) => /\.ya?ml$/i.test(name))
      .sort();
    if (labFiles.length === 0) problems.add(labsDir, '', 'holds no lab profile (*.yaml)');
  } catch {
    problems.add(labsDir, '', 'folder is missing: add one lab profile per YAML file');
  }
  const labs: LabProfile[] = [];
  // Lab ids are stored with every result and printed in receipts: two that differ in case only
  // would read as one lab.
  const labIds = new Map<string, { id: string; name: string }>();
  for (const name of labFiles) {
    const lab = loadLab(path.join(labsDir, name), assayById, problems);
    if (lab === undefined) continue;
    labs.push(lab);
    const earlier = labIds.get(matchKey(lab.id));
    if (earlier !== undefined) {
      const detail =
        earlier.id === lab.id
          ? `lab id ${lab.id} is used twice (also in ${earlier.name})`
          : `lab id ${lab.id} differs from lab id ${earlier.id} (${earlier.name}) in case only`;
      problems.add(path.join(labsDir, name), 'id', detail);
      continue;
    }
    labIds.set(matchKey(lab.id), { id: lab.id, name });
  }
  const corrections = loadCorrections(path.join(dir, CORRECTIONS_FILE), problems);
  problems.throwIfAny();
  // Every part loaded: a part that did not recorded a problem, and problems were thrown above.
  const { organisation, analysis, sites, ropeSheet } = sitesPart!;
  return Object.freeze({
    dir,
    organisation,
    analysis,
    sites,
    siteById: new Map(sites.map((site) => [site.id.toUpperCase(), site])),
    assays: assays!,
    assayById: assayById!,
    labs,
    labById: new Map(labs.map((lab) => [lab.id, lab])),
    corrections,
    ropeSheet,
  });
}
