import fs from 'node:fs';
import path from 'node:path';
import YAML from 'yaml';
import type { z } from 'zod';
import { canonicalPenKey, expandLayout, penContacts, pensByKey, type BarnLayout, type Pen } from '../domain/layout.js';
import {
  assaysFileSchema,
  correctionsFileSchema,
  type labAssaySchema,
  labProfileSchema,
  type programSchema,
  sitesFileSchema,
} from './schema.js';
import { foldToken } from '../util/fold.js';
import { wordKey } from '../util/words.js';
import { looksLikePlannedId, parseSampleId } from '../plan/sampleId.js';
import { dateFormatProblem } from './dateFormat.js';
import { folderNameProblem, matchKey } from './names.js';
import { didYouMean } from './nearest.js';
import { compileConfiguredPattern, PatternSyntaxError, type ConfiguredPattern } from './pattern.js';
import { ConfigError, ProblemList } from './problems.js';
import { ROPE_SHEET_COLUMN_ORDER, ROPE_SHEET_MEANING, ropeColumnNames, ropeHeaderKey } from './ropeSheet.js';
import { formatPath, schemaProblems } from './schemaProblems.js';
import { normaliseHl7Sender } from './hl7Profile.js';
import { groupProblems, inPlacementOrder } from '../rounds/pigGroups.js';
import { normaliseAlerts, normaliseHerdStatus } from './siteNotices.js';
import type {
  AnalysisSettings,
  Assay,
  Barn,
  CallClass,
  Config,
  DesignPrevalence,
  LabAssay,
  LabProfile,
  PerAssayValue,
  Program,
  ReportStatusKind,
  RopeSheetColumn,
  RopeSheetColumns,
  SampleIdCorrection,
  Site,
  SpAssay,
} from './types.js';

export { ConfigError, formatProblem, type ConfigProblem } from './problems.js';

/** Confirmed sample-ID corrections, beside sites.yaml (optional). */
export const CORRECTIONS_FILE = 'corrections.yaml';

/**
 * How far one YAML anchor may be expanded: its uses times the aliases nested in it (the yaml
 * package's maxAliasCount). The package's default, 100, would refuse one barn layout shared by
 * a hundred barns; a thousand still stops nested aliases that multiply ("billion laughs") at
 * the second or third level.
 */
const MAX_YAML_ALIASES = 1000;

function readYaml(file: string): unknown {
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (error) {
    throw new ConfigError(file, '', `cannot be read (${(error as NodeJS.ErrnoException).code ?? String(error)})`);
  }
  const doc = YAML.parseDocument(text, { prettyErrors: true });
  if (doc.errors.length > 0) {
    // The first syntax error only: the parser's later errors mostly follow from it.
    const first = doc.errors[0]!;
    const where = first.linePos?.[0] ? `line ${first.linePos[0].line}, column ${first.linePos[0].col}` : '';
    throw new ConfigError(file, where, `is not valid YAML: ${first.message.split('\n')[0]}`);
  }
  try {
    // Aliases are expanded here; past the limit the yaml package throws a ReferenceError
    // (yaml 2 docs, ToJSOptions.maxAliasCount).
    return doc.toJS({ maxAliasCount: MAX_YAML_ALIASES });
  } catch (error) {
    const detail = (error as Error).message;
    if (/alias/i.test(detail)) {
      throw new ConfigError(
        file,
        '',
        `expands YAML aliases (*name) too far: an anchor's uses times the aliases inside it exceed ${MAX_YAML_ALIASES}, as in a "billion laughs" file; write the values out or use fewer nested aliases`,
      );
    }
    throw new ConfigError(file, '', `cannot be read as YAML data: ${detail}`);
  }
}

/**
 * Reads one file and checks it against `schema`: its data, or undefined with every problem
 * recorded. An empty file is `empty` when given (an optional file may be empty).
 */
