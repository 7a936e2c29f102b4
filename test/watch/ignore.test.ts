import { describe, expect, it } from 'vitest';
import { ignoreReason, inboxMatcher, normaliseExtensions } from '../../src/watch/ignore.js';

/** True when the watcher must not read the path: ignoreReason gives a reason. */
const ignored = (...args: Parameters<typeof ignoreReason>): boolean => ignoreReason(...args) !== null;

// The naming conventions below are trade conventions of operating systems, browsers and
// office suites (common practice, no source): dotfiles are hidden on Unix; Office writes an
// owner file "~$name" beside an open document; editors leave "name~" backups and vim ".swp"
// swap files; browsers download into ".crdownload" / ".part"; copy tools write ".tmp".
describe('ignoreReason: read or not', () => {
  it('accepts lab exports with the default extensions, in any letter case', () => {
    for (const name of ['results.csv', 'RESULTS.CSV', 'run 12.tsv', 'export.txt', '/srv/inbox/a.b.csv']) {
      expect(ignored(name), name).toBe(false);
    }
  });

  it('ignores hidden, temporary, lock and backup files', () => {
    const names = [
      '.hidden.csv',
      '.~lock.results.csv#',
      'results.csv.part',
      'results.tmp',
      'results.csv.tmp',
      'results.csv.crdownload',
      '~$results.csv',
      'results.csv.swp',
      'results.csv~',
    ];
    for (const name of names) expect(ignored(name), name).toBe(true);
  });

  it('ignores files whose extension is not accepted, and a bare extension with no name', () => {
    for (const name of ['report.pdf', 'README', 'Thumbs.db', 'csv', '.csv', 'results.xlsx.bak']) {
      expect(ignored(name), name).toBe(true);
    }
  });

  it('takes spreadsheets by default: workbooks to read, and the formats ropewatch refuses with a reason rather than leaves unseen', () => {
    // .xlsx/.xlsm are Office Open XML workbooks (ECMA-376); .xls (BIFF), .xlsb and .ods reach
    // ingest, which refuses them as not-a-workbook with the reason.
    for (const name of ['results.xlsx', 'RESULTS.XLSX', 'book.xlsm', 'old.xls', 'binary.xlsb', 'calc.ods']) {
      expect(ignored(name), name).toBe(false);
    }
    // The lock file an office suite writes beside an open workbook stays ignored (common practice, no source).
    expect(ignoreReason('~$results.xlsx')).toBe('office lock file');
    expect(ignored('.~lock.results.xlsx#')).toBe(true);
  });

  it('takes a configurable extension list', () => {
    expect(ignored('export.xlsx', { extensions: ['.xlsx'] })).toBe(false);
    expect(ignored('export.csv', { extensions: ['.XLSX'] })).toBe(true);
  });

  it('ignores anything inside archive/ and rejected/ but not an inbox that lives under a folder named archive', () => {
    expect(ignored('archive/a.csv')).toBe(true);
    expect(ignored('inbox\\Rejected\\a.csv')).toBe(true);
    expect(ignored('/srv/archive/inbox/a.csv', { inbox: '/srv/archive/inbox' })).toBe(false);
    expect(ignored('/srv/archive/inbox/archive/a.csv', { inbox: '/srv/archive/inbox' })).toBe(true);
  });

  it('ignores paths outside the inbox when the inbox is given', () => {
    expect(ignoreReason('/srv/other/a.csv', { inbox: '/srv/inbox' })).toBe('outside the inbox');
  });

  it('rejects a malformed extension list with the RangeError grammar', () => {
    expect(() => normaliseExtensions([])).toThrow(RangeError);
    expect(() => normaliseExtensions(['csv'])).toThrow(/`extensions` entries must look like "\.csv", got "csv"/);
    expect(normaliseExtensions(['.CSV', '.csv', ' .tsv '])).toEqual(['.csv', '.tsv']);
  });
});

describe('inboxMatcher', () => {
  const file = { isFile: () => true, isDirectory: () => false };
  const dir = { isFile: () => false, isDirectory: () => true };
  const other = { isFile: () => false, isDirectory: () => false };

  it('never ignores the watched folder itself, with or without stats', () => {
    // chokidar asks about the watched root too (chokidar 5 README, "Path filtering": called once
    // without stats, then with them); ignoring it would watch nothing.
    const ignored = inboxMatcher('/srv/inbox');
    expect(ignored('/srv/inbox')).toBe(false);
    expect(ignored('/srv/inbox/', dir)).toBe(false);
  });

  it('ignores subfolders and ignored names, and passes accepted files', () => {
    const ignored = inboxMatcher('/srv/inbox');
    expect(ignored('/srv/inbox/archive')).toBe(true);
    expect(ignored('/srv/inbox/batch.csv', dir)).toBe(true);
    // Passed on so that the watcher logs why it skips it (test/watch/specialFiles.test.ts).
    expect(ignored('/srv/inbox/fifo.csv', other)).toBe(false);
    expect(ignored('/srv/inbox/fifo.tmp', other)).toBe(true);
    expect(ignored('/srv/inbox/a.csv.part', file)).toBe(true);
    expect(ignored('/srv/inbox/a.csv')).toBe(false);
    expect(ignored('/srv/inbox/a.csv', file)).toBe(false);
  });
});
