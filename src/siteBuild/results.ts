/**
 * What a build of sites' outputs gives back, wherever the sites were built (src/outputs.ts in
 * this thread, src/siteBuild/pool.ts on workers): each site's build, and the error that names the
 * sites whose outputs could not be written.
 */
import { writeIndex } from '../report/pages.js';
import type { Workspace } from '../workspace.js';

/** Thrown when outputs could not be written: the store holds the data, the outbox is behind it. */
export class OutputError extends Error {
  override readonly name = 'OutputError';
  constructor(
    readonly siteIds: readonly string[],
    reason: unknown,
  ) {
    super(
      `the outputs of ${siteIds.join(', ')} could not be written (${reason instanceof Error ? reason.message : String(reason)}); ` +
        'the store holds the data, and the outputs are rebuilt on the next run (or with `ropewatch report`)',
      { cause: reason },
    );
  }
}

/** What a build of one site wrote. */
export interface SiteBuild {
  site: { id: string; name: string };
  rounds: { number: number; id: string; startOn: string }[];
  /** Rounds whose files were (re)written; the others were left as they were. */
  roundsWritten: number;
}

/** A site whose build threw: the error is kept for the OutputError. */
export interface FailedBuild {
  siteId: string;
  error: unknown;
}

/**
 * After the sites' builds: writes the index page, then throws when a build (or the index) failed.
 * @throws OutputError naming every site that failed, with the first failure as its reason
 */
export function finishOutputs(ws: Workspace, failed: readonly FailedBuild[]): void {
  const failures = [...failed];
  try {
    writeIndex(ws.outbox, ws.config);
  } catch (error) {
    failures.push({ siteId: 'the index page', error });
  }
  if (failures.length > 0)
    throw new OutputError(
      failures.map((failure) => failure.siteId),
      failures[0]!.error,
    );
}
