/** sites.yaml: the organisation, the analysis settings, every site with its program and barns. */
import type { z } from 'zod';
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
import type { AnalysisSettings, Barn, Program, RopeSheetColumns, Site } from './types.js';

export interface SitesPart {
  organisation: string | undefined;
  analysis: AnalysisSettings;
  sites: Site[];
  ropeSheet: { columns: RopeSheetColumns };
}

type RawSitesFile = z.output<typeof sitesFileSchema>;
type RawSite = RawSitesFile['sites'][number];
type At = (...rest: PropertyKey[]) => string;

/** What each site of sites.yaml is loaded against. */
interface SitesContext {
  file: string;
  raw: RawSitesFile;
  assayIds: ReadonlySet<string> | undefined;
  problems: ProblemList;
  /** A rope sheet's site cell and --site match a site's id, code or name (findSite, names.ts): all three share one namespace across sites. */
  siteNames: NameRegistry;
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
  const context: SitesContext = { file, raw, assayIds, problems, siteNames: new NameRegistry(file, problems) };
  const sites = raw.sites.map((site, siteIndex) => loadSite(site, siteIndex, context));
  return {
    organisation: raw.organisation,
    analysis: Object.freeze({ ...raw.analysis }),
    sites,
    ropeSheet: Object.freeze({ columns: ropeSheetColumns(raw.ropeSheet?.columns, file, problems) }),
  };
}

/** One site: its names claimed, its program (the defaults overridden), its barns, pattern and notices. */
function loadSite(site: RawSite, siteIndex: number, context: SitesContext): Site {
  const { file, raw, assayIds, problems, siteNames } = context;
  const at: At = (...rest) => formatPath(['sites', siteIndex, ...rest]);
  const folderProblem = folderNameProblem(site.id);
  if (folderProblem !== undefined) problems.add(file, at('id'), `site id ${folderProblem}`);
  siteNames.claim(site, 'site id', site.id, at('id'));
  siteNames.claim(site, 'site code', site.code, at('code'));
  siteNames.claim(site, 'site name', site.name, at('name'));
  const overrides = site.program ?? {};
  const siteAgeGroups = new Set(site.barns.flatMap((barn) => (barn.ageGroup === undefined ? [] : [barn.ageGroup])));
  for (const key of ['ropeSensitivity', 'ropeSpecificity'] as const)
    checkPerAssayKeys(overrides[key], ['sites', siteIndex, 'program', key], file, assayIds, siteAgeGroups, problems);
  const program = normaliseProgram({ ...raw.programDefaults, ...overrides });
  const barns = loadSiteBarns(site, at, file, problems);
  checkBarnDesign(program, site, at, file, problems);
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
}

/** The site's barns, each loaded on its own; barns are found by id (upper case: barnById) and, on rope sheets, by name (foldToken). */
function loadSiteBarns(site: RawSite, at: At, file: string, problems: ProblemList): Barn[] {
  const barnNames = new NameRegistry(file, problems);
  return site.barns.flatMap((barn, barnIndex): Barn[] => {
    barnNames.claim(barn, 'barn id', barn.id, at('barns', barnIndex, 'id'));
    if (barn.name !== undefined) barnNames.claim(barn, 'barn name', barn.name, at('barns', barnIndex, 'name'));
    const built = problems.guard(() => loadBarn(barn, file, (...rest) => at('barns', barnIndex, ...rest), problems));
    return built === undefined ? [] : [built];
  });
}

/** A number of infected barns cannot exceed the site's barns (a proportion always fits). */
function checkBarnDesign(program: Program, site: RawSite, at: At, file: string, problems: ProblemList): void {
  if (program.barnDesignPrevalence?.kind !== 'barns' || program.barnDesignPrevalence.value <= site.barns.length) return;
  const fromSite = site.program?.barnDesignPrevalence !== undefined;
  problems.add(
    file,
    fromSite
      ? at('program', 'barnDesignPrevalence', 'barns')
      : formatPath(['programDefaults', 'barnDesignPrevalence', 'barns']),
    `${program.barnDesignPrevalence.value} infected barns, but site ${site.id} has ${site.barns.length} barn${site.barns.length === 1 ? '' : 's'}: give at most ${site.barns.length}, or a proportion of the barns`,
  );
}
