import fs from 'node:fs';
import path from 'node:path';
import YAML from 'yaml';
import type { z } from 'zod';
import { expandLayout, penContacts, pensByKey, type BarnLayout } from '../domain/layout.js';
import {
  assaysFileSchema,
  labProfileSchema,
  programOverridesSchema,
  programSchema,
  sitesFileSchema,
} from './schema.js';
import { foldToken } from '../util/fold.js';
import type { AnalysisSettings, Assay, Barn, Config, DesignPrevalence, LabAssay, LabProfile, PerAssayValue, Program, Site } from './types.js';

/** A configuration problem, naming the file and the key path (e.g. `sites[0].barns[1].layout.rows`). */
export class ConfigError extends Error {
  override readonly name = 'ConfigError';
  constructor(
    readonly file: string,
    readonly keyPath: string,
    readonly detail: string,
  ) {
    super(`${file}${keyPath ? ` at ${keyPath}` : ''}: ${detail}`);
  }
}

function formatPath(segments: readonly PropertyKey[]): string {
  return segments
    .map((segment, index) => (typeof segment === 'number' ? `[${segment}]` : `${index === 0 ? '' : '.'}${String(segment)}`))
    .join('');
}

function readYaml(file: string): unknown {
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (error) {
    throw new ConfigError(file, '', `cannot be read (${(error as NodeJS.ErrnoException).code ?? String(error)})`);
  }
  const doc = YAML.parseDocument(text, { prettyErrors: true });
  if (doc.errors.length > 0) {
    const first = doc.errors[0]!;
    const where = first.linePos?.[0] ? `line ${first.linePos[0].line}, column ${first.linePos[0].col}` : '';
    throw new ConfigError(file, where, `is not valid YAML: ${first.message.split('\n')[0]}`);
  }
  return doc.toJS();
}

function validate<S extends z.ZodType>(schema: S, value: unknown, file: string, prefix: readonly PropertyKey[] = []): z.output<S> {
  const result = schema.safeParse(value);
  if (!result.success) {
    const issue = result.error.issues[0]!;
    throw new ConfigError(file, formatPath([...prefix, ...issue.path]), issue.message);
  }
  return result.data;
}

function normaliseDesignPrevalence(raw: z.output<typeof programSchema>['designPrevalence']): DesignPrevalence {
  return typeof raw === 'number' ? { kind: 'proportion', value: raw } : { kind: 'pens', value: raw.pens };
}

function normalisePerAssay(raw: z.output<typeof programSchema>['ropeSensitivity']): PerAssayValue {
  if (typeof raw === 'number') return { default: raw, byAssay: {} };
  const byAssay: PerAssayValue['byAssay'] = {};
  for (const [key, value] of Object.entries(raw)) {
    if (key === 'default') continue;
    (byAssay as Record<string, unknown>)[key] =
      typeof value === 'number' ? value : { default: value['default'], byAgeGroup: Object.fromEntries(Object.entries(value).filter(([k]) => k !== 'default')) };
  }
  return { default: raw.default, byAssay };
}

/** The configured value for an assay and age group, falling back to the assay's and then the program's default. */
export function perAssayValue(value: PerAssayValue, assayId: string, ageGroup?: string): number {
  const entry = value.byAssay[assayId];
  if (entry === undefined) return value.default;
  if (typeof entry === 'number') return entry;
  return (ageGroup !== undefined ? entry.byAgeGroup[ageGroup] : undefined) ?? entry.default ?? value.default;
}

function normaliseProgram(raw: z.output<typeof programSchema>): Program {
  return Object.freeze({
    designPrevalence: normaliseDesignPrevalence(raw.designPrevalence),
    targetConfidence: raw.targetConfidence,
    ropeSensitivity: normalisePerAssay(raw.ropeSensitivity),
    ropeSpecificity: normalisePerAssay(raw.ropeSpecificity),
    roundWindowDays: raw.roundWindowDays,
    intervalDays: raw.intervalDays,
    priorFreedom: raw.priorFreedom,
    introductionPerInterval: raw.introductionPerInterval,
    ropeBudget: raw.ropeBudget,
    followUpRadius: raw.followUpRadius ?? 1.5,
    followUpRopes: raw.followUpRopes,
    sizeFor: raw.sizeFor ?? 'barn',
  });
}

function compilePattern(source: string, file: string, keyPath: string, groups: string[]): RegExp {
  let pattern: RegExp;
  try {
    pattern = new RegExp(source, 'i');
  } catch (error) {
    throw new ConfigError(file, keyPath, `is not a valid regular expression: ${(error as Error).message}`);
  }
  for (const group of groups) {
    if (!source.includes(`(?<${group}>`)) throw new ConfigError(file, keyPath, `needs a named group (?<${group}>...)`);
  }
  return pattern;
}

