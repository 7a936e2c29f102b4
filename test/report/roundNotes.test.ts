/**
 * Replaced reports and results refused under a mistyped ID on the summary page, in its alerts and
 * in summary.csv, and the words they share (src/report/roundNotes.ts). The round below is small
 * enough to count by hand, on the demo site hollow-creek (barn F1: rows A and B).
 *
 * Round 1, planned before it (after round 0): F1 A1 P0 (negative, back), A3 P1 (no result; two
 * rows refused under P1X and p1x), A5 P3 (no result, nothing refused: simply missing). S1 on a
 * sheet in F1 B2: northfield reported it negative on 2026-08-06 (Final), then corrected it to
 * positive Ct 30.0 on 2026-08-08 (Corrected).
 */
import { execFileSync } from 'node:child_process';
import { parse as parseCsv } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { parse as parseYaml } from 'yaml';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { summariseSite, type RoundSummary } from '../../src/analysis/roundSummary.js';
import { wordSummary } from '../../src/report/summaryNotices.js';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import {
  buildSiteRounds,
  type ReplacedInput,
  type ResultInput,
  type RoundNotesInput,
} from '../../src/rounds/roundModel.js';
import { roundAlerts } from '../../src/report/html/alerts.js';
import { renderSummaryPage } from '../../src/report/html/summaryPage.js';
import { normaliseSampleId } from '../../src/ingest/recordCells.js';
import {
  comparableId,
  correctionsEntry,
  ingestAgainCommand,
  readingText,
  refusalGroups,
  replacementCell,
  replacementWhy,
  reportDates,
  simplyMissing,
} from '../../src/report/roundNotes.js';
import { SUMMARY_COLUMNS, summaryCsv } from '../../src/report/summaryCsv.js';
import { resultInput } from '../helpers/results.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const site = config.siteById.get('HOLLOW-CREEK')!;

let nextId = 1;
const result = (
  sampleId: string,
  resultClass: ResultInput['resultClass'],
  ct: number | null,
  labId = 'northfield',
): ResultInput =>
  resultInput({
    id: nextId++,
    labId,
    sampleId,
    ct,
    resultClass,
    reportedOn: '2026-08-06',
  });
const correction: ReplacedInput = {
  sampleId: 'S1',
  assayId: 'PRRSV',
  labId: 'northfield',
  kind: 'correction',
  reason: 'reissued by the lab as a correction',
  replaced: {
    resultClass: 'negative',
    ct: null,
    ctRaw: 'Undetermined',
    labCall: 'Negative',
    reportedOn: '2026-08-06',
    status: 'final',
    statusWord: 'Final',
  },
  inPlace: {
    resultClass: 'positive',
    ct: 30,
    ctRaw: '30.0',
    labCall: 'Positive',
    reportedOn: '2026-08-08',
    status: 'corrected',
    statusWord: 'Corrected',
  },
};
const NOTES: RoundNotesInput = {
  replaced: [correction],
  mistyped: [
    { written: 'P1X', suggestedId: 'P1', fileName: 'lab results.csv', line: 3 },
    { written: 'p1x', suggestedId: 'P1', fileName: 'lab results.csv', line: 4 },
  ],
};

function summaries(notes: RoundNotesInput, extraResults: ResultInput[] = []): RoundSummary[] {
  const ropes = [
    { sampleId: 'P0', siteId: site.id, barnId: 'F1', penId: 'A1', hungOn: '2026-08-03', source: 'plan' },
    { sampleId: 'S1', siteId: site.id, barnId: 'F1', penId: 'B2', hungOn: '2026-08-03', source: 'sheet' },
  ];
  const planned = [
    { sampleId: 'P1', barnId: 'F1', penId: 'A3', dueOn: '2026-08-03' },
    { sampleId: 'P3', barnId: 'F1', penId: 'A5', dueOn: '2026-08-03' },
  ];
  const rounds = buildSiteRounds(
    site,
    ropes,
    [result('P0', 'negative', null), result('S1', 'positive', 30), ...extraResults],
    planned,
    notes,
  );
  return summariseSite(config, site, rounds, siteConfidence(site, rounds)).map(wordSummary);
}

const page = (summary: RoundSummary) =>
  renderSummaryPage({ summary, alerts: roundAlerts([summary], [], 0), notices: [] });
const csv = (summary: RoundSummary) => parseCsv(summaryCsv(summary), { columns: true }) as Record<string, string>[];

