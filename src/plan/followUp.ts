/**
 * Follow-up ropes after positives: the pens around each cluster of positive pens, re-hung ropes
 * in suspect and invalid pens, and the routine systematic layer, merged so that no pen gets two
 * ropes.
 *
 * Ring: every in-use pen in physical contact with a cluster pen (fence line, facing across the
 * alley, diagonal) and every in-use pen within `ringDistance` (pen units, centre to centre) of
 * one. Priority order, for the highest risk first (Martin et al. 2007; Cameron 2012, Prev Vet Med 105:280): fence-line neighbours,
 * then facing, then diagonal, then the others by distance; ties by distance, then barn order.
 * The positive pens themselves get no follow-up rope: their status is known this round.
 *
 * Precedence when a pen qualifies for several reasons: retest > follow-up > routine. A retest
 * re-hangs a rope whose result is missing (invalid) or doubtful (suspect), which matters most;
 * a routine pen inside the ring is labelled follow-up and costs no extra rope.
 *
 * Choice with a limit on extra ropes: without a model, the first `maxExtraRopes` ring pens in
 * priority order. With `detectSet(penIds)` (detection of the whole rope set), greedy by marginal
 * gain with lazy evaluation: detection of a set of ropes is monotone submodular, so greedy
 * reaches at least (1 - 1/e) of the best possible gain over the ropes already planned.
 * @see Nemhauser GL, Wolsey LA, Fisher ML (1978) An analysis of approximations for maximizing
 *   submodular set functions I. Math Program 14:265-294.
 * @see Leskovec J et al. (2007) Cost-effective outbreak detection in networks. KDD (lazy greedy).
 */
import type { BarnPlanNote } from './barnNotes.js';
import type { Pen, PenContacts } from '../domain/layout.js';
import { isInUse, penDistance } from '../domain/layout.js';
import { requireInteger, requireNumber, requireReturnedProbability } from '../stats/validate.js';

export type RopeReason = 'retest' | 'follow-up' | 'routine';

export interface FollowUpInput {
  /** Every pen of the barn (expandLayout). */
  pens: readonly Pen[];
  /** Contacts of the barn (penContacts). */
  contacts: PenContacts;
  /** Clusters of positive pens, each a set of pen ids. */
  clusters: readonly (readonly string[])[];
  /** Ring radius around cluster pens, pen units, >= 0 (contacts are always in the ring). */
  ringDistance: number;
  /** Pens with a routine (systematic) rope this round. */
  routine: readonly string[];
  /** Suspect and invalid pens of the last round, to re-hang. */
  retest: readonly string[];
  /** Most ropes to add for follow-up beyond routine and retest; all ring pens when absent. */
  maxExtraRopes?: number;
  /** Detection probability of a whole set of roped pens, monotone submodular. */
  detectSet?: (penIds: readonly string[]) => number;
}

export type ContactTier = 'fence' | 'facing' | 'diagonal' | 'distance';

export interface RingCandidate {
  penId: string;
  tier: ContactTier;
  /** Distance to the nearest cluster pen, pen units. */
  distance: number;
}

export interface PlannedRope {
  penId: string;
  reason: RopeReason;
}

export interface FollowUpPlan {
  /** Every rope of the barn, each pen once, in barn order (row, then position). */
  ropes: PlannedRope[];
  /** Ring pens in priority order. */
  ring: RingCandidate[];
  /** Ring pens that got an extra rope, in the order chosen. */
  added: string[];
  /** detectSet of all ropes, when the model was given. */
  detection: number | null;
  notes: BarnPlanNote[];
}

const TIER_RANK: Record<ContactTier, number> = { fence: 0, facing: 1, diagonal: 2, distance: 3 };
const EPS = 1e-9;

/**
 * Ring pens around the clusters, in priority order (see the module comment).
 * @throws RangeError if a cluster names a pen that is not in the barn, or ringDistance < 0
 */
export function ringCandidates(
  pens: readonly Pen[],
  contacts: PenContacts,
  clusters: readonly (readonly string[])[],
  ringDistance: number,
): RingCandidate[] {
  requireNumber('ringDistance', ringDistance, 0, Infinity, { range: '[0, infinity)' });
  const byId = new Map(pens.map((p) => [p.id, p]));
  const clusterPens = new Set<string>();
  for (const cluster of clusters) {
    for (const id of cluster) {
      if (!byId.has(id)) throw new RangeError(`\`clusters\` must name pens of the barn, got ${JSON.stringify(id)}`);
      clusterPens.add(id);
    }
  }
  const tier = new Map<string, ContactTier>();
  const mark = (pairs: [string, string][], t: ContactTier) => {
    for (const [a, b] of pairs) {
      for (const [from, to] of [
        [a, b],
        [b, a],
      ] as const) {
        if (!clusterPens.has(from) || clusterPens.has(to)) continue;
        const current = tier.get(to);
        if (current === undefined || TIER_RANK[t] < TIER_RANK[current]) tier.set(to, t);
      }
    }
  };
  mark(contacts.fence, 'fence');
  mark(contacts.facing, 'facing');
  mark(contacts.diagonal, 'diagonal');
  const sources = [...clusterPens].map((id) => byId.get(id)!);
  const order = new Map(pens.map((p, i) => [p.id, i]));
  const ring: RingCandidate[] = [];
  for (const pen of pens) {
    if (!isInUse(pen) || clusterPens.has(pen.id)) continue;
    const distance = Math.min(...sources.map((s) => penDistance(s, pen)));
    const contact = tier.get(pen.id);
    if (contact !== undefined) ring.push({ penId: pen.id, tier: contact, distance });
    else if (distance <= ringDistance + EPS) ring.push({ penId: pen.id, tier: 'distance', distance });
  }
  ring.sort(
    (a, b) =>
      TIER_RANK[a.tier] - TIER_RANK[b.tier] || a.distance - b.distance || order.get(a.penId)! - order.get(b.penId)!,
  );
  return ring;
}

