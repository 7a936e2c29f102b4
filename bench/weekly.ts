/**
 * The 50-site weekly drop: a program of 50 invented sites (each 4 barns x 50 pens, a rope in every
 * 4th pen, two assays), stored with 5 rounds and with 20 rounds of every site, outputs built; one
 * weekly lab export carrying the next round of all 50 sites is dropped through `processFile` at
 * each, alternating (5, 20, 5, 20 ...), each drop a child process on a fresh copy
 * (bench/history.ts `benchDrops`). Rows: CPU and wall against the 5-round drop (median and range),
 * files and bytes written, peak RSS. Targets: at most 1.3x the 5-round drop; peak RSS < 500 MiB.
 *
 * Why 20 rounds and not 150: the preparation builds every round's outputs of every site with the
 * program's defaults, 0.1 to 0.12 s of CPU per site-round when this was written (50 sites at 5 and
 * 6 rounds: 59 and 45 s wall to prepare, each drop 30 to 33 s CPU, on a busy machine). Both stores
 * here are 1,250 site-rounds, about 2.5 minutes of CPU; 150 rounds would be 7,750 site-rounds,
 * some 15 minutes of preparation alone, and the whole bench is meant to run in about 30 minutes.
 * The single-site series (bench/history.ts) reaches 150 rounds; this one shows whether a weekly
 * export for 50 sites at once stays bounded as their history grows.
 *
 *   npx tsx bench/weekly.ts [longest] [pairs]     (or: npm run bench -- weekly)
 */
import { benchDrops } from './history.js';
import type { BenchRow, PartOptions } from './types.js';

export const WEEKLY_SITES = 50;
export const WEEKLY_LONGEST = 20;

/** 50 sites at 5 and `longest` rounds (5 sites at 5 and 8 with `small`). */
export function benchWeekly(
  options: PartOptions = { small: false },
  longest = options.small ? 8 : WEEKLY_LONGEST,
  pairs = 2,
): Promise<BenchRow[]> {
  const sites = options.small ? 5 : WEEKLY_SITES;
  return benchDrops({ label: 'weekly', what: `${sites} sites`, sites, histories: [5, longest], pairs });
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/'));
if (invokedDirectly) {
  const [longest, pairs] = process.argv.slice(2);
  process.stdout.write(
    `${JSON.stringify(await benchWeekly({ small: false }, longest ? Number(longest) : undefined, pairs ? Number(pairs) : undefined), null, 2)}\n`,
  );
}
