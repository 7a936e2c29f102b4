/** One lab profile (labs/*.yaml): how to read the lab's exports, and its assays with its own cutoffs. */
import type { z } from 'zod';
import { foldToken } from '../util/fold.js';
import { dateFormatProblem } from './dateFormat.js';
import type { labAssaySchema, RawLabProfile } from './labProfileSchema.js';
import { labProfileSchema } from './labProfileSchema.js';
import { labWords } from './labWords.js';
import { NameRegistry } from './nameRegistry.js';
import { didYouMean } from './nearest.js';
import { compilePattern } from './pattern.js';
import { ConfigError, type ProblemList } from './problems.js';
import { readValid } from './readYaml.js';
import { formatPath } from './schemaProblems.js';
import type { Assay, LabAssay, LabProfile } from './types.js';

export function loadLab(
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
function checkLayout(raw: RawLabProfile, file: string, problems: ProblemList): void {
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