function readValid<S extends z.ZodType>(
  schema: S,
  file: string,
  problems: ProblemList,
  empty?: unknown,
): z.output<S> | undefined {
  let value: unknown;
  try {
    value = readYaml(file);
  } catch (error) {
    if (!(error instanceof ConfigError)) throw error;
    problems.addAll(error.problems);
    return undefined;
  }
  if (value === null || value === undefined) {
    if (empty === undefined) {
      problems.add(file, '', 'is empty');
      return undefined;
    }
    value = empty;
  }
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  problems.addAll(schemaProblems(schema, value, result.error.issues, file));
  return undefined;
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
      typeof value === 'number'
        ? value
        : {
            default: value['default'],
            byAgeGroup: Object.fromEntries(Object.entries(value).filter(([k]) => k !== 'default')),
          };
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

/** Days after a round's last rope date until its results are due, when the program does not say. */
export const DEFAULT_RESULT_GRACE_DAYS = 7;
/**
 * Two negative rounds in a row before a positive barn is monitored no more: one negative round
 * after positives is too easily a gap in shedding (common practice, no source). The program may
 * say otherwise (`clearAfterNegativeRounds`).
 */
export const DEFAULT_CLEAR_AFTER_NEGATIVE_ROUNDS = 2;
/** Four fixed tracking ropes per positive barn: one in each quarter of a one-alley barn (a setting, not a sample size). */
export const DEFAULT_TRACKING_ROPES = 4;

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
    // Shipping to the lab and a PCR run take a few days (common practice, no source); the
    // program sets its own.
    resultGraceDays: raw.resultGraceDays ?? DEFAULT_RESULT_GRACE_DAYS,
    barnDesignPrevalence:
      raw.barnDesignPrevalence === undefined
        ? undefined
        : typeof raw.barnDesignPrevalence === 'number'
          ? { kind: 'proportion' as const, value: raw.barnDesignPrevalence }
          : { kind: 'barns' as const, value: raw.barnDesignPrevalence.barns },
    clearAfterNegativeRounds: raw.clearAfterNegativeRounds ?? DEFAULT_CLEAR_AFTER_NEGATIVE_ROUNDS,
    trackingRopes: raw.trackingRopes ?? DEFAULT_TRACKING_ROPES,
    pooling:
      raw.pooling === undefined
        ? undefined
        : Object.freeze({
            poolSize: raw.pooling.poolSize,
            poolSensitivity: raw.pooling.poolSensitivity,
            poolSpecificity: raw.pooling.poolSpecificity ?? 1,
          }),
  });
}

function compilePattern(source: string, file: string, keyPath: string, groups: readonly string[]): ConfiguredPattern {
  try {
    return compileConfiguredPattern(source, groups);
  } catch (error) {
    if (error instanceof PatternSyntaxError) throw new ConfigError(file, keyPath, error.message);
    throw error;
  }
}

/**
 * Refuses the second of two names that the code would take for the same thing (compared as
 * matchKey compares them), at the key path of the second. One owner may repeat its own name
 * (a barn whose name is its id).
 */
class NameRegistry {
  private readonly seen = new Map<string, { owner: unknown; what: string; value: string; keyPath: string }>();
  constructor(
    private readonly file: string,
    private readonly problems: ProblemList,
  ) {}

  claim(owner: unknown, what: string, value: string, keyPath: string): void {
    const key = matchKey(value);
    const earlier = this.seen.get(key);
    if (earlier === undefined) {
      this.seen.set(key, { owner, what, value, keyPath });
    } else if (earlier.owner !== owner) {
      const detail =
        earlier.value === value && earlier.what === what
          ? `${what} ${value} is used twice (also at ${earlier.keyPath})`
          : `${what} ${JSON.stringify(value)} is the same name as ${earlier.what} ${JSON.stringify(earlier.value)} at ${earlier.keyPath}: names are matched ignoring case and spacing`;
      this.problems.add(this.file, keyPath, detail);
    }
  }
}

/**
 * Refuses per-assay keys (ropeSensitivity, ropeSpecificity) that name no assay: they are looked
 * up by exact assay id, so a misspelt key would silently leave the default in force. An
 * age-group key that differs from a barn's age group only in case or spacing is refused too.
 */
