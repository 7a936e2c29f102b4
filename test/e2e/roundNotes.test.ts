/**
 * A corrected report and a result refused under a mistyped planned ID, through the pipeline to
 * the summary page, summary.csv and summary.json: the correction is named with both readings and
 * the lab's report dates; the mistyped result is named in the pen table and in an alert (not
 * counted as a missing rope), and the one line the page gives, added to config/corrections.yaml,
 * with the command it gives, lets the result in. Expected values are by hand from the rows
 * written below; check characters are ISO/IEC 7064 MOD 37-2 (test/ingest/mistypedId.test.ts
 * derives one by hand).
 */
import fs from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { formatSampleId } from '../../src/plan/sampleId.js';
import type { PlannedRope } from '../../src/store/store.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const HEADER =
  'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status';
const line = (sample: string, ct: string, call: string, reportedOn: string, status: string) =>
  `NV26-1,${sample},PRRSV NA/EU RT-PCR,${ct},${call},PASS,2026-08-31,${reportedOn},${status}`;

// Planned before the first round (after round 0): barn F1, pens A1 to A3.
const ids = [11, 12, 13].map((sequence) => formatSampleId({ siteCode: 'HCF', round: 1, sequence }));
const [first, meant, third] = ids as [string, string, string];
// One digit mistyped: 012 written as 013 with 012's check character.
const written = meant.replace('-012', '-013');
const RESULTS = 'nvdl_results_2026-09-02.csv';
const CORRECTED = 'nvdl_corrected_2026-09-04.csv';

const plan = (planned: readonly string[] = ids): PlannedRope[] =>
  planned.map((sampleId, index) => ({
    sampleId,
    siteId: 'hollow-creek',
    barnId: 'F1',
    penId: `A${index + 1}`,
    side: 'A',
    reason: 'routine',
    dueOn: '2026-08-31',
    plannedAt: '2026-08-20',
    afterRound: 0,
  }));

const roundDir = (ws: TestWorkspace) => path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-31');
const read = (ws: TestWorkspace, name: string) => fs.readFileSync(path.join(roundDir(ws), name), 'utf8');
const csvRows = (ws: TestWorkspace) => parse(read(ws, 'summary.csv'), { columns: true }) as Record<string, string>[];

/** The text of an HTML fragment, entities of escapeHtml undone. */
const text = (html: string) =>
  html
    .replace(/<[^>]+>/g, '')
    .replaceAll('&quot;', '"')
    .replaceAll('&#39;', "'")
    .replaceAll('&lt;', '<')
    .replaceAll('&gt;', '>')
    .replaceAll('&amp;', '&');

async function roundWithNotes(ws: TestWorkspace, planned: readonly string[] = ids): Promise<void> {
  ws.ws().store.replacePlan('hollow-creek', 0, plan(planned));
  const results = [
    HEADER,
    line(first, 'Undetermined', 'Negative', '2026-09-02', 'Final'),
    line(written, '27.40', 'Positive', '2026-09-02', 'Final'),
    line(third, 'Undetermined', 'Negative', '2026-09-02', 'Final'),
  ];
  const a = await ws.drop(RESULTS, results.join('\n') + '\n');
  expect(a.receipt).toMatchObject({ status: 'accepted', rows: { accepted: 2, rejected: 1 } });
  expect(a.receipt.rejectedRows).toMatchObject([{ line: 3, code: 'bad-check-character', suggestedId: meant }]);
  // The lab corrects A1's negative to a positive two days later.
  const b = await ws.drop(
    CORRECTED,
    [HEADER, line(first, '30.10', 'Positive', '2026-09-04', 'Corrected')].join('\n') + '\n',
  );
  expect(b.receipt).toMatchObject({ status: 'accepted', rows: { accepted: 1, superseded: 1 } });
}

