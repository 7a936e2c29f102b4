/** assays.yaml: each assay with its measure and cutoffs, and the checks that span assays and sites. */
import type { z } from 'zod';
import { assaysFileSchema } from './assaysSchema.js';
import { NameRegistry } from './nameRegistry.js';
import { ConfigError, type ProblemList } from './problems.js';
import { readValid } from './readYaml.js';
import { formatPath } from './schemaProblems.js';
import type { Assay, Site, SpAssay } from './types.js';

export function loadAssays(file: string, problems: ProblemList): Assay[] | undefined {
  const raw = readValid(assaysFileSchema, file, problems);
  if (raw === undefined) return undefined;
  // Assay ids match exactly, but two that differ in case only would read as one in every report.
  const ids = new NameRegistry(file, problems);
  const assays: Assay[] = [];
  raw.assays.forEach((assay, index) => {
    const at = (key: string) => formatPath(['assays', index, key]);
    ids.claim(assay, 'assay id', assay.id, at('id'));
    const common = {
      id: assay.id,
      name: assay.name,
      target: assay.target,
      notifiable: assay.notifiable,
      source: assay.source,
    };
    if (assay.measure === 'sp-ratio') {
      const sp = problems.guard(() => spAssay(assay, common, file, index));
      if (sp !== undefined) assays.push(Object.freeze(sp));
      return;
    }
    // The schema requires these for a Ct assay (measure ct).
    const positiveBelow = assay.positiveBelow!;
    const suspectBelow = assay.suspectBelow!;
    const cycleLimit = assay.cycleLimit!;
    if (!(positiveBelow <= suspectBelow)) problems.add(file, at('suspectBelow'), 'must be at or above positiveBelow');
    if (!(suspectBelow <= cycleLimit)) problems.add(file, at('suspectBelow'), 'must be at or below cycleLimit');
    const bands = assay.loadBands!.map((band) => ({ name: band.name, below: band.below! }));
    for (let i = 1; i < bands.length; i++) {
      if (!(bands[i]!.below > bands[i - 1]!.below))
        problems.add(
          file,
          formatPath(['assays', index, 'loadBands', i, 'below']),
          'bands must be in increasing Ct order',
        );
    }
    assays.push(
      Object.freeze({
        ...common,
        measure: 'ct',
        positiveBelow,
        suspectBelow,
        cycleLimit,
        loadBands: bands,
        sequencingBelow: assay.sequencingBelow,
      }),
    );
  });
  problems.guard(() => checkPairs(assays, file));
  return assays;
}

/** An antibody ELISA (measure sp-ratio): S/P cutoffs, optional S/P bands (highest first). */
function spAssay(
  assay: z.output<typeof assaysFileSchema>['assays'][number],
  common: Omit<SpAssay, 'measure' | 'positiveAtOrAbove' | 'suspectAtOrAbove' | 'loadBands' | 'pairedWith'>,
  file: string,
  index: number,
): SpAssay {
  const positiveAtOrAbove = assay.positiveAtOrAbove!;
  if (assay.suspectAtOrAbove !== undefined && !(assay.suspectAtOrAbove <= positiveAtOrAbove)) {
    throw new ConfigError(
      file,
      formatPath(['assays', index, 'suspectAtOrAbove']),
      'must be at or below positiveAtOrAbove (the suspect band lies just below the positive cutoff)',
    );
  }
  const bands = (assay.loadBands ?? []).map((band) => ({ name: band.name, atOrAbove: band.atOrAbove! }));
  for (let i = 1; i < bands.length; i++) {
    if (!(bands[i]!.atOrAbove < bands[i - 1]!.atOrAbove))
      throw new ConfigError(
        file,
        formatPath(['assays', index, 'loadBands', i, 'atOrAbove']),
        'S/P bands must be in decreasing S/P order',
      );
  }
  return {
    ...common,
    measure: 'sp-ratio',
    positiveAtOrAbove,
    suspectAtOrAbove: assay.suspectAtOrAbove,
    loadBands: bands,
    pairedWith: assay.pairedWith,
  };
}

/** `pairedWith` names a Ct assay of the same file: the PCR assay whose results stand beside the antibody's. */
function checkPairs(assays: readonly Assay[], file: string): void {
  assays.forEach((assay, index) => {
    if (assay.measure !== 'sp-ratio' || assay.pairedWith === undefined) return;
    const other = assays.find((candidate) => candidate.id === assay.pairedWith);
    const at = formatPath(['assays', index, 'pairedWith']);
    if (other === undefined)
      throw new ConfigError(file, at, `names assay ${assay.pairedWith}, which is not in assays.yaml`);
    if (other.measure !== 'ct')
      throw new ConfigError(
        file,
        at,
        `names assay ${other.id}, which is not a Ct (PCR) assay: an antibody assay pairs with the PCR assay of the same pathogen`,
      );
  });
}

/**
 * An antibody assay needs a rope sensitivity of its own: the chance that the rope of an exposed
 * pen tests antibody positive is not the chance that an infected pen's rope tests PCR positive,
 * so the program default (set for PCR) is never used for it silently.
 */
export function checkAntibodySensitivity(sites: readonly Site[], assays: readonly Assay[], file: string): void {
  for (const assay of assays) {
    if (assay.measure !== 'sp-ratio') continue;
    const missing = sites.filter((site) => site.program.ropeSensitivity.byAssay[assay.id] === undefined);
    if (missing.length === 0) continue;
    const keyPath =
      missing.length === sites.length
        ? formatPath(['programDefaults', 'ropeSensitivity', assay.id])
        : formatPath(['sites', sites.indexOf(missing[0]!), 'program', 'ropeSensitivity', assay.id]);
    throw new ConfigError(
      file,
      keyPath,
      `is missing: ${assay.id} is an antibody assay (measure sp-ratio) and needs its own rope sensitivity, the chance that the rope of a pen exposed at the design prevalence tests antibody positive; the PCR default does not apply`,
    );
  }
}