describe('the words for a replaced report', () => {
  it('gives class and value as the lab wrote them, and the two report dates in the words of the kind', () => {
    // Common practice, no source: the wording is the project's own; the dates are the inputs'.
    expect(readingText({ resultClass: 'invalid', ctRaw: '' })).toBe('invalid (blank value)');
    expect(replacementCell(correction)).toBe(
      'S1: negative (Undetermined) -> positive (30.0) (reported 2026-08-06, corrected 2026-08-08)',
    );
    const dates = (kind: string | null) => reportDates({ ...correction, kind });
    expect(dates('final-over-preliminary')).toBe('preliminary 2026-08-06, final 2026-08-08');
    expect(dates('preliminary-after-final')).toBe('preliminary 2026-08-06, after the final report of 2026-08-08');
    expect(dates(null)).toBe('reported 2026-08-06, then 2026-08-08');
    expect(reportDates({ ...correction, replaced: { ...correction.replaced, reportedOn: null } })).toBe(
      'reported undated, corrected 2026-08-08',
    );
    // A link stored before kinds were recorded says why in the stored reason.
    expect(replacementWhy({ kind: null, reason: 'later report (2026-08-08 after 2026-08-06)' })).toBe(
      'later report (2026-08-08 after 2026-08-06)',
    );
  });
});

describe('the one-line fix for a mistyped ID', () => {
  it('writes a corrections.yaml entry that a YAML parser reads back as written, whatever the ID holds', () => {
    // The yaml package (YAML 1.2) as the oracle: `*` starts an alias, `#` a comment, `:` and `{}` are flow indicators (YAML 1.2, 7.4).
    for (const written of ['HCF03-013G', 'HCF03-013*', 'HC#1', 'a: b', '{x}', 'say "x"', "it's"]) {
      const line = correctionsEntry(written, 'HCF03-012G', 'nvdl results #2.csv');
      expect(parseYaml(`sampleIds:\n  ${line}\n`), line).toEqual({
        sampleIds: [{ written, meant: 'HCF03-012G', file: 'nvdl results #2.csv' }],
      });
    }
  });

  it('gives a command that a POSIX shell splits back into the archived path', () => {
    // /bin/sh as the oracle (POSIX.1-2017, Shell Command Language 2.2): printf prints each argument on its own line.
    for (const name of [
      'nvdl_results_2026-09-02.csv',
      'lab results (2).csv',
      "it's.csv",
      'a$b`c\\d.csv',
      'x;rm -rf y.csv',
    ]) {
      const command = ingestAgainCommand(name);
      expect(command.startsWith('ropewatch ingest ')).toBe(true);
      const words = execFileSync('/bin/sh', ['-c', `printf '%s\\n' ${command.slice('ropewatch '.length)}`], {
        encoding: 'utf8',
      });
      expect(words, command).toBe(`ingest\ninbox/archive/${name}\n`);
    }
  });

  it('compares IDs as ingest does', () => {
    // The ingest rule as the oracle (src/ingest/recordCells.ts, normaliseSampleId).
    for (const raw of ['hcf03-013g', ' HCF03 - 013G ', 'hcf03\t013g', 'A b\u00a0c'])
      expect(comparableId(raw)).toBe(normaliseSampleId(raw));
  });

  it('groups a rope\u2019s refused rows by the ID as written and the file', () => {
    expect(
      refusalGroups({
        refusals: [
          { written: 'P1X', fileName: 'a.csv', line: 3 },
          { written: 'p1x ', fileName: 'a.csv', line: 4 },
          { written: 'P1X', fileName: 'b.csv', line: 2 },
        ],
      }),
    ).toEqual([
      { written: 'P1X', fileName: 'a.csv', lines: [3, 4] },
      { written: 'P1X', fileName: 'b.csv', lines: [2] },
    ]);
  });
});

