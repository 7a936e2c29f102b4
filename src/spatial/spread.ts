/**
 * Spread across rounds: where did this round's new positive pens appear relative to the pens
 * that were positive before?
 */

export interface SpreadPoint {
  id: string;
  /** Site coordinates (barn offset already added), pen units. */
  x: number;
  y: number;
  barn: string;
}

export type SpreadPattern = 'none' | 'first-detection' | 'adjacent-spread' | 'distant-new-focus';

export interface NewPositive {
  id: string;
  barn: string;
  /** Distance to the nearest earlier positive pen (site coordinates); null when there is none. */
  nearestEarlierDistance: number | null;
  nearestEarlierPen: string | null;
  /** Whether that nearest earlier positive is in the same barn. */
  sameBarn: boolean | null;
  /** 'adjacent' within `adjacentDistance`, else 'distant'; null without earlier positives. */
  kind: 'adjacent' | 'distant' | null;
}

export interface SpreadSummary {
  pattern: SpreadPattern;
  newPositives: NewPositive[];
  adjacent: number;
  distant: number;
  /** The thresholds used, so a report can state them. */
  thresholds: { adjacentDistance: number };
  explanation: string;
}

/**
 * Classifies this round's new positive pens (positive now, never positive earlier) by the
 * Euclidean distance to the nearest pen positive in an earlier round, in site coordinates
 * (other barns reached through their site offsets):
 * - 'none': no new positive pen;
 * - 'first-detection': new positives and no earlier positive anywhere in scope;
 * - 'adjacent-spread': every new positive within `adjacentDistance` of an earlier positive;
 * - 'distant-new-focus': at least one new positive farther than `adjacentDistance` from every
 *   earlier positive (a new focus matters more than local creep, so it wins a mixed round).
 * The default adjacentDistance is 2.5 pen units: it takes in the fence-line neighbour (1), the
 * pen two along (2) and, in a barn with a 1-unit pen depth and 0.5-unit alley, the facing pen
 * (1.5) and its diagonals (1.8), and stops short of three pens along (common practice, no source:
 * fence-line contact first, then facing, then diagonal).
 *
 * @param current pens positive this round.
 * @param earlier pens positive in any earlier round.
 * @param adjacentDistance > 0, pen units.
 * @throws RangeError on a bad distance.
 * @see Knox E.G. (1964) The detection of space-time interactions, Applied Statistics 13:25-29
 *   (closeness in space of cases that are close in time).
 */
export function summariseSpread(
  current: readonly SpreadPoint[],
  earlier: readonly SpreadPoint[],
  adjacentDistance = 2.5,
): SpreadSummary {
  if (!(Number.isFinite(adjacentDistance) && adjacentDistance > 0))
    throw new RangeError(`\`adjacentDistance\` must be a finite number > 0, got ${adjacentDistance}`);
  const earlierKeys = new Set(earlier.map((p) => `${p.barn}\u0000${p.id}`));
  const fresh = current.filter((p) => !earlierKeys.has(`${p.barn}\u0000${p.id}`));
  const newPositives: NewPositive[] = fresh.map((p) => {
    let best: SpreadPoint | null = null;
    let bestD = Infinity;
    for (const q of earlier) {
      const d = Math.hypot(p.x - q.x, p.y - q.y);
      if (d < bestD) {
        bestD = d;
        best = q;
      }
    }
    if (!best)
      return {
        id: p.id,
        barn: p.barn,
        nearestEarlierDistance: null,
        nearestEarlierPen: null,
        sameBarn: null,
        kind: null,
      };
    return {
      id: p.id,
      barn: p.barn,
      nearestEarlierDistance: bestD,
      nearestEarlierPen: best.id,
      sameBarn: best.barn === p.barn,
      kind: bestD <= adjacentDistance + 1e-9 ? 'adjacent' : 'distant',
    };
  });
  const adjacent = newPositives.filter((p) => p.kind === 'adjacent').length;
  const distant = newPositives.filter((p) => p.kind === 'distant').length;
  let pattern: SpreadPattern;
  let explanation: string;
  const threshold = Number(adjacentDistance.toFixed(1));
  if (fresh.length === 0) {
    pattern = 'none';
    explanation = 'no pen is newly positive this round';
  } else if (earlier.length === 0) {
    pattern = 'first-detection';
    explanation = `${fresh.length} pen(s) positive with no earlier positive pen`;
  } else if (distant === 0) {
    pattern = 'adjacent-spread';
    explanation = `all ${adjacent} new positive pen(s) within ${threshold} pen units of an earlier positive`;
  } else {
    pattern = 'distant-new-focus';
    explanation = `${distant} new positive pen(s) farther than ${threshold} pen units from every earlier positive`;
  }
  return { pattern, newPositives, adjacent, distant, thresholds: { adjacentDistance }, explanation };
}
