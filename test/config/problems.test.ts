/**
 * The configuration is forgiving and precise: every problem of every file in one error, each
 * with its file and key path; an unknown key names the nearest known key; pen numbers need no
 * quotes; a missing setting says what it means. Cases are edits of the demo config
 * (src/demo/config); expected outcomes follow from the schema (src/config/schema.ts) and the
 * demo's layouts, by hand.
 */
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config/load.js';
import { configCases, configError, demoText } from './configCases.js';

const { configWith, configEdited } = configCases();

describe('ConfigError', () => {
  it('keeps one problem as file, key path and detail, as before', () => {
    const error = new ConfigError('/c/sites.yaml', 'sites[0].id', 'is wrong');
    expect(error.message).toBe('/c/sites.yaml at sites[0].id: is wrong');
    expect(error.problems).toEqual([{ file: '/c/sites.yaml', keyPath: 'sites[0].id', detail: 'is wrong' }]);
  });

  it('heads its message with the first of several problems and lists every one', () => {
    const error = ConfigError.of([
      { file: '/c/sites.yaml', keyPath: 'a', detail: 'first' },
      { file: '/c/assays.yaml', keyPath: '', detail: 'second' },
      { file: '/c/labs/x.yaml', keyPath: 'b[1]', detail: 'third' },
    ]);
    expect(error).toMatchObject({ file: '/c/sites.yaml', keyPath: 'a', detail: 'first' });
    expect(error.message.split('\n')).toEqual([
      '/c/sites.yaml at a: first',
      'and 2 more configuration problems:',
      '  /c/assays.yaml: second',
      '  /c/labs/x.yaml at b[1]: third',
    ]);
    expect(() => ConfigError.of([])).toThrow(RangeError);
  });
});

describe('unknown keys', () => {
  it('names the nearest key for a misspelling, and does not also call the meant key missing', () => {
    const dir = configEdited('sites.yaml', (doc) => {
      doc.programDefaults.designPrevalance = doc.programDefaults.designPrevalence;
      delete doc.programDefaults.designPrevalence;
    });
    const error = configError(dir);
    // designPrevalance -> designPrevalence: one substitution (a -> e), by hand.
    expect(error.problems).toEqual([
      {
        file: path.join(dir, 'sites.yaml'),
        keyPath: 'programDefaults.designPrevalance',
        detail: 'unknown key "designPrevalance": did you mean designPrevalence?',
      },
    ]);
  });

  it('names the nearest key deep in a layout and in a lab profile', () => {
    // Hollow Creek F2 gives no rowLabels: the misspelt key is the one it meant.
    const layout = configEdited('sites.yaml', (doc) => (doc.sites[0].barns[1].layout.rowLable = ['A', 'B']));
    expect(configError(layout).problems).toEqual([
      expect.objectContaining({
        keyPath: 'sites[0].barns[1].layout.rowLable',
        detail: 'unknown key "rowLable": did you mean rowLabels?',
      }),
    ]);
    const lab = configEdited('labs/northfield.yaml', (doc) => {
      doc.format.dateFromat = doc.format.dateFormat;
      delete doc.format.dateFormat;
    });
    expect(configError(lab).problems).toEqual([
      expect.objectContaining({
        keyPath: 'format.dateFromat',
        detail: 'unknown key "dateFromat": did you mean dateFormat?',
      }),
    ]);
  });

  it('names the nearest key inside one form of a setting that has two', () => {
    // designPrevalence is a proportion or { pens: n }; "pen" -> "pens" is one insertion, by hand.
    const dir = configEdited('sites.yaml', (doc) => (doc.programDefaults.designPrevalence = { pen: 1 }));
    expect(configError(dir).problems).toEqual([
      expect.objectContaining({
        keyPath: 'programDefaults.designPrevalence',
        detail: expect.stringMatching(/; or pen: unknown key "pen": did you mean pens\?$/),
      }),
    ]);
  });

  it('says so when the near key is given too', () => {
    const dir = configEdited('sites.yaml', (doc) => (doc.sites[0].Barns = []));
    expect(configError(dir).problems).toEqual([
      expect.objectContaining({
        keyPath: 'sites[0].Barns',
        detail: 'unknown key "Barns": did you mean barns? (given too: keep one)',
      }),
    ]);
  });

  it('lists the keys of the place when no key is near', () => {
    const dir = configEdited('sites.yaml', (doc) => (doc.sites[0].barns[0].position.elevation = 3));
    expect(configError(dir).problems).toEqual([
      expect.objectContaining({
        keyPath: 'sites[0].barns[0].position.elevation',
        detail: 'unknown key "elevation"; the keys here are x, y',
      }),
    ]);
  });

  it('names the nearest assay id for a per-assay key that names no assay', () => {
    const dir = configEdited('sites.yaml', (doc) => (doc.programDefaults.ropeSensitivity.PRRS = 0.9));
    expect(configError(dir).problems).toEqual([
      expect.objectContaining({
        keyPath: 'programDefaults.ropeSensitivity.PRRS',
        detail: expect.stringContaining('did you mean PRRSV?'),
      }),
    ]);
  });
});