function loadSites(file: string): { organisation: string | undefined; analysis: AnalysisSettings; sites: Site[] } {
  const raw = validate(sitesFileSchema, readYaml(file), file);
  const defaults = raw.programDefaults;
  const siteIds = new Set<string>();
  const codes = new Set<string>();
  const sites = raw.sites.map((site, siteIndex): Site => {
    const at = (...rest: PropertyKey[]) => formatPath(['sites', siteIndex, ...rest]);
    if (siteIds.has(site.id)) throw new ConfigError(file, at('id'), `site id ${site.id} is used twice`);
    if (codes.has(site.code)) throw new ConfigError(file, at('code'), `site code ${site.code} is used twice`);
    siteIds.add(site.id);
    codes.add(site.code);
    const overrides = validate(programOverridesSchema, site.program ?? {}, file, ['sites', siteIndex, 'program']);
    const program = normaliseProgram({ ...defaults, ...overrides });
    const barnIds = new Set<string>();
    const barns = site.barns.map((barn, barnIndex): Barn => {
      if (barnIds.has(barn.id)) throw new ConfigError(file, at('barns', barnIndex, 'id'), `barn id ${barn.id} is used twice on site ${site.id}`);
      barnIds.add(barn.id);
      const rawLayout = barn.layout;
      const defaultLabels = ['A', 'B', 'C', 'D'].slice(0, rawLayout.rows);
      const layout: BarnLayout = {
        rows: rawLayout.rows,
        pensPerRow: rawLayout.pensPerRow,
        numbering: rawLayout.numbering,
        rowLabels: rawLayout.rowLabels ?? defaultLabels,
        padDigits: rawLayout.padDigits,
        penWidth: rawLayout.penWidth,
        penDepth: rawLayout.penDepth,
        alleyWidth: rawLayout.alleyWidth,
        gapsAfter: rawLayout.gapsAfter,
        gapWidth: rawLayout.gapWidth,
        empty: rawLayout.empty,
        outOfUse: rawLayout.outOfUse,
        ...(rawLayout.headCount ? { headCount: rawLayout.headCount } : {}),
      };
      let pens;
      try {
        pens = expandLayout(layout);
      } catch (error) {
        throw new ConfigError(file, at('barns', barnIndex, 'layout'), (error as Error).message);
      }
      if (!pens.some((pen) => pen.status === 'in-use')) {
        throw new ConfigError(file, at('barns', barnIndex, 'layout'), 'has no pen in use');
      }
      return Object.freeze({
        id: barn.id,
        name: barn.name ?? barn.id,
        position: barn.position,
        ageGroup: barn.ageGroup,
        layout,
        pens,
        penById: new Map(pens.map((pen) => [pen.id.toUpperCase(), pen])),
        penByKey: pensByKey(pens),
        contacts: penContacts(layout, pens),
      });
    });
    return Object.freeze({
      id: site.id,
      name: site.name,
      code: site.code,
      program,
      samplePattern: site.samplePattern ? compilePattern(site.samplePattern, file, at('samplePattern'), ['barn', 'pen']) : undefined,
      barns,
      barnById: new Map(barns.map((barn) => [barn.id.toUpperCase(), barn])),
    });
  });
  return { organisation: raw.organisation, analysis: Object.freeze({ ...raw.analysis }), sites };
}

function loadAssays(file: string): Assay[] {
  const raw = validate(assaysFileSchema, readYaml(file), file);
  const ids = new Set<string>();
  return raw.assays.map((assay, index) => {
    const at = (key: string) => formatPath(['assays', index, key]);
    if (ids.has(assay.id)) throw new ConfigError(file, at('id'), `assay id ${assay.id} is used twice`);
    ids.add(assay.id);
    if (!(assay.positiveBelow <= assay.suspectBelow)) throw new ConfigError(file, at('suspectBelow'), 'must be at or above positiveBelow');
    if (!(assay.suspectBelow <= assay.cycleLimit)) throw new ConfigError(file, at('suspectBelow'), 'must be at or below cycleLimit');
    const bands = [...assay.loadBands];
    for (let i = 1; i < bands.length; i++) {
      if (!(bands[i]!.below > bands[i - 1]!.below)) throw new ConfigError(file, formatPath(['assays', index, 'loadBands', i, 'below']), 'bands must be in increasing Ct order');
    }
    return Object.freeze({
      id: assay.id,
      name: assay.name,
      target: assay.target,
      positiveBelow: assay.positiveBelow,
      suspectBelow: assay.suspectBelow,
      cycleLimit: assay.cycleLimit,
      loadBands: bands,
      sequencingBelow: assay.sequencingBelow,
      notifiable: assay.notifiable,
      source: assay.source,
    });
  });
}

