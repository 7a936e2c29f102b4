/** sites.yaml: the organisation, the analysis settings, every site with its program and barns. */
import { loadBarn } from './loadBarn.js';
import { ropeSheetColumns } from './loadRopeSheet.js';
import { NameRegistry } from './nameRegistry.js';
import { folderNameProblem } from './names.js';
import { compilePattern } from './pattern.js';
import type { ProblemList } from './problems.js';
import { checkPerAssayKeys, normaliseProgram } from './program.js';
import { readValid } from './readYaml.js';
import { formatPath } from './schemaProblems.js';
import { normaliseAlerts, normaliseHerdStatus } from './siteNotices.js';
import { sitesFileSchema } from './sitesSchema.js';
import type { AnalysisSettings, Barn, RopeSheetColumns, Site } from './types.js';

export interface SitesPart {
  organisation: string | undefined;
  analysis: AnalysisSettings;
  sites: Site[];
  ropeSheet: { columns: RopeSheetColumns };
}

export function loadSites(
  file: string,
  assayIds: ReadonlySet<string> | undefined,
  problems: ProblemList,
): SitesPart | undefined {
  const raw = readValid(sitesFileSchema, file, problems);
  if (raw === undefined) return undefined;
  const defaults = raw.programDefaults;
  const allAgeGroups = new Set(
    raw.sites.flatMap((site) => site.barns.flatMap((barn) => (barn.ageGroup === undefined ? [] : [barn.ageGroup]))),
  );
  for (const key of ['ropeSensitivity', 'ropeSpecificity'] as const)
    checkPerAssayKeys(defaults[key], ['programDefaults', key], file, assayIds, allAgeGroups, problems);
  // A rope sheet's site cell and --site match a site's id, code or name (findSite, names.ts):
  // all three share one namespace across sites.
  const siteNames = new NameRegistry(file, problems);
  const sites = raw.sites.map((site, siteIndex): Site => {
    const at = (...rest: PropertyKey[]) => formatPath(['sites', siteIndex, ...rest]);
    const folderProblem = folderNameProblem(site.id);
    if (folderProblem !== undefined) problems.add(file, at('id'), `site id ${folderProblem}`);
    siteNames.claim(site, 'site id', site.id, at('id'));
    siteNames.claim(site, 'site code', site.code, at('code'));
    siteNames.claim(site, 'site name', site.name, at('name'));
    const overrides = site.program ?? {};
    const siteAgeGroups = new Set(site.barns.flatMap((barn) => (barn.ageGroup === undefined ? [] : [barn.ageGroup])));
    for (const key of ['ropeSensitivity', 'ropeSpecificity'] as const)
      checkPerAssayKeys(overrides[key], ['sites', siteIndex, 'program', key], file, assayIds, siteAgeGroups, problems);
    const program = normaliseProgram({ ...defaults, ...overrides });
    // Barns are found by id (upper case: barnById) and, on rope sheets, by name (foldToken).
    const barnNames = new NameRegistry(file, problems);
    const barns = site.barns.flatMap((barn, barnIndex): Barn[] => {
      barnNames.claim(barn, 'barn id', barn.id, at('barns', barnIndex, 'id'));
      if (barn.name !== undefined) barnNames.claim(barn, 'barn name', barn.name, at('barns', barnIndex, 'name'));
      const built = problems.guard(() => loadBarn(barn, file, (...rest) => at('barns', barnIndex, ...rest), problems));
      return built === undefined ? [] : [built];
    });
    // A number of infected barns cannot exceed the site's barns (a proportion always fits).
    if (program.barnDesignPrevalence?.kind === 'barns' && program.barnDesignPrevalence.value > site.barns.length) {
      const fromSite = site.program?.barnDesignPrevalence !== undefined;
      problems.add(
        file,
        fromSite
          ? at('program', 'barnDesignPrevalence', 'barns')
          : formatPath(['programDefaults', 'barnDesignPrevalence', 'barns']),
        `${program.barnDesignPrevalence.value} infected barns, but site ${site.id} has ${site.barns.length} barn${site.barns.length === 1 ? '' : 's'}: give at most ${site.barns.length}, or a proportion of the barns`,
      );
    }
    const samplePattern = site.samplePattern
      ? problems.guard(() => compilePattern(site.samplePattern!, file, at('samplePattern'), ['barn', 'pen']))
      : undefined;
    const herdStatus = problems.guard(() =>
      normaliseHerdStatus(site.herdStatus, raw.herdStatusCategories, file, at('herdStatus')),
    );
    return Object.freeze({
      id: site.id,
      name: site.name,
      code: site.code,
      program,
      samplePattern,
      barns,
      barnById: new Map(barns.map((barn) => [barn.id.toUpperCase(), barn])),
      alerts: normaliseAlerts(site.alerts),
      herdStatus,
    });
  });
  return {
    organisation: raw.organisation,
    analysis: Object.freeze({ ...raw.analysis }),
    sites,
    ropeSheet: Object.freeze({ columns: ropeSheetColumns(raw.ropeSheet?.columns, file, problems) }),
  };
}