describe('several problems at once', () => {
  it('reports every problem of every file, in file order, each with its file and key path', () => {
    const sites = demoText('sites.yaml')
      .replace('rows: 2\n          pensPerRow: 24', 'rows: 7\n          pensPerRow: 24')
      .replace('  intervalDays: 14\n', '  intervalDay: 14\n')
      .replace("empty: ['20']", 'empty: [21]');
    const assays = demoText('assays.yaml').replace(
      'positiveBelow: 38\n    suspectBelow: 40',
      'positiveBelow: 41\n    suspectBelow: 40',
    );
    const lab = demoText('labs/northfield.yaml').replace('{ assay: IAV,', '{ assay: IAVV,');
    const dir = configWith({ 'sites.yaml': sites, 'assays.yaml': assays, 'labs/northfield.yaml': lab });
    const error = configError(dir);
    const file = (name: string) => path.join(dir, name);
    expect(error.problems.map((problem) => [problem.file, problem.keyPath])).toEqual([
      [file('assays.yaml'), 'assays[1].suspectBelow'],
      [file('sites.yaml'), 'programDefaults.intervalDay'],
      [file('sites.yaml'), 'sites[0].barns[1].layout.rows'],
      [file('labs/northfield.yaml'), 'assays.Influenza A Matrix RT-PCR.assay'],
    ]);
    expect(error.problems[1]!.detail).toBe('unknown key "intervalDay": did you mean intervalDays?');
    expect(error.problems[3]!.detail).toContain('did you mean IAV?');
    for (const problem of error.problems) expect(error.message).toContain(`${problem.keyPath}: ${problem.detail}`);
  });

  it('checks the other barns and sites when one barn is wrong', () => {
    const dir = configEdited('sites.yaml', (doc) => {
      doc.sites[0].barns[0].layout.empty = ['Z9'];
      doc.sites[0].barns[2].layout.rowLabels = ['N', 'n'];
      doc.sites[1].barns[1].layout.outOfUse = [99];
    });
    expect(configError(dir).problems.map((problem) => problem.keyPath)).toEqual([
      'sites[0].barns[0].layout.empty[0]',
      'sites[0].barns[2].layout.rowLabels[1]',
      'sites[1].barns[1].layout.outOfUse[0]',
    ]);
  });
});

describe('missing settings', () => {
  it('says what a missing required setting means, with its source', () => {
    const dir = configEdited('sites.yaml', (doc) => {
      delete doc.programDefaults.priorFreedom;
      delete doc.programDefaults.introductionPerInterval;
    });
    const problems = configError(dir).problems;
    expect(problems.map((problem) => problem.keyPath)).toEqual([
      'programDefaults.priorFreedom',
      'programDefaults.introductionPerInterval',
    ]);
    expect(problems[0]!.detail).toMatch(
      /^is missing: the probability that the herd was free before the first round \(Martin, Cameron & Greiner 2007\)/,
    );
    expect(problems[1]!.detail).toMatch(
      /^is missing: the probability that the disease enters the herd between two rounds/,
    );
  });

  it('says so for a missing load-band list, and for an empty file', () => {
    const bands = configEdited('assays.yaml', (doc) => delete doc.assays[0].loadBands);
    expect(configError(bands).problems).toEqual([
      expect.objectContaining({
        keyPath: 'assays[0].loadBands',
        detail: expect.stringMatching(/^is missing: Ct bands/),
      }),
    ]);
    expect(configError(configWith({ 'assays.yaml': '# nothing yet\n' })).problems).toEqual([
      expect.objectContaining({ keyPath: '', detail: 'is empty' }),
    ]);
  });

  it('fills the settings that have defaults', () => {
    const dir = configEdited('sites.yaml', (doc) => {
      delete doc.programDefaults.followUpRadius;
      delete doc.analysis;
    });
    const config = loadConfig(dir);
    // Defaults as documented in the README (Configuration): follow-up radius 1.5 pen units, sized per barn.
    expect(config.sites[1]!.program).toMatchObject({ followUpRadius: 1.5, sizeFor: 'barn', ropeBudget: undefined });
    expect(config.analysis).toMatchObject({ seed: 1, permutations: 999, alpha: 0.05 });
  });
});

