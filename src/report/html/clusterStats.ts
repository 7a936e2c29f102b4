/**
 * The spatial statistics of one barn as a table: each statistic with its value, its p-value and
 * a one-line reading. Reads the spatial report; computes no statistic.
 */
import type { AssaySpatial } from '../../analysis/spatialRound.js';
import type { BarnSpatialReport } from '../../spatial/roundReview.js';
import { escapeHtml } from './escape.js';
import { count, num, pct, pValue } from './page.js';

/** The statistics table of one barn, with the weights used and any pen left out. */
export function statsTable(
  report: BarnSpatialReport,
  detection: AssaySpatial['detection'][number] | undefined,
  alpha: number,
  antibody = false,
): string {
  const rows: string[] = [];
  const jc = report.joinCount;
  if (jc) {
    const method =
      jc.inference.method === 'exact'
        ? `exact p (all ${jc.inference.placements} placements)`
        : `permutation p (${jc.inference.permutations} permutations)`;
    const reading =
      report.positives < 2
        ? 'Fewer than 2 positives: adjacency cannot be judged.'
        : jc.pPermutation <= alpha
          ? 'Positive ropes sit next to each other more than chance allows.'
          : 'Positive ropes are no more often neighbours than chance would place them.';
    rows.push(
      `<tr><td>Join count (positive\u2013positive neighbours)</td><td>BB = ${jc.bb} of ${jc.joins} joins, ${num(jc.expectedBB)} expected; ${method} = <strong>${pValue(jc.pPermutation)}</strong>` +
        `${jc.zBB !== null ? `; z = ${num(jc.zBB)} (shown for reference)` : ''}</td><td>${reading}</td></tr>`,
    );
  }
  const moran = report.moran;
  if (moran) {
    const reading =
      moran.I === null
        ? escapeHtml(moran.reason ?? 'Undefined for these values.')
        : moran.pPermutation !== null && moran.pPermutation <= alpha
          ? antibody
            ? 'Ropes with a high S/P sit near other ropes with a high S/P.'
            : 'Ropes with a high load sit near other ropes with a high load.'
          : antibody
            ? 'No spatial pattern in S/P beyond chance.'
            : 'No spatial pattern in load beyond chance.';
    rows.push(
      `<tr><td>Moran\u2019s I on ${antibody ? 'S/P' : 'load'}</td><td>I = ${num(moran.I, 3)} (expected ${num(moran.expected, 3)}); permutation p = <strong>${pValue(moran.pPermutation)}</strong>` +
        `${moran.zRandomisation !== null ? `; z = ${num(moran.zRandomisation)} (shown for reference)` : ''}</td><td>${reading}</td></tr>`,
    );
  }
  const scan = report.scan;
  if (scan) {
    const best = scan.mostLikely;
    rows.push(
      best
        ? `<tr><td>Scan statistic, most likely cluster</td><td>${count(best.pens.length, 'rope')} around ${escapeHtml(best.centre)} (radius ${num(best.radius, 1)} pen units): ${best.positives} positive, ${num(best.expected)} expected; p = <strong>${pValue(best.p)}</strong></td>` +
            `<td>${best.p <= alpha ? `A group of ropes holds more positives than chance: ${escapeHtml(best.pens.join(', '))}.` : 'No group of ropes holds more positives than chance would give.'}</td></tr>`
        : `<tr><td>Scan statistic</td><td>no window with more positives than expected</td><td>Nothing to scan for.</td></tr>`,
    );
  }
  rows.push(
    `<tr><td>Spread pattern</td><td>${escapeHtml(report.spread.pattern)}</td><td>${escapeHtml(report.spread.explanation)}</td></tr>`,
  );
  if (detection) {
    const spread =
      detection.spreadModel === null ? 'n/a' : `${pct(detection.spreadModel)} (\u00b1 ${pct(detection.spreadModelSE)})`;
    const reading =
      detection.spreadModel === null || detection.randomRopes === null
        ? 'The spread model was not run for this barn.'
        : `Under pen-to-pen spread the ropes hung find an outbreak at the design prevalence ${pct(detection.spreadModel)} of the time; the same number of ropes at random would ${pct(detection.randomRopes)}.`;
    rows.push(
      `<tr><td>Detection of the ropes hung</td><td>hypergeometric ${pct(detection.hypergeometric)}; spread model ${spread}; random ropes ${pct(detection.randomRopes)}</td><td>${reading}</td></tr>`,
    );
  }
  const notes = [
    ...report.notes.filter((note) => note !== 'spread-model detection not requested'),
    ...report.excluded.map((entry) => `${entry.id} left out: ${entry.reason}`),
  ];
  return (
    `<table class="stats" data-stats=""><thead><tr><th>Statistic</th><th>Value</th><th>Reading</th></tr></thead><tbody>${rows.join('')}</tbody></table>` +
    `<p class="muted">Weights: ${escapeHtml(report.weights.description)}. ${notes.length > 0 ? escapeHtml(notes.join('; ')) + '.' : ''}</p>`
  );
}