function checkPerAssayKeys(
  raw: unknown,
  prefix: readonly PropertyKey[],
  file: string,
  assayIds: ReadonlySet<string> | undefined,
  ageGroups: ReadonlySet<string>,
  problems: ProblemList,
): void {
  // Without a readable assays.yaml there is nothing to check the keys against.
  if (raw === null || typeof raw !== 'object' || assayIds === undefined) return;
  const assayByKey = new Map([...assayIds].map((id) => [matchKey(id), id]));
  const ageGroupByKey = new Map([...ageGroups].map((group) => [matchKey(group), group]));
  for (const [key, value] of Object.entries(raw)) {
    if (key === 'default') continue;
    if (!assayIds.has(key)) {
      const near = assayByKey.get(matchKey(key));
      const hint = near
        ? ` (assay ids match exactly: write ${near})`
        : didYouMean(key, assayIds)
          ? `: ${didYouMean(key, assayIds)}`
          : '';
      problems.add(file, formatPath([...prefix, key]), `names assay ${key}, which is not in assays.yaml${hint}`);
      continue;
    }
    if (value === null || typeof value !== 'object') continue;
    for (const group of Object.keys(value)) {
      const near = ageGroupByKey.get(matchKey(group));
      if (group !== 'default' && !ageGroups.has(group) && near !== undefined) {
        problems.add(
          file,
          formatPath([...prefix, key, group]),
          `age group ${JSON.stringify(group)} differs from the barns' age group ${JSON.stringify(near)}; age groups match exactly`,
        );
      }
    }
  }
}

interface SitesPart {
  organisation: string | undefined;
  analysis: AnalysisSettings;
  sites: Site[];
  ropeSheet: { columns: RopeSheetColumns };
}

function loadSites(
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
  // A rope sheet's site cell and --site match a site's id, code or name (rows.ts findSite,
  // cli/commands.ts): all three share one namespace across sites.
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

type RawBarn = z.output<typeof sitesFileSchema>['sites'][number]['barns'][number];

/** One barn: its layout expanded and checked. @throws ConfigError when the layout cannot be expanded. */
function loadBarn(barn: RawBarn, file: string, at: (...rest: PropertyKey[]) => string, problems: ProblemList): Barn {
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
    empty: [],
    outOfUse: [],
    ...(rawLayout.headCount ? { headCount: rawLayout.headCount } : {}),
  };
  let pens: Pen[];
  try {
    // First without statuses, to know the pens the lists may name.
    const allPens = expandLayout(layout);
    layout.empty = resolvePenRefs(
      rawLayout.empty,
      allPens,
      layout,
      (index) => at('layout', 'empty', index),
      file,
      problems,
    );
    layout.outOfUse = resolvePenRefs(
      rawLayout.outOfUse,
      allPens,
      layout,
      (index) => at('layout', 'outOfUse', index),
      file,
      problems,
    );
    pens = expandLayout(layout);
  } catch (error) {
    if (error instanceof RangeError) throw new ConfigError(file, at('layout'), error.message);
    throw error;
  }
  checkPenKeys(pens, layout, file, (...rest) => at('layout', ...rest), problems);
  if (!pens.some((pen) => pen.status === 'in-use')) problems.add(file, at('layout'), 'has no pen in use');
  const groups = (barn.groups ?? []).map((group) =>
    Object.freeze({
      id: group.id,
      label: group.label ?? group.id,
      placedOn: group.placedOn,
      closedOn: group.closedOn ?? null,
    }),
  );
  for (const problem of groupProblems(groups))
    problems.add(file, at('groups', problem.index, problem.key), problem.detail);
  return Object.freeze({
    id: barn.id,
    name: barn.name ?? barn.id,
    position: barn.position,
    ageGroup: barn.ageGroup,
    layout,
    groups: Object.freeze(inPlacementOrder(groups)),
    pens,
    penById: new Map(pens.map((pen) => [pen.id.toUpperCase(), pen])),
    penByKey: pensByKey(pens),
    contacts: penContacts(layout, pens),
  });
}

/**
 * The pen ids an `empty` or `outOfUse` list names. A number (written without quotes, which YAML
 * reads as a number) is the pen of that number as painted: 7 is pen 07 in a padded layout. A
 * text must be the pen's label as the layout writes it, like head counts.
 */