describe('a corrected report and a mistyped planned ID on the round outputs', () => {
  it('names the correction with both readings and the report dates in summary.json, summary.csv and on the page', async () => {
    const ws = workspace();
    await roundWithNotes(ws);
    const summary = JSON.parse(read(ws, 'summary.json'));
    // By hand from the two files; the status words are the ones the lab profile matched in the
    // Report Status cells ("Final", "Corrected"; README, the lab's words).
    expect(summary.replaced).toMatchObject([
      {
        barnId: 'F1',
        penId: 'A1',
        sampleId: first,
        assayId: 'PRRSV',
        kind: 'correction',
        replaced: {
          resultClass: 'negative',
          ctRaw: 'Undetermined',
          reportedOn: '2026-09-02',
          status: 'final',
          statusWord: 'final',
        },
        inPlace: {
          resultClass: 'positive',
          ctRaw: '30.10',
          reportedOn: '2026-09-04',
          status: 'corrected',
          statusWord: 'corrected',
        },
      },
    ]);
    // By hand: 30.10 is below northfield's positive cutoff 36, so A1 stands as positive.
    const a1 = csvRows(ws).find((row) => row.level === 'pen' && row.pen === 'A1' && row.assay === 'PRRSV')!;
    expect(a1).toMatchObject({
      class: 'positive',
      ct: '30.1',
      corrections: `${first}: negative (Undetermined) -> positive (30.10) (reported 2026-09-02, corrected 2026-09-04)`,
    });
    const a3 = csvRows(ws).find((row) => row.level === 'pen' && row.pen === 'A3')!;
    expect(a3.corrections).toBe('');
    const html = read(ws, 'summary.html');
    // Common practice, no source: the page's wording is the project's own.
    const table = /<table data-replaced-reports="1">[\s\S]*?<\/table>/.exec(html)?.[0];
    expect(table).toBeDefined();
    expect(text(table!)).toContain(
      `F1 A1${first}PRRSVnegative (Undetermined) \u2192 positive (30.10)reported 2026-09-02, corrected 2026-09-04`,
    );
    expect(html).toContain('<h2>Corrected and replaced reports</h2>');
  });

  it('names the pen of a mistyped ID in the pen table, summary.csv and an alert, and not as a missing rope', async () => {
    const ws = workspace();
    await roundWithNotes(ws);
    const summary = JSON.parse(read(ws, 'summary.json'));
    const f1 = summary.barns.find((barn: { barnId: string }) => barn.barnId === 'F1');
    // By hand: line 3 of the results file is the only refused row; it names 012, planned for F1 A2.
    // The rope still has no result stored; the summary says why.
    expect(f1.missingSampleIds).toEqual([meant]);
    expect(f1.mistyped).toEqual([
      { sampleId: meant, penId: 'A2', side: 'A', refusals: [{ written, fileName: RESULTS, line: 3 }] },
    ]);

    const rows = csvRows(ws);
    const barnRow = rows.find((row) => row.level === 'barn' && row.barn === 'F1' && row.assay === 'PRRSV')!;
    expect(barnRow).toMatchObject({ missing_sample_ids: '', refused_mistyped_id: written, likely_meant_id: meant });
    expect(rows.find((row) => row.level === 'site' && row.assay === 'PRRSV')).toMatchObject({
      missing_sample_ids: '',
      refused_mistyped_id: written,
      likely_meant_id: meant,
    });
    expect(rows.filter((row) => row.level === 'pen' && row.pen === 'A2')).toEqual([
      expect.objectContaining({
        barn: 'F1',
        side: 'A',
        assay: '',
        sample_ids: meant,
        class: '',
        reason: 'result refused: mistyped ID?',
        refused_mistyped_id: written,
        likely_meant_id: meant,
      }),
    ]);

    const html = read(ws, 'summary.html');
    const pen = /<tr data-pen="A2" data-mistyped="[^"]+">[\s\S]*?<\/tr>/.exec(html)?.[0];
    expect(text(pen!)).toContain(
      `result refused: mistyped ID?written ${written} (${RESULTS}, line 3); most likely meant ${meant}`,
    );
    expect(html).toContain(
      'none missing; <strong>1 result refused under a mistyped ID</strong> (pen A2; not missing, not counted)',
    );
    const alerts = [...html.matchAll(/<li data-alert="([a-z-]+)">([\s\S]*?)<\/li>/g)].map((match) => ({
      kind: match[1],
      message: text(match[2]!),
    }));
    expect(alerts.map((alert) => alert.kind)).not.toContain('missing-ropes');
    const alert = alerts.find((entry) => entry.kind === 'mistyped-id')!;
    expect(alert.message).toContain(`pen A2, planned ${meant}, came back as ${written} (${RESULTS}, line 3)`);
    expect(alert.message).toContain(
      'confirm the ID with the lab or the producer, then add it to config/corrections.yaml and ingest the file again',
    );
    // The index page carries the latest round's alerts.
    expect(fs.readFileSync(path.join(ws.paths.outbox, 'index.html'), 'utf8')).toContain('refused under a mistyped ID');
  });

  it('lets the result in with the line and the command the page gives, and then shows the pen as positive', async () => {
    const ws = workspace();
    await roundWithNotes(ws);
    const fix = /<ul data-mistyped-fix="F1">[\s\S]*?<\/ul>/.exec(read(ws, 'summary.html'))?.[0];
    const codes = [...fix!.matchAll(/<code>([^<]*)<\/code>/g)].map((match) => text(match[1]!));
    expect(codes).toEqual([
      `- { written: "${written}", meant: "${meant}", file: "${RESULTS}" }`,
      'sampleIds:',
      `ropewatch ingest inbox/archive/${RESULTS}`,
    ]);
    fs.writeFileSync(path.join(ws.paths.configDir, 'corrections.yaml'), `${codes[1]}\n  ${codes[0]}\n`);
    ws.closeStore();
    const argv = codes[2]!.split(' ').slice(1);
    const run = await runCli([...argv, ...ws.cliFlags], { cwd: ws.root });
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    // By hand: the one refused row is stored now, the two stored before are not stored twice.
    expect(run.stdout).toContain(`accepted ${RESULTS} (results, northfield): 1 rows stored, 2 already stored`);

    const summary = JSON.parse(read(ws, 'summary.json'));
    const f1 = summary.barns.find((barn: { barnId: string }) => barn.barnId === 'F1');
    expect(f1).toMatchObject({ missingSampleIds: [], mistyped: [], ropesReturned: 3 });
    // By hand: 27.40 below the positive cutoff 36.
    expect(csvRows(ws).find((row) => row.level === 'pen' && row.pen === 'A2')).toMatchObject({
      class: 'positive',
      ct: '27.4',
      refused_mistyped_id: '',
      likely_meant_id: '',
    });
    const html = read(ws, 'summary.html');
    expect(html).not.toContain('data-mistyped');
    expect(html).not.toContain('data-alert="mistyped-id"');
  });

  it('no longer names the refusal once its row is read under another planned ID a person confirmed', async () => {
    const ws = workspace();
    // A fourth planned rope, F1 A4, whose result never came back under its own ID.
    const fourth = formatSampleId({ siteCode: 'HCF', round: 1, sequence: 14 });
    await roundWithNotes(ws, [...ids, fourth]);
    expect(
      JSON.parse(read(ws, 'summary.json')).barns[0].mistyped.map((rope: { sampleId: string }) => rope.sampleId),
    ).toEqual([meant]);
    // The lab reads the tube again: it was the fourth rope, not the one suggested.
    fs.writeFileSync(
      path.join(ws.paths.configDir, 'corrections.yaml'),
      `sampleIds:\n  - { written: "${written}", meant: "${fourth}", file: "${RESULTS}" }\n`,
    );
    ws.closeStore();
    const run = await runCli(['ingest', path.join('inbox', 'archive', RESULTS), ...ws.cliFlags], { cwd: ws.root });
    expect(run.code).toBe(0);
    const f1 = JSON.parse(read(ws, 'summary.json')).barns[0];
    // By hand: A4 has its result now; A2's rope has none and nothing refused names it any more.
    expect(f1).toMatchObject({ barnId: 'F1', missingSampleIds: [meant], mistyped: [] });
    const barnRow = csvRows(ws).find((row) => row.level === 'barn' && row.barn === 'F1' && row.assay === 'PRRSV')!;
    expect(barnRow).toMatchObject({ missing_sample_ids: meant, refused_mistyped_id: '', likely_meant_id: '' });
    expect(read(ws, 'summary.html')).toContain(`<strong>1 rope missing</strong>: ${meant}.`);
  });
});
