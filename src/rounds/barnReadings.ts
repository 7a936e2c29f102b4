/**
 * Reading a barn's ropes of one round: each rope placed in its pen, its results (its own and its
 * pool's) read into the pen's worst result per assay, and counted once in the barn's sources and
 * the round's assays, cutoffs and disagreements. Ropes without a result are listed. Pure.
 */
import type { Barn, Measure } from '../config/types.js';
import { countCutoff } from './roundCutoffs.js';
import { keepWorst, penAssayResult } from './penResults.js';
import { addResultSource, type SourceDrafts } from './resultSources.js';
import type {
  CallDisagreement,
  MistypedInput,
  PenRound,
  ReplacedInput,
  ResultInput,
  RopeInput,
  RoundCutoff,
  RoundReplacement,
} from './roundTypes.js';

/** A site's results and notes, looked up by sample ID. */
export interface SiteIndex {
  resultsBySample: Map<string, ResultInput[]>;
  replacedBySample: Map<string, ReplacedInput[]>;
  /** Refused rows under a mistyped ID, by the planned ID they most likely meant. */
  mistypedByMeant: Map<string, MistypedInput[]>;
}

/** What a round gathers across its barns while they are read. */
export interface RoundDraft {
  assays: Set<string>;
  measures: Record<string, Measure>;
  /** In the order first read (countCutoff). */
  cutoffs: RoundCutoff[];
  disagreements: CallDisagreement[];
  replaced: RoundReplacement[];
  /** The pens (barn/pen) each pool ID of the round covers. */
  poolPens: Map<string, string[]>;
}

/** One barn's ropes of the round, as read. */
export interface BarnDraft {
  pens: Map<string, PenRound>;
  sources: SourceDrafts;
  disagreements: CallDisagreement[];
  missing: string[];
  /** The pen of each rope without a result (sample ID -> pen id as the layout writes it). */
  missingPen: Map<string, string>;
  replaced: RoundReplacement[];
  /** A pool's results are counted once per barn in its sources, cutoffs and disagreements, however many pens they stand for. */
  poolResultsSeen: Set<number>;
  returned: number;
  hung: number;
}

export function emptyRoundDraft(poolPens: Map<string, string[]>): RoundDraft {
  return { assays: new Set(), measures: {}, cutoffs: [], disagreements: [], replaced: [], poolPens };
}

/** Reads the barn's ropes of the round (those placed in a pen of its layout) and their results. */
export function readBarnRopes(
  barn: Barn,
  barnRopes: readonly RopeInput[],
  index: SiteIndex,
  round: RoundDraft,
): BarnDraft {
  const draft: BarnDraft = {
    pens: new Map(),
    sources: new Map(),
    disagreements: [],
    missing: [],
    missingPen: new Map(),
    replaced: [],
    poolResultsSeen: new Set(),
    returned: 0,
    hung: 0,
  };
  for (const rope of barnRopes) {
    const pen = barn.penById.get(rope.penId.toUpperCase());
    if (!pen) continue;
    draft.hung++;
    let penRound = draft.pens.get(pen.id);
    if (!penRound) {
      penRound = {
        penId: pen.id,
        rowLabel: pen.rowLabel,
        position: pen.position,
        sampleIds: [],
        returned: false,
        results: {},
      };
      draft.pens.set(pen.id, penRound);
    }
    penRound.sampleIds.push(rope.sampleId);
    for (const entry of index.replacedBySample.get(rope.sampleId) ?? [])
      draft.replaced.push({ ...entry, barnId: barn.id, penId: pen.id });
    const ownResults = index.resultsBySample.get(rope.sampleId) ?? [];
    const poolId = rope.poolId ?? null;
    const pooledResults = poolId === null ? [] : (index.resultsBySample.get(poolId) ?? []);
    const ropeResults = pooledResults.length === 0 ? ownResults : [...ownResults, ...pooledResults];
    if (ropeResults.length === 0) {
      draft.missing.push(rope.sampleId);
      draft.missingPen.set(rope.sampleId, pen.id);
      continue;
    }
    draft.returned++;
    penRound.returned = true;
    for (const result of ropeResults) readResult(barn.id, draft, round, penRound, result, poolId);
  }
  return draft;
}

/** Reads one result of a rope in `penRound` (`poolId`: the rope's pool, if any). */
function readResult(
  barnId: string,
  draft: BarnDraft,
  round: RoundDraft,
  penRound: PenRound,
  result: ResultInput,
  poolId: string | null,
): void {
  round.assays.add(result.assayId);
  const measure = result.measure ?? 'ct';
  if (round.measures[result.assayId] === undefined || measure === 'sp-ratio') round.measures[result.assayId] = measure;
  const fromPool = poolId !== null && result.sampleId === poolId;
  const firstReading = !fromPool || !draft.poolResultsSeen.has(result.id);
  if (fromPool) draft.poolResultsSeen.add(result.id);
  if (firstReading) {
    addResultSource(draft.sources, result);
    countCutoff(round.cutoffs, result);
    if (result.callDiffers && result.labCall !== null)
      draft.disagreements.push(disagreementOf(barnId, penRound.penId, result, result.labCall, measure));
  }
  keepWorst(penRound, penAssayResult(result, measure, fromPool ? poolId : null, round.poolPens));
}

/** A result whose lab call disagrees with its reading (whether it stands for the pen is settled later). */
function disagreementOf(
  barnId: string,
  penId: string,
  result: ResultInput,
  labCall: string,
  measure: Measure,
): CallDisagreement {
  return {
    barnId,
    penId,
    sampleId: result.sampleId,
    assayId: result.assayId,
    labId: result.labId,
    accession: result.accession ?? null,
    labCall,
    measure,
    ct: result.ct,
    sp: result.sp ?? null,
    ctRaw: result.ctRaw ?? null,
    resultClass: result.resultClass,
    reason: result.reason,
    standsForPen: false,
  };
}
