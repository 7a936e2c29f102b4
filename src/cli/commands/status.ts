/** `ropewatch status`: what the store holds, and each site's last round. */
import type { Command } from 'commander';
import type { Site } from '../../config/types.js';
import { terminalText } from '../../util/terminalText.js';
import type { Workspace } from '../../workspace.js';
import { commandModules } from '../command.js';
import type * as CommandModules from '../commandModules.js';
import { addCommonOptions, type CommonOptions } from '../commonOptions.js';
import { printJson, type CliIo } from '../io.js';

/** Sample IDs printed by `status` before "and N more" (--json lists them all). */
const STATUS_LIST_LIMIT = 20;

function listSome(ids: readonly string[], limit: number): string {
  if (ids.length === 0) return 'none';
  const shown = ids.slice(0, limit).join(', ');
  return ids.length > limit ? `${ids.length}: ${shown} and ${ids.length - limit} more (--json lists them all)` : shown;
}

type Modules = Pick<typeof CommandModules, 'buildSiteRounds' | 'clockDay' | 'shownLocation'>;
type SiteStatus = ReturnType<typeof siteStatus>;

/** One site's rounds as the store holds them today, its last round and the next one planned. */
function siteStatus(ws: Workspace, site: Site, { buildSiteRounds, clockDay }: Modules) {
  const rounds = buildSiteRounds(
    site,
    ws.store.ropes(site.id),
    ws.store.currentResults(site.id),
    ws.store.plannedWithoutResults(site.id),
    {},
    clockDay(ws.now()),
  );
  const last = rounds.at(-1);
  const planned = ws.store.plannedRopes(site.id).filter((rope) => rope.afterRound === (last?.number ?? 0));
  return {
    site: site.id,
    name: site.name,
    rounds: rounds.length,
    lastRound: last
      ? {
          number: last.number,
          id: last.id,
          startOn: last.startOn,
          state: last.state,
          resultsDueOn: last.resultsDueOn,
        }
      : null,
    missingRopesLastRound: last ? last.barns.flatMap((barn) => barn.missingSampleIds) : [],
    nextRound: planned.length > 0 ? { ropes: planned.length, dueOn: planned[0]!.dueOn } : null,
  };
}

/** A site's line of the plain-text status. */
function siteLine(site: SiteStatus): string {
  return (
    `site ${site.site} (${site.name}): ${site.rounds} round${site.rounds === 1 ? '' : 's'}` +
    (site.lastRound
      ? `, last ${site.lastRound.id}${site.lastRound.state === 'complete' ? '' : ` (${site.lastRound.state === 'awaiting-results' ? 'awaiting results' : 'partial results'}, due by ${site.lastRound.resultsDueOn})`}`
      : '') +
    (site.missingRopesLastRound.length
      ? ` (${site.missingRopesLastRound.length} ropes missing: ${site.missingRopesLastRound.join(', ')})`
      : '') +
    (site.nextRound ? `; next round: ${site.nextRound.ropes} ropes planned, due ${site.nextRound.dueOn}` : '')
  );
}

function printStatus(ws: Workspace, io: CliIo, json: boolean, modules: Modules): void {
  const counts = ws.store.counts();
  const unresolved = ws.store.unresolvedSampleIds();
  const sites = ws.config.sites.map((site) => siteStatus(ws, site, modules));
  if (json) {
    printJson(io, {
      store: modules.shownLocation(ws.storeLocation),
      ...counts,
      unresolvedSampleCount: unresolved.length,
      unresolvedSamples: unresolved,
      sites,
    });
    return;
  }
  io.stdout(
    [
      `store ${modules.shownLocation(ws.storeLocation)}`,
      `files: ${counts.files} (${counts.rejectedFiles} rejected)`,
      `results: ${counts.results} stored, ${counts.currentResults} current (others superseded by reissues)`,
      `ropes: ${counts.ropes} on sheets, ${counts.planned} planned`,
      `refused rows: ${counts.rejectedRows}`,
      `unresolved samples (no rope sheet yet): ${listSome(unresolved, STATUS_LIST_LIMIT)}`,
      ...sites.map(siteLine),
    ]
      // Sample IDs and names come from lab files: escaped for the terminal.
      .map(terminalText)
      .join('\n') + '\n',
  );
}

export function registerStatus(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('status')
      .description('what the store holds: files, rows, unresolved samples, sites and their last round')
      .option('--json', 'print as JSON'),
  ).action(async (options: CommonOptions) => {
    const modules = await commandModules();
    modules.withWorkspace(io, options, (ws) => printStatus(ws, io, options.json === true, modules), {
      createStore: false,
    });
  });
}
