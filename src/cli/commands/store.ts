/**
 * `ropewatch store copy --from A --to B`: a whole store copied between a SQLite file and a
 * PostgreSQL database (postgres:// URL), either way, into an empty target; every table's count and
 * digest checked on both sides before the copy is committed. The modules it runs with are
 * imported when it runs, so declaring it loads nothing but commander.
 */
import type { Command } from 'commander';
import { type CliIo, UsageError } from '../io.js';

interface CopyOptions {
  from: string;
  to: string;
}

/** Runs the copy; a store that cannot be used, or a refused copy, is exit 2 with its reason. */
async function runCopy(io: CliIo, options: CopyOptions): Promise<void> {
  const [{ parseStoreLocation, redactedLocation }, { copyStore, openStoreSide }] = await Promise.all([
    import('../../store/location.js'),
    import('../../store/pg/copyStore.js'),
  ]);
  const from = parseStoreLocation(options.from);
  const to = parseStoreLocation(options.to);
  if (options.from === options.to) {
    throw new UsageError(`--from and --to name the same store (${redactedLocation(options.from)})`);
  }
  const sides: { close(): void }[] = [];
  try {
    const source = openStoreSide(from, 'source');
    sides.push(source);
    const target = openStoreSide(to, 'target');
    sides.push(target);
    const report = copyStore(source, target);
    for (const row of report) io.stdout(`${row.table}\t${row.rows}\t${row.sha256}\n`);
    const total = report.reduce((sum, r) => sum + r.rows, 0);
    io.stdout(
      `copied ${total} rows in ${report.length} tables from ${source.shown} to ${target.shown}; counts and digests agree\n`,
    );
  } catch (error) {
    const known = ['StoreCopyError', 'StoreOpenError', 'StoreLocationError', 'PgError'];
    if (error instanceof Error && known.includes(error.name)) throw new UsageError(`store copy: ${error.message}`);
    throw error;
  } finally {
    for (const side of sides.reverse()) side.close();
  }
}

export function registerStore(program: Command, io: CliIo): void {
  const store = program.command('store').description('work on the store itself (copy between SQLite and PostgreSQL)');
  store
    .command('copy')
    .description(
      'copy a whole store into an empty one: a SQLite file or a PostgreSQL database (postgres://user@host/db), either way; counts and digests of every table are checked before the copy is kept',
    )
    .requiredOption('--from <store>', 'the store to copy: a SQLite file or a postgres:// URL')
    .requiredOption('--to <store>', 'the empty store to copy into: a SQLite file (created) or a postgres:// URL')
    .action(async (options: CopyOptions) => runCopy(io, options));
}