function loadLab(file: string, assayById: ReadonlyMap<string, Assay>): LabProfile {
  const raw = validate(labProfileSchema, readYaml(file), file);
  const assays = new Map<string, LabAssay>();
  for (const [labAssayName, entry] of Object.entries(raw.assays)) {
    const at = formatPath(['assays', labAssayName]);
    const assay = assayById.get(entry.assay);
    if (!assay) throw new ConfigError(file, `${at}.assay`, `names assay ${entry.assay}, which is not in assays.yaml`);
    const labAssay: LabAssay = {
      labAssayName,
      assayId: assay.id,
      positiveBelow: entry.positiveBelow ?? assay.positiveBelow,
      suspectBelow: entry.suspectBelow ?? assay.suspectBelow,
      cycleLimit: entry.cycleLimit ?? assay.cycleLimit,
    };
    if (!(labAssay.positiveBelow <= labAssay.suspectBelow && labAssay.suspectBelow <= labAssay.cycleLimit)) {
      throw new ConfigError(file, at, 'cutoffs must satisfy positiveBelow <= suspectBelow <= cycleLimit');
    }
    assays.set(foldToken(labAssayName), Object.freeze(labAssay));
  }
  return Object.freeze({
    id: raw.id,
    name: raw.name,
    fileNamePattern: raw.fileNamePattern ? compilePattern(raw.fileNamePattern, file, 'fileNamePattern', []) : undefined,
    delimiter: raw.format.delimiter,
    decimal: raw.format.decimal,
    encoding: raw.format.encoding,
    dateFormat: raw.format.dateFormat,
    skipLines: raw.format.skipLines,
    columns: {
      sampleId: raw.columns.sampleId,
      assay: raw.columns.assay,
      ct: raw.columns.ct,
      call: raw.columns.call,
      accession: raw.columns.accession,
      collectedOn: raw.columns.collectedOn,
      reportedOn: raw.columns.reportedOn,
      internalControl: raw.columns.internalControl,
      reportStatus: raw.columns.reportStatus,
    },
    notDetectedTokens: new Set(raw.notDetected.tokens.map(foldToken)),
    blankIsNotDetected: raw.notDetected.blankIsNotDetected,
    notDetectedCodes: raw.notDetected.numericCodes,
    cycleLimitIsNotDetected: raw.notDetected.cycleLimitIsNotDetected,
    controlFailedTokens: new Set(raw.controlFailedTokens.map(foldToken)),
    reissueTokens: new Set(raw.reissueTokens.map(foldToken)),
    assays,
  });
}

/**
 * Loads `sites.yaml`, `assays.yaml` and every `labs/*.yaml` from a config folder.
 * @throws ConfigError naming the file and the key path of the first problem.
 */
export function loadConfig(dir: string): Config {
  const sitesFile = path.join(dir, 'sites.yaml');
  const assaysFile = path.join(dir, 'assays.yaml');
  const labsDir = path.join(dir, 'labs');
  const { organisation, analysis, sites } = loadSites(sitesFile);
  const assays = loadAssays(assaysFile);
  const assayById = new Map(assays.map((assay) => [assay.id, assay]));
  let labFiles: string[] = [];
  try {
    labFiles = fs
      .readdirSync(labsDir)
      .filter((name) => /\.ya?ml$/i.test(name))
      .sort();
  } catch {
    throw new ConfigError(labsDir, '', 'folder is missing: add one lab profile per YAML file');
  }
  if (labFiles.length === 0) throw new ConfigError(labsDir, '', 'holds no lab profile (*.yaml)');
  const labs = labFiles.map((name) => loadLab(path.join(labsDir, name), assayById));
  const labIds = new Set<string>();
  for (const [index, lab] of labs.entries()) {
    if (labIds.has(lab.id)) throw new ConfigError(path.join(labsDir, labFiles[index]!), 'id', `lab id ${lab.id} is used twice`);
    labIds.add(lab.id);
  }
  return Object.freeze({
    dir,
    organisation,
    analysis,
    sites,
    siteById: new Map(sites.map((site) => [site.id.toUpperCase(), site])),
    assays,
    assayById,
    labs,
    labById: new Map(labs.map((lab) => [lab.id, lab])),
  });
}