/**
 * Lazy greedy maximisation of a monotone submodular set function f over `candidates`, starting
 * from `base`: repeatedly add the candidate with the largest gain f(S + x) - f(S), re-evaluating a
 * stale gain only when it tops the list (a stale gain is an upper bound by submodularity).
 * Ties go to the earlier candidate. Takes exactly min(k, candidates) elements.
 * @see Nemhauser, Wolsey & Fisher (1978) Math Program 14:265-294; Minoux M (1978) Accelerated
 *   greedy algorithms for maximizing submodular set functions (lazy evaluation).
 */
export function lazyGreedy(
  f: (set: readonly string[]) => number,
  base: readonly string[],
  candidates: readonly string[],
  k: number,
): string[] {
  requireInteger('k', k, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const chosen: string[] = [];
  let current = requireReturnedProbability('detectSet', f(base));
  const entries = candidates.map((id, index) => ({ id, index, bound: Infinity, stamp: -1 }));
  while (chosen.length < k && entries.length > 0) {
    for (;;) {
      entries.sort((a, b) => b.bound - a.bound || a.index - b.index);
      const top = entries[0]!;
      if (top.stamp === chosen.length) break;
      top.bound = requireReturnedProbability('detectSet', f([...base, ...chosen, top.id])) - current;
      top.stamp = chosen.length;
    }
    const top = entries.shift()!;
    chosen.push(top.id);
    current += top.bound;
  }
  return chosen;
}

/**
 * Merges routine, retest and follow-up ropes for one barn (see the module comment for the ring,
 * the priority order, the precedence and the choice under a limit).
 * @throws RangeError for unknown pen ids, a routine pen that is not in use, a negative or
 *   fractional maxExtraRopes, or detectSet returning a value outside [0, 1]
 * @see Nemhauser, Wolsey & Fisher (1978) Math Program 14:265-294.
 */
export function planFollowUp(input: FollowUpInput): FollowUpPlan {
  const byId = new Map(input.pens.map((p) => [p.id, p]));
  for (const id of input.routine) {
    if (!isInUse(byId.get(id))) {
      throw new RangeError(`\`routine\` must name in-use pens of the barn, got ${JSON.stringify(id)}`);
    }
  }
  if (input.maxExtraRopes !== undefined)
    requireInteger('maxExtraRopes', input.maxExtraRopes, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const notes: BarnPlanNote[] = [];
  const retest = new Set<string>();
  for (const id of input.retest) {
    const pen = byId.get(id);
    if (!pen) throw new RangeError(`\`retest\` must name pens of the barn, got ${JSON.stringify(id)}`);
    if (!isInUse(pen)) notes.push({ kind: 'retest-not-in-use', penId: id, status: pen.status });
    else retest.add(id);
  }
  const routine = new Set(input.routine);
  const ring = ringCandidates(input.pens, input.contacts, input.clusters, input.ringDistance);
  const free = ring.filter((c) => routine.has(c.penId) && !retest.has(c.penId)).map((c) => c.penId);
  const extras = ring.filter((c) => !routine.has(c.penId) && !retest.has(c.penId)).map((c) => c.penId);
  const limit = Math.min(input.maxExtraRopes ?? extras.length, extras.length);
  const base = [...retest, ...input.routine.filter((id) => !retest.has(id))];
  const added = input.detectSet ? lazyGreedy(input.detectSet, base, extras, limit) : extras.slice(0, limit);
  if (limit < extras.length) notes.push({ kind: 'ring-left-out', left: extras.length - limit, limit });
  const followUp = new Set([...free, ...added]);
  const ropes: PlannedRope[] = [];
  for (const pen of input.pens) {
    const reason: RopeReason | undefined = retest.has(pen.id)
      ? 'retest'
      : followUp.has(pen.id)
        ? 'follow-up'
        : routine.has(pen.id)
          ? 'routine'
          : undefined;
    if (reason) ropes.push({ penId: pen.id, reason });
  }
  const detection = input.detectSet
    ? requireReturnedProbability('detectSet', input.detectSet(ropes.map((r) => r.penId)))
    : null;
  return { ropes, ring, added, detection, notes };
}