function resolvePenRefs(
  refs: readonly (string | number)[],
  pens: readonly Pen[],
  layout: BarnLayout,
  at: (index: number) => string,
  file: string,
  problems: ProblemList,
): string[] {
  const ids = new Set(pens.map((pen) => pen.id));
  const byKey = pensByKey(pens);
  const resolved: string[] = [];
  refs.forEach((ref, index) => {
    const text = String(ref);
    if (typeof ref === 'string' && ids.has(ref)) {
      resolved.push(ref);
      return;
    }
    const pen = byKey.get(canonicalPenKey(text));
    if (typeof ref === 'number' && pen !== undefined) {
      resolved.push(pen.id);
      return;
    }
    const hint =
      pen !== undefined
        ? ` (write ${pen.id}, as the layout labels it)`
        : layout.numbering === 'per-row' && /^\d+$/.test(text)
          ? ` (pens are numbered per row: write the row label too, e.g. ${layout.rowLabels[0] ?? 'A'}${text})`
          : '';
    problems.add(file, at(index), `names pen ${text}, which is not in the layout${hint}`);
  });
  return resolved;
}

/**
 * The header names each rope-sheet column accepts: its own name, then the configured names or
 * the default synonyms. A name (as compared: case, spaces and punctuation ignored) may belong to
 * one column only, or a header cell could be read as either; a clash is told at the configured
 * name.
 */
function ropeSheetColumns(
  configured: Partial<Record<RopeSheetColumn, string | readonly string[]>> | undefined,
  file: string,
  problems: ProblemList,
): RopeSheetColumns {
  type Claim = { column: RopeSheetColumn; name: string; keyPath: string | undefined };
  const claims = new Map<string, Claim>();
  const columns = {} as Record<RopeSheetColumn, readonly string[]>;
  for (const column of ROPE_SHEET_COLUMN_ORDER) {
    const given = configured?.[column];
    const list = given === undefined ? undefined : typeof given === 'string' ? [given] : given;
    const names = ropeColumnNames(column, list);
    columns[column] = Object.freeze(names);
    for (const name of names) {
      const index = list?.indexOf(name) ?? -1;
      const keyPath =
        index < 0
          ? undefined
          : typeof given === 'string'
            ? `ropeSheet.columns.${column}`
            : `ropeSheet.columns.${column}[${index}]`;
      const key = ropeHeaderKey(name);
      if (key === '') {
        problems.add(
          file,
          keyPath ?? `ropeSheet.columns.${column}`,
          `${JSON.stringify(name)} has no letter or digit, so no header cell can match it`,
        );
        continue;
      }
      const earlier = claims.get(key);
      if (earlier === undefined) {
        claims.set(key, { column, name, keyPath });
        continue;
      }
      if (earlier.column === column) continue;
      const describe = (claim: Claim) =>
        claim.keyPath === undefined
          ? `a default name of the ${claim.column} column (${ROPE_SHEET_MEANING[claim.column]})`
          : `the ${claim.column} column's name at ${claim.keyPath}`;
      const [told, other] =
        keyPath !== undefined ? [{ column, name, keyPath }, earlier] : [earlier, { column, name, keyPath }];
      const remedy =
        other.keyPath === undefined
          ? `; to use it for ${told.column}, give ropeSheet.columns.${other.column} names of its own`
          : '';
      problems.add(
        file,
        told.keyPath ?? `ropeSheet.columns.${told.column}`,
        `${JSON.stringify(told.name)} is also ${describe(other)}: a header name may belong to one column only (case, spaces and punctuation ignored)${remedy}`,
      );
    }
  }
  return Object.freeze(columns);
}

/**
 * Refuses row labels, and pens, that the code would take for one another: results and rope
 * sheets find a pen by its canonical key (canonicalPenKey: "a01" is A1), so rows labelled A and
 * a, or A and A0 (A01 and A1), would put ropes in the wrong pen. Head counts must name pens.
 */