describe('pen numbers without quotes', () => {
  it('reads an unquoted pen number as the pen of that number, padded or not', () => {
    const dir = configEdited('sites.yaml', (doc) => {
      // Tamsin Ridge N2: continuous numbering 1..20 (no padding); YAML reads 20 as a number.
      doc.sites[1].barns[1].layout.empty = [20];
      // Hollow Creek F2: serpentine, padDigits 2, pens 01..48: 7 is pen 07.
      doc.sites[0].barns[1].layout.outOfUse = [7, 48];
    });
    const config = loadConfig(dir);
    const n2 = config.siteById.get('TAMSIN-RIDGE')!.barnById.get('N2')!;
    expect(n2.layout.empty).toEqual(['20']);
    expect(n2.penById.get('20')!.status).toBe('empty');
    const f2 = config.siteById.get('HOLLOW-CREEK')!.barnById.get('F2')!;
    expect(f2.layout.outOfUse).toEqual(['07', '48']);
    expect(f2.penById.get('07')!.status).toBe('out-of-use');
  });

  it('refuses a bare number in a layout numbered per row, and a label written unlike the layout, saying what to write', () => {
    const dir = configEdited('sites.yaml', (doc) => {
      doc.sites[0].barns[0].layout.empty = [7];
      doc.sites[0].barns[1].layout.empty = ['7'];
    });
    expect(configError(dir).problems).toEqual([
      expect.objectContaining({
        keyPath: 'sites[0].barns[0].layout.empty[0]',
        detail: 'names pen 7, which is not in the layout (pens are numbered per row: write the row label too, e.g. A7)',
      }),
      expect.objectContaining({
        keyPath: 'sites[0].barns[1].layout.empty[0]',
        detail: 'names pen 7, which is not in the layout (write 07, as the layout labels it)',
      }),
    ]);
  });

  it('names the label to write for a head count keyed unlike the layout', () => {
    // Hollow Creek F1 is numbered per row, A1..A20: "a01" is A1 as matched, but keys match exactly.
    const dir = configEdited(
      'sites.yaml',
      (doc) => (doc.sites[0].barns[0].layout.headCount = { default: 26, pens: { a01: 20 } }),
    );
    expect(configError(dir).problems).toEqual([
      expect.objectContaining({
        keyPath: 'sites[0].barns[0].layout.headCount.pens.a01',
        detail: 'names pen a01, which is not in the layout (write A1, as the layout labels it)',
      }),
    ]);
  });

  it('still refuses a number that is not a whole pen number', () => {
    const dir = configEdited('sites.yaml', (doc) => (doc.sites[1].barns[1].layout.empty = [2.5]));
    expect(configError(dir).problems).toEqual([
      expect.objectContaining({ keyPath: 'sites[1].barns[1].layout.empty[0]' }),
    ]);
  });
});

describe('rope-sheet column names', () => {
  it('refuses a configured name that another column already carries, at the configured name', () => {
    const dir = configEdited('sites.yaml', (doc) => (doc.ropeSheet = { columns: { hungOn: ['Datum', 'house'] } }));
    expect(configError(dir).problems).toEqual([
      expect.objectContaining({
        keyPath: 'ropeSheet.columns.hungOn[1]',
        detail: expect.stringMatching(
          /^"house" is also a default name of the barn column .*give ropeSheet\.columns\.barn names of its own$/,
        ),
      }),
    ]);
    const both = configEdited('sites.yaml', (doc) => (doc.ropeSheet = { columns: { barn: 'Stall', pen: ['STALL'] } }));
    expect(configError(both).problems).toEqual([
      expect.objectContaining({
        keyPath: 'ropeSheet.columns.pen[0]',
        detail: expect.stringContaining('ropeSheet.columns.barn'),
      }),
    ]);
  });

  it('keeps each column its own name and replaces only the synonyms of a configured column', () => {
    const dir = configEdited('sites.yaml', (doc) => (doc.ropeSheet = { columns: { hungOn: 'Datum' } }));
    const columns = loadConfig(dir).ropeSheet.columns;
    expect(columns.hungOn).toEqual(['hung_on', 'Datum']);
    expect(columns.sampleId[0]).toBe('sample_id');
    expect(columns.sampleId.length).toBeGreaterThan(1);
  });
});