describe('a rope whose result was refused under a mistyped ID', () => {
  const summary = summaries(NOTES).at(-1)!;
  const f1 = summary.barns.find((barn) => barn.barnId === 'F1')!;

  it('stays among the ropes without a result in summary.json, and is not simply missing', () => {
    expect(f1.missingSampleIds).toEqual(['P1', 'P3']);
    expect(simplyMissing(f1)).toEqual(['P3']);
  });

  it('is named in an alert that says what to do, and left out of the missing-rope alert', () => {
    const alerts = roundAlerts([summary], [], 0);
    const missing = alerts.filter((alert) => alert.kind === 'missing-ropes');
    // By hand: P3 alone is missing; P0 and S1 came back, P1 under a mistyped ID, of the 4 ropes on the sheet and the plan.
    expect(missing.map((alert) => alert.detail)).toEqual([
      '1 rope in barn F1 without a result (P3): 2 of 4 ropes on sheets or plans came back and 1 under a mistyped ID; missing ropes lower the detection confidence.',
    ]);
    expect(missing[0]!.action).toMatch(/^Ask the producer and the lab about 1 rope of .+ without a result$/);
    const mistyped = alerts.filter((alert) => alert.kind === 'mistyped-id');
    expect(mistyped).toHaveLength(1);
    expect(mistyped[0]).toMatchObject({ barnId: 'F1' });
    expect(mistyped[0]!.action).toMatch(
      /^Confirm a sample ID in .+: to count it, confirm the ID with the lab or the producer, then add it to config\/corrections.yaml and ingest the file again$/,
    );
    expect(mistyped[0]!.detail).toBe(
      '1 result in barn F1 refused under a mistyped ID (pen A3, planned P1, came back as P1X (lab results.csv, lines 3, 4)): not counted until a person confirms the ID; the line to add is under barn F1.',
    );
  });

  it('without the refusals, is a missing rope like any other (as before refusals were shown)', () => {
    const plain = summaries({}).at(-1)!;
    expect(
      roundAlerts([plain], [], 0)
        .filter((alert) => alert.kind === 'missing-ropes')
        .map((alert) => alert.detail),
    ).toEqual([
      // By hand: P0 and S1 came back of the 4 ropes on the sheet (P0, S1) and the plan (P1, P3).
      '2 ropes in barn F1 without a result (P1, P3): 2 of 4 ropes on sheets or plans came back; missing ropes lower the detection confidence.',
    ]);
    expect(page(plain)).not.toContain('mistyped');
  });

  it('has a pen row in summary.csv, and its IDs beside the missing ones on the barn and site rows', () => {
    const rows = csv(summary);
    expect(rows.filter((row) => row.level === 'barn' && row.barn === 'F1')).toEqual([
      expect.objectContaining({ missing_sample_ids: 'P3', refused_mistyped_id: 'P1X', likely_meant_id: 'P1' }),
    ]);
    expect(rows.filter((row) => row.level === 'barn' && row.barn === 'F2')).toEqual([
      expect.objectContaining({ missing_sample_ids: '', refused_mistyped_id: '', likely_meant_id: '' }),
    ]);
    expect(rows.filter((row) => row.level === 'site')).toEqual([
      expect.objectContaining({ missing_sample_ids: 'P3', refused_mistyped_id: 'P1X', likely_meant_id: 'P1' }),
    ]);
    expect(rows.filter((row) => row.level === 'pen' && row.pen === 'A3')).toEqual([
      expect.objectContaining({
        barn: 'F1',
        side: 'A',
        assay: '',
        sample_ids: 'P1',
        class: '',
        reason: 'result refused: mistyped ID?',
        refused_mistyped_id: 'P1X',
        likely_meant_id: 'P1',
      }),
    ]);
  });

  it('is named in the pen table and under its barn with the line to add, and the barn counts it apart from the missing ropes', () => {
    const html = page(summary);
    expect(html).toContain(
      '<strong>1 rope missing</strong>: P3; <strong>1 result refused under a mistyped ID</strong> (pen A3; not missing, not counted).',
    );
    expect(html).toMatch(
      /<tr data-pen="A3" data-mistyped="P1"><td>A3<\/td>.*?<strong>result refused: mistyped ID\?<\/strong><\/td><td colspan="2">written P1X \(lab results.csv, lines 3, 4\); most likely meant P1<\/td><\/tr>/,
    );
    const fix = /<ul data-mistyped-fix="F1">(.*?)<\/ul>/.exec(html)![1]!;
    // One entry for both rows: corrections.yaml compares IDs without case or spaces, and refuses two entries for one ID and file.
    expect(fix.match(/<li /g)).toHaveLength(1);
    expect(fix).toContain(
      `<code>- { written: &quot;P1X&quot;, meant: &quot;P1&quot;, file: &quot;lab results.csv&quot; }</code>`,
    );
    expect(fix).toContain(`<code>ropewatch ingest &#39;inbox/archive/lab results.csv&#39;</code>`);
  });
});

describe('summary.csv columns', () => {
  it('adds the three new columns at the end, after the existing ones', () => {
    // README: columns are stable and new ones are added at the end (common practice, no source).
    expect(SUMMARY_COLUMNS.indexOf('suspect_at_or_above')).toBe(51);
    expect(SUMMARY_COLUMNS.slice(52, 55)).toEqual(['corrections', 'refused_mistyped_id', 'likely_meant_id']);
  });
});

describe('a replaced report', () => {
  it('is listed on the page with both readings, the report dates and the lab\u2019s words, and on its pen\u2019s row of summary.csv', () => {
    const summary = summaries(NOTES).at(-1)!;
    const html = page(summary);
    const table = /<table data-replaced-reports="1">.*?<\/table>/.exec(html)![0];
    expect(table).toContain(
      '<tr data-replaced="S1" data-kind="correction"><td>F1 B2</td><td>S1</td><td>PRRSV</td><td>negative (Undetermined) \u2192 <strong>positive (30.0)</strong></td>' +
        '<td>reported 2026-08-06, corrected 2026-08-08</td><td>Final \u2192 Corrected</td><td>the lab&#39;s correction replaces it</td></tr>',
    );
    expect(csv(summary).find((row) => row.level === 'pen' && row.pen === 'B2')!.corrections).toBe(
      'S1: negative (Undetermined) -> positive (30.0) (reported 2026-08-06, corrected 2026-08-08)',
    );
    expect(page(summaries({ mistyped: NOTES.mistyped }).at(-1)!)).not.toContain('Corrected and replaced reports');
  });

  it('names the lab when the round\u2019s results come from more than one', () => {
    const summary = summaries(NOTES, [result('P0', 'negative', null, 'ostermark')]).at(-1)!;
    expect(/<table data-replaced-reports="1">.*?<\/table>/.exec(page(summary))![0]).toContain(
      `<td>${config.labById.get('northfield')!.name}: Final \u2192 Corrected</td>`,
    );
  });
});