function checkPenKeys(
  pens: readonly Pen[],
  layout: BarnLayout,
  file: string,
  at: (...rest: PropertyKey[]) => string,
  problems: ProblemList,
): void {
  const labels = new Map<string, number>();
  let labelsClash = false;
  layout.rowLabels.forEach((label, row) => {
    const earlier = labels.get(matchKey(label));
    if (earlier !== undefined) {
      problems.add(
        file,
        at('rowLabels', row),
        `row label ${JSON.stringify(label)} is the same as row label ${JSON.stringify(layout.rowLabels[earlier])} when matched (case and spacing are ignored)`,
      );
      labelsClash = true;
      return;
    }
    labels.set(matchKey(label), row);
  });
  // Rows that match give pens that match: told once, at the row label.
  if (labelsClash) return;
  const byKey = new Map<string, Pen>();
  for (const pen of pens) {
    const key = canonicalPenKey(pen.id);
    const earlier = byKey.get(key);
    if (earlier !== undefined) {
      problems.add(
        file,
        layout.numbering === 'per-row' ? at('rowLabels', pen.row) : at('numbering'),
        `pens ${earlier.id} and ${pen.id} are the same pen when matched (${key}: case, spaces and leading zeros are ignored); choose row labels that do not end in a digit`,
      );
      // One such clash per barn tells the cause; the rest of the row would repeat it.
      break;
    }
    byKey.set(key, pen);
  }
  const ids = new Set(pens.map((pen) => pen.id));
  for (const id of Object.keys(layout.headCount?.pens ?? {})) {
    if (ids.has(id)) continue;
    const near = byKey.get(canonicalPenKey(id));
    problems.add(
      file,
      at('headCount', 'pens', id),
      `names pen ${id}, which is not in the layout${near === undefined ? '' : ` (write ${near.id}, as the layout labels it)`}`,
    );
  }
}

