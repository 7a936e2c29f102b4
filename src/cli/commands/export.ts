/**
 * `ropewatch export --site S [--format csv|json] [--from DATE] [--to DATE] [--table T] [--out DIR]`:
 * a site's tidy tables (results, rounds, alerts) across its rounds, into a folder or onto
 * standard output. The modules it runs with are imported when it runs (as for every command), so
 * declaring it loads nothing but commander.
 */
import path from 'node:path';
import type { Command } from 'commander';
import { commandModules } from '../command.js';
import { addCommonOptions, type CommonOptions } from '../commonOptions.js';
import { type CliIo, UsageError } from '../io.js';

const ISO_DATE = /^\d{4}-(0[1-9]|1[0-2])-(0[1-9]|[12]\d|3[01])$/;
const TABLES = ['results', 'rounds', 'alerts'] as const;
const FORMATS = ['csv', 'json'] as const;

interface ExportOptions extends CommonOptions {
  site: string;
  format: string;
  from?: string;
  to?: string;
  table?: string;
  out?: string;
}

function oneOf<T extends string>(option: string, raw: string, allowed: readonly T[]): T {
  if ((allowed as readonly string[]).includes(raw)) return raw as T;
  throw new UsageError(`${option} must be one of ${allowed.join(', ')}, got ${JSON.stringify(raw)}`);
}

function isoDate(option: string, raw: string | undefined): string | undefined {
  if (raw === undefined) return undefined;
  if (!ISO_DATE.test(raw)) throw new UsageError(`${option} must be a date yyyy-MM-dd, got ${JSON.stringify(raw)}`);
  return raw;
}

/** Checks the options before anything is opened; the site is checked against the configuration. */
function parseOptions(options: ExportOptions) {
  const format = oneOf('--format', options.format, FORMATS);
  const table = options.table === undefined ? undefined : oneOf('--table', options.table, TABLES);
  const from = isoDate('--from', options.from);
  const to = isoDate('--to', options.to);
  if (from !== undefined && to !== undefined && from > to) throw new UsageError(`--from ${from} is after --to ${to}`);
  if (format === 'csv' && table === undefined && options.out === undefined)
    throw new UsageError(
      'CSV on standard output is one table: name it with --table results|rounds|alerts, or give --out DIR',
    );
  return { format, table, range: { from, to } };
}

export function registerExport(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('export')
      .description(
        "write a site's tidy tables (results, rounds, alerts: one row per observation, across its rounds) as CSV or JSON, to a folder or standard output",
      )
      .requiredOption('--site <site>', 'site id, code or name')
      .option('--format <format>', 'csv or json', 'csv')
      .option('--from <date>', 'only rounds that began on or after this day (yyyy-MM-dd)')
      .option('--to <date>', 'only rounds that began on or before this day (yyyy-MM-dd)')
      .option('--table <table>', 'only this table: results, rounds or alerts')
      .option('--out <dir>', 'write <table>.csv or <table>.json into this folder instead of standard output'),
  ).action(async (options: ExportOptions) => {
    const { format, table, range } = parseOptions(options);
    const [{ regenerateOutputs, siteOption, withWorkspace }, { staleSites }, { exportText, writeExport }] =
      await Promise.all([commandModules(), import('../../outputs.js'), import('../../report/tidy/exportTables.js')]);
    withWorkspace(
      io,
      options,
      (ws) => {
        const site = siteOption(ws, options.site);
        // The views hold what the site's last build of outputs gave them: bring it up to date first.
        if (staleSites(ws).includes(site.id)) regenerateOutputs(ws, [site.id]);
        const request = { siteId: site.id, format, range, table };
        if (options.out === undefined) {
          io.stdout(exportText(ws.store, request));
          return;
        }
        const written = writeExport(ws.store, request, path.resolve(io.cwd, options.out));
        for (const file of written) io.stdout(`wrote ${file}\n`);
      },
      { createStore: false },
    );
  });
}