function loadAssays(file: string, problems: ProblemList): Assay[] | undefined {
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
function checkAntibodySensitivity(sites: readonly Site[], assays: readonly Assay[], file: string): void {
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

function loadLab(
  file: string,
  assayById: ReadonlyMap<string, Assay> | undefined,
  problems: ProblemList,
): LabProfile | undefined {
  const raw = readValid(labProfileSchema, file, problems);
  if (raw === undefined) return undefined;
  const dateProblem = dateFormatProblem(raw.format.dateFormat);
  if (dateProblem !== undefined) problems.add(file, 'format.dateFormat', dateProblem);
  const assays = new Map<string, LabAssay>();
  // An export's assay cell is looked up folded (foldToken): two names that fold alike are one.
  const labAssayNames = new NameRegistry(file, problems);
  for (const [labAssayName, entry] of Object.entries(raw.assays)) {
    const at = formatPath(['assays', labAssayName]);
    labAssayNames.claim(labAssayName, 'lab assay name', labAssayName, at);
    // Without a readable assays.yaml there is nothing to check the reference against.
    if (assayById === undefined) continue;
    const assay = assayById.get(entry.assay);
    if (!assay) {
      const near = didYouMean(entry.assay, assayById.keys());
      problems.add(
        file,
        `${at}.assay`,
        `names assay ${entry.assay}, which is not in assays.yaml${near === '' ? '' : `: ${near}`}`,
      );
      continue;
    }
    const labAssay = problems.guard(() => labAssayOf(labAssayName, entry, assay, file, at));
    if (labAssay !== undefined) assays.set(foldToken(labAssayName), Object.freeze(labAssay));
  }
  const words = labWords(raw, file, problems);
  checkLayout(raw, file, problems);
  return Object.freeze({
    id: raw.id,
    name: raw.name,
    fileNamePattern: raw.fileNamePattern
      ? problems.guard(() => compilePattern(raw.fileNamePattern!, file, 'fileNamePattern', []))
      : undefined,
    delimiter: raw.format.delimiter,
    decimal: raw.format.decimal,
    encoding: raw.format.encoding,
    dateFormat: raw.format.dateFormat,
    skipLines: raw.format.skipLines,
    layout: raw.layout,
    notTestedTokens: new Set((raw.notTestedTokens ?? []).map(foldToken)),
    workbook: { sheet: raw.workbook?.sheet, headerRow: raw.workbook?.headerRow ?? raw.format.skipLines + 1 },
    columns: {
      sampleId: raw.columns.sampleId,
      assay: raw.columns.assay,
      // The schema requires one of the two.
      result: raw.columns.result ?? raw.columns.ct,
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
    ...words,
    assays,
    hl7: normaliseHl7Sender(raw.hl7, Object.keys(raw.assays), assays, file, problems),
  });
}

/**
 * A lab's reading of one assay: the assay's cutoffs, each overridden by the lab's own. Cutoffs
 * of the other measure (positiveBelow for an S/P assay, positiveAtOrAbove for a Ct assay) are
 * refused: they would be read the wrong way round.
 */
function labAssayOf(
  labAssayName: string,
  entry: z.output<typeof labAssaySchema>,
  assay: Assay,
  file: string,
  at: string,
): LabAssay {
  const foreign =
    assay.measure === 'ct'
      ? (['positiveAtOrAbove', 'suspectAtOrAbove'] as const)
      : (['positiveBelow', 'suspectBelow', 'cycleLimit'] as const);
  for (const key of foreign) {
    if (entry[key] !== undefined) {
      const use =
        assay.measure === 'ct'
          ? 'positiveBelow, suspectBelow and cycleLimit (Ct)'
          : 'positiveAtOrAbove and suspectAtOrAbove (S/P)';
      throw new ConfigError(
        file,
        `${at}.${key}`,
        `does not apply: assay ${assay.id} has measure ${assay.measure}; give ${use}`,
      );
    }
  }
  if (assay.measure === 'sp-ratio') {
    const labAssay: LabAssay = {
      labAssayName,
      assayId: assay.id,
      measure: 'sp-ratio',
      positiveAtOrAbove: entry.positiveAtOrAbove ?? assay.positiveAtOrAbove,
      suspectAtOrAbove: entry.suspectAtOrAbove ?? assay.suspectAtOrAbove,
    };
    if (labAssay.suspectAtOrAbove !== undefined && !(labAssay.suspectAtOrAbove <= labAssay.positiveAtOrAbove)) {
      throw new ConfigError(file, at, 'cutoffs must satisfy suspectAtOrAbove <= positiveAtOrAbove');
    }
    return labAssay;
  }
  const labAssay: LabAssay = {
    labAssayName,
    assayId: assay.id,
    measure: 'ct',
    positiveBelow: entry.positiveBelow ?? assay.positiveBelow,
    suspectBelow: entry.suspectBelow ?? assay.suspectBelow,
    cycleLimit: entry.cycleLimit ?? assay.cycleLimit,
  };
  if (!(labAssay.positiveBelow <= labAssay.suspectBelow && labAssay.suspectBelow <= labAssay.cycleLimit)) {
    throw new ConfigError(file, at, 'cutoffs must satisfy positiveBelow <= suspectBelow <= cycleLimit');
  }
  return labAssay;
}

/**
 * The columns a layout reads: a long export names its assay and Ct columns; a wide one has a
 * value column per lab assay instead, and no call column (one call cannot speak for several
 * assays). Words for "not tested" belong to wide exports and may not also mean not detected.
 */
function checkLayout(raw: RawLab, file: string, problems: ProblemList): void {
  if (raw.layout === 'long') {
    if (raw.columns.assay === undefined)
      problems.add(
        file,
        'columns.assay',
        'is required: the header of the column that names the assay (an export with one value column per assay says layout: wide)',
      );
    if (raw.columns.result === undefined && raw.columns.ct === undefined)
      problems.add(
        file,
        'columns.result',
        'is required: the header of the numeric result column, a Ct or an S/P ratio (an export with one value column per assay says layout: wide)',
      );
    if (raw.notTestedTokens !== undefined)
      problems.add(
        file,
        'notTestedTokens',
        'applies to layout: wide only (in a long export an assay that was not run has no row)',
      );
    return;
  }
  for (const key of ['assay', 'result', 'ct', 'call'] as const) {
    if (raw.columns[key] !== undefined) {
      problems.add(
        file,
        `columns.${key}`,
        `a wide export (layout: wide) has no ${key === 'call' ? 'call column: one call cannot speak for several assays' : `${key} column: each value column is headed by a lab assay name under assays`}; remove it`,
      );
    }
  }
  if (Object.keys(raw.assays).length === 0)
    problems.add(file, 'assays', 'names no lab assay: in a wide export each is the header of a value column');
  const notDetected = new Set(raw.notDetected.tokens.map(foldToken));
  (raw.notTestedTokens ?? []).forEach((token, index) => {
    if (foldToken(token) === '')
      problems.add(file, `notTestedTokens[${index}]`, 'is blank: a blank value cell always means not tested');
    else if (notDetected.has(foldToken(token)))
      problems.add(
        file,
        `notTestedTokens[${index}]`,
        `${JSON.stringify(token)} is also in notDetected.tokens: a cell cannot mean both not tested and not detected`,
      );
  });
}

/** English call words, used for each class a lab profile does not list (common practice, no source). */
export const DEFAULT_CALL_WORDS: Readonly<Record<CallClass, readonly string[]>> = {
  positive: ['positive', 'pos', 'detected'],
  suspect: ['suspect', 'inconclusive', 'equivocal', 'indeterminate'],
  negative: ['negative', 'neg', 'not detected', 'none detected'],
  invalid: ['invalid'],
};

/** English report-state words, used for each state a lab profile does not list (common practice, no source). */
export const DEFAULT_STATUS_WORDS: Readonly<Record<ReportStatusKind, readonly string[]>> = {
  preliminary: ['preliminary', 'pending', 'interim', 'partial'],
  final: ['final'],
  corrected: ['corrected', 'amended', 'revised', 'reissued'],
};

type RawLab = z.output<typeof labProfileSchema>;

/**
 * The lab's call, control and status words, checked so that no word can mean two things: the
 * same words (as matched: case, accents and punctuation ignored) under two call classes, two
 * report states, a call and a state, or a control failure and any call but invalid, are refused
 * at the second, naming where each comes from.
 */
function labWords(
  raw: RawLab,
  file: string,
  problems: ProblemList,
): Pick<LabProfile, 'controlFailedTokens' | 'callWords' | 'statusWords' | 'statusColumns'> {
  const callWords = {} as Record<CallClass, readonly string[]>;
  for (const cls of ['positive', 'suspect', 'negative', 'invalid'] as const)
    callWords[cls] = raw.callWords?.[cls] ?? DEFAULT_CALL_WORDS[cls];
  const statusWords = {} as Record<ReportStatusKind, readonly string[]>;
  for (const kind of ['preliminary', 'final', 'corrected'] as const)
    statusWords[kind] = raw.statusWords?.[kind] ?? DEFAULT_STATUS_WORDS[kind];
  statusWords.corrected = [...new Set([...statusWords.corrected, ...raw.reissueTokens])];

  /** What a word means, and where it was configured (or that it is an English default). */
  type Meaning = { what: string; where: string };
  const seen = new Map<string, Meaning>();
  const claim = (word: string, what: string, where: string, compatible: (other: string) => boolean) => {
    const key = wordKey(word);
    if (key === '') {
      problems.add(file, where, `${JSON.stringify(word)} has no letter or digit, so it can never be found in a cell`);
      return;
    }
    const earlier = seen.get(key);
    if (earlier === undefined) {
      seen.set(key, { what, where });
    } else if (earlier.what !== what && !compatible(earlier.what)) {
      problems.add(
        file,
        where,
        `${JSON.stringify(word)} would mean ${what}, but the same word (case, accents and punctuation ignored) means ${earlier.what} at ${earlier.where}; give each word one meaning`,
      );
    }
  };
  const origin = (key: string, index: number, given: boolean, word: string) =>
    given ? `${key}[${index}]` : `${key} (English default ${JSON.stringify(word)})`;
  raw.controlFailedTokens.forEach((word, index) =>
    claim(word, 'a failed control', `controlFailedTokens[${index}]`, (other) => other === 'call invalid'),
  );
  for (const cls of ['positive', 'suspect', 'negative', 'invalid'] as const) {
    const given = raw.callWords?.[cls] !== undefined;
    callWords[cls].forEach((word, index) =>
      claim(
        word,
        `call ${cls}`,
        origin(`callWords.${cls}`, index, given, word),
        (other) => cls === 'invalid' && other === 'a failed control',
      ),
    );
  }
  for (const kind of ['preliminary', 'final', 'corrected'] as const) {
    const given = raw.statusWords?.[kind] !== undefined;
    const listed = raw.statusWords?.[kind] ?? DEFAULT_STATUS_WORDS[kind];
    statusWords[kind].forEach((word, index) => {
      const where =
        index < listed.length
          ? origin(`statusWords.${kind}`, index, given, word)
          : `reissueTokens[${raw.reissueTokens.indexOf(word)}]`;
      claim(word, `a ${kind} report`, where, () => false);
    });
  }
  const statusColumns =
    raw.statusColumns ??
    [raw.columns.reportStatus, raw.columns.call].filter((column): column is string => column !== undefined);
  return {
    controlFailedTokens: raw.controlFailedTokens.map((word) => word.trim()),
    callWords: Object.freeze(callWords),
    statusWords: Object.freeze(statusWords),
    statusColumns,
  };
}

/**
 * Reads config/corrections.yaml when there is one: sample IDs a person confirmed as mistyped.
 * A meant ID with the shape of a planned ID must carry its right check character (ISO/IEC 7064
 * MOD 37-2), or the correction would only swap one refusal for another.
 */
function loadCorrections(file: string, problems: ProblemList): SampleIdCorrection[] {
  if (!fs.existsSync(file)) return [];
  const raw = readValid(correctionsFileSchema, file, problems, {});
  if (raw === undefined) return [];
  const seen = new Map<string, number>();
  return raw.sampleIds.flatMap((entry, index): SampleIdCorrection[] => {
    const corrected = problems.guard(() => loadCorrection(entry, index, seen, file));
    return corrected === undefined ? [] : [corrected];
  });
}

function loadCorrection(
  entry: z.output<typeof correctionsFileSchema>['sampleIds'][number],
  index: number,
  seen: Map<string, number>,
  file: string,
): SampleIdCorrection {
  const at = (key: string) => formatPath(['sampleIds', index, key]);
  const written = entry.written.replace(/\s+/g, '').toUpperCase();
  let meant = entry.meant.replace(/\s+/g, '').toUpperCase();
  if (written === '') throw new ConfigError(file, at('written'), 'is empty once spaces are removed');
  if (meant === '') throw new ConfigError(file, at('meant'), 'is empty once spaces are removed');
  if (looksLikePlannedId(meant)) {
    const parsed = parseSampleId(meant);
    if (!parsed.ok)
      throw new ConfigError(file, at('meant'), `${parsed.message}; write the planned ID as printed on the rope list`);
    meant = parsed.id;
  }
  if (meant === written)
    throw new ConfigError(file, at('meant'), `is the same ID as written (${written}): nothing to correct`);
  if (entry.line !== undefined && entry.file === undefined)
    throw new ConfigError(file, at('line'), 'a line needs the file it is in: add file');
  const key = `${written}\u001f${entry.file ?? ''}\u001f${entry.line ?? ''}`;
  const earlier = seen.get(key);
  if (earlier !== undefined)
    throw new ConfigError(file, at('written'), `corrects the same ID in the same place as sampleIds[${earlier}]`);
  seen.set(key, index);
  return Object.freeze({ written, meant, file: entry.file, line: entry.line, note: entry.note });
}

/**
 * Loads `sites.yaml`, `assays.yaml`, every `labs/*.yaml` and `corrections.yaml` (optional) from
 * a config folder. Every file is checked, as far as its own problems allow, before anything is
 * refused: a person fixes all there is in one go.
 * @throws ConfigError with every problem found, each naming its file and key path.
 */
export function loadConfig(dir: string): Config {
  const sitesFile = path.join(dir, 'sites.yaml');
  const assaysFile = path.join(dir, 'assays.yaml');
  const labsDir = path.join(dir, 'labs');
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
