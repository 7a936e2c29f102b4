/**
 * Incremental outputs equal a full rebuild. After each file a drop rewrites only the rounds
 * whose findings changed (src/report/builtRounds.ts); here random sequences of the usual events
 * (a new round's rope sheet, then its results; the round the plan laid out, under its sample IDs,
 * one of them mistyped and one never back; a rope sheet that comes late for an earlier round;
 * a lab's corrected report of an old round; one lab file for two sites; a rebuild weeks later,
 * when the next round is overdue), with the clock moving on between them, are dropped through the pipeline, and after every drop the outbox is compared
 * byte for byte with a full `report` of the same store into a second outbox. Demo configuration
 * (hollow-creek with rope sheets, tamsin-ridge with location-coded sample IDs), fewer
 * permutations and simulated outbreaks so a sequence runs in seconds.
 */
import fs from 'node:fs';
import path from 'node:path';
import { addDays, format, parseISO } from 'date-fns';
import { describe, expect, it } from 'vitest';
import { inUsePens } from '../../src/domain/layout.js';
import { northfieldExport, ropeSheet, type LabRow } from '../../src/demo/labFiles.js';
import { regenerateOutputs } from '../../src/outputs.js';
import { processFile } from '../../src/pipeline.js';
import { BUILT_ROUNDS_FILE } from '../../src/report/builtRounds.js';
import { ROUND_MODEL_FILE } from '../../src/report/keptRoundModels.js';
import { seededRng, type Rng } from '../../src/util/random.js';
import { openWorkspace, type Workspace } from '../../src/workspace.js';
import { treeHashes, workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const FAST_ANALYSIS = '\nanalysis:\n  seed: 7\n  permutations: 99\n  spreadRealisations: 100\n';

interface Rope {
  sampleId: string;
  barnId: string;
  penId: string;
  hungOn: string;
}

interface Round {
  startOn: string;
  ropes: Rope[];
}

const day = (iso: string, days: number): string => format(addDays(parseISO(iso), days), 'yyyy-MM-dd');
const pick = <T>(rng: Rng, items: readonly T[]): T => items[Math.floor(rng() * items.length)]!;

/** A Ct as a lab reports it: mostly nothing found, some positives, a few in the suspect band. */
function randomCt(rng: Rng): number | null {
  const draw = rng();
  if (draw < 0.6) return null;
  if (draw < 0.9) return Math.round((24 + rng() * 11) * 10) / 10;
  return Math.round((36.2 + rng() * 3) * 10) / 10;
}

/** A scenario driven by one seed: the site's rounds so far, the clock, the lab's case numbers. */
class Scenario {
  readonly rounds: Round[] = [];
  private caseNumber = 1;
  private ropeCount = 0;
  /** The day each site's outputs were last built (a drop builds the sites it touches only). */
  readonly builtOn = new Map<string, string>();

  constructor(
    readonly rng: Rng,
    private readonly ws: Workspace,
    private readonly inbox: string,
    /** The day of the clock both workspaces read: each event moves it on before its drop. */
    private readonly clock: { today: string },
  ) {}

  get today(): string {
    return this.clock.today;
  }

  set today(value: string) {
    this.clock.today = value;
  }

  private async drop(name: string, bytes: Buffer): Promise<void> {
    const file = path.join(this.inbox, name);
    fs.writeFileSync(file, bytes);
    const { receipt, outputError } = await processFile(this.ws, file);
    expect(receipt.status, `${name}: ${JSON.stringify(receipt.reason)}`).toBe('accepted');
    expect(outputError).toBeUndefined();
    for (const siteId of receipt.sites) this.builtOn.set(siteId, this.today);
  }

  private newRopes(startOn: string, count: number, taken: ReadonlySet<string>): Rope[] {
    const ropes: Rope[] = [];
    const used = new Set(taken);
    const barns = this.siteOf().barns;
    while (ropes.length < count) {
      const barn = pick(this.rng, barns);
      // A few pens per barn, so that pens come back round after round and carry a history.
      const penId = pick(this.rng, inUsePens(barn.pens).slice(0, 6)).id;
      if (used.has(`${barn.id}/${penId}`)) continue;
      used.add(`${barn.id}/${penId}`);
      this.ropeCount++;
      ropes.push({
        sampleId: `HX-${String(this.ropeCount).padStart(4, '0')}`,
        barnId: barn.id,
        penId,
        hungOn: startOn,
      });
    }
    return ropes;
  }

  private results(ropes: readonly Rope[], status?: string): LabRow[] {
    return ropes.map((rope) => ({
      sampleId: rope.sampleId,
      assay: this.rng() < 0.8 ? ('PRRSV' as const) : ('IAV' as const),
      ct: randomCt(this.rng),
      collectedOn: rope.hungOn,
      ...(status ? { status } : {}),
    }));
  }

  private labFile(rows: readonly LabRow[]): Buffer {
    const bytes = northfieldExport(rows, this.today, this.caseNumber);
    this.caseNumber += rows.length;
    return bytes;
  }

  /** The next round's rope sheet, dropped the day the ropes were hung. */
  async newRoundSheet(): Promise<void> {
    const last = this.rounds.at(-1);
    const startOn = last ? day(last.startOn, 12 + Math.floor(this.rng() * 5)) : this.today;
    const round = { startOn, ropes: this.newRopes(startOn, 5 + Math.floor(this.rng() * 4), new Set()) };
    this.rounds.push(round);
    this.today = startOn;
    await this.drop(`ropes-${startOn}.csv`, ropeSheet(this.siteOf(), round.ropes));
  }

  /** The results of the newest round, a few days after its ropes. */
  async newRoundResults(): Promise<void> {
    const round = this.rounds.at(-1)!;
    this.today = day(round.startOn, 3 + Math.floor(this.rng() * 3));
    await this.drop(`results-${round.startOn}.csv`, this.labFile(this.results(round.ropes)));
  }

  /** Ropes of an earlier round whose sheet comes late, with their results. */
  async lateSheet(): Promise<void> {
    const round = pick(this.rng, this.rounds);
    const taken = new Set(round.ropes.map((rope) => `${rope.barnId}/${rope.penId}`));
    const late = this.newRopes(day(round.startOn, 1), 2, taken);
    round.ropes.push(...late);
    this.today = day(this.today, 1);
    await this.drop(`late-ropes-${round.startOn}-${this.ropeCount}.csv`, ropeSheet(this.siteOf(), late));
    await this.drop(`late-results-${this.ropeCount}.csv`, this.labFile(this.results(late)));
  }

  /** The lab's corrected report of two ropes of an old round. */
  async reissue(): Promise<void> {
    const round = pick(this.rng, this.rounds.slice(0, -1).length > 0 ? this.rounds.slice(0, -1) : this.rounds);
    const ropes = round.ropes.slice(0, 2);
    this.today = day(this.today, 2);
    await this.drop(`corrected-${this.caseNumber}.csv`, this.labFile(this.results(ropes, 'Corrected')));
  }

  /** One lab file for both sites: tamsin-ridge's location-coded ropes and a correction for hollow-creek. */
  async twoSites(): Promise<void> {
    const compact = this.today.replaceAll('-', '');
    const tamsin: LabRow[] = [3, 8, 15].map((pen) => ({
      sampleId: `TR-N1-${String(pen).padStart(2, '0')}-${compact}`,
      assay: 'PRRSV' as const,
      ct: randomCt(this.rng),
      collectedOn: this.today,
    }));
    const hollow = this.results(pick(this.rng, this.rounds).ropes.slice(-1), 'Corrected');
    this.today = day(this.today, 3);
    await this.drop(`two-sites-${this.caseNumber}.csv`, this.labFile([...tamsin, ...hollow]));
  }

  /**
   * The round the plan laid out (outbox next-round.json): its ropes hung on the due date under the
   * plan's sample IDs, results back for most of them, one written with its check character
   * mistyped (refused, named with the ID it most likely meant), one never back.
   */
  async plannedRound(): Promise<void> {
    const plan = JSON.parse(fs.readFileSync(path.join(this.ws.outbox, 'hollow-creek', 'next-round.json'), 'utf8')) as {
      dueDate: string;
      ropes: { sampleId: string; barnId: string; penId: string }[];
    };
    if (plan.ropes.length < 3) return this.newRoundSheet();
    const hungOn = plan.dueDate > this.today ? plan.dueDate : this.today;
    const ropes = plan.ropes.map((rope) => ({ ...rope, hungOn }));
    this.rounds.push({ startOn: hungOn, ropes });
    this.today = day(hungOn, 3);
    const [mistyped, , ...back] = ropes;
    const check = mistyped!.sampleId.at(-1) === 'A' ? 'B' : 'A';
    const rows = [
      ...this.results([{ ...mistyped!, sampleId: `${mistyped!.sampleId.slice(0, -1)}${check}` }]),
      ...this.results(back),
    ];
    // The mistyped row is refused; the rest are stored.
    await this.drop(`planned-${hungOn}.csv`, this.labFile(rows));
  }

  /** Days pass with no file (the next round is late), then the outputs are brought up to date. */
  async laterRebuild(): Promise<void> {
    this.today = day(this.today, 20 + Math.floor(this.rng() * 20));
    regenerateOutputs(this.ws, ['hollow-creek']);
    this.builtOn.set('hollow-creek', this.today);
  }

  private siteOf() {
    return this.ws.config.siteById.get('HOLLOW-CREEK')!;
  }
}

/** A demo workspace with fewer permutations whose clock reads `clock.today`, at noon. */
function clockedWorkspace(today: string) {
  const made = workspace();
  fs.appendFileSync(path.join(made.paths.configDir, 'sites.yaml'), FAST_ANALYSIS);
  const clock = { today };
  const now = () => new Date(`${clock.today}T12:00:00Z`);
  const ws = openWorkspace(made.paths, now, () => {});
  return { made, clock, now, ws };
}

/** Runs `steps` random events after two plain rounds, comparing with a full rebuild after each. */
async function runSequence(
  seed: number,
  steps: number,
): Promise<{ compared: number; leftAlone: number; readFromDay: number }> {
  const { made, clock, now, ws } = clockedWorkspace('2026-09-01');
  // Builds that read the ropes from a round on, the change log showing the rounds before unchanged
  // (src/rounds/roundHorizon.ts): the comparison must cover them.
  let readFromDay = 0;
  const chosen = ws.store.siteInputsChosen.bind(ws.store);
  ws.store.siteInputsChosen = (siteId, choose, horizon) => {
    const read = chosen(siteId, choose, horizon);
    if (read.outline.ropesFrom !== undefined) readFromDay++;
    return read;
  };
  const fullOutbox = path.join(path.dirname(made.paths.outbox), 'outbox-full');
  const full = openWorkspace({ ...made.paths, outbox: fullOutbox }, now, () => {});
  const scenario = new Scenario(seededRng(seed), ws, made.paths.inbox, clock);
  let compared = 0;
  let leftAlone = 0;
  const compare = (what: string) => {
    // `report` of each site the drops touched, on the day its outputs were last built (the plan's
    // due dates count from it; the others have no outputs on the incremental side).
    const today = clock.today;
    for (const [siteId, builtOn] of scenario.builtOn) {
      clock.today = builtOn;
      regenerateOutputs(full, [siteId], { full: true });
    }
    clock.today = today;
    const incremental = treeHashes(made.paths.outbox, ['receipts']);
    expect(Object.keys(incremental)).toContain(`hollow-creek/${BUILT_ROUNDS_FILE}`);
    expect(incremental, `seed ${seed}, after ${what}`).toEqual(treeHashes(fullOutbox, ['receipts']));
    compared++;
  };
  const step = async (what: string, event: () => Promise<void>) => {
    const siteDir = path.join(made.paths.outbox, 'hollow-creek');
    const firstRound = fs.existsSync(siteDir)
      ? fs
          .readdirSync(siteDir, { withFileTypes: true })
          .find((entry) => entry.isDirectory() && entry.name.startsWith('r01-'))
      : undefined;
    const firstSummary = firstRound && path.join(made.paths.outbox, 'hollow-creek', firstRound.name, 'summary.json');
    const before = firstSummary && fs.existsSync(firstSummary) ? fs.statSync(firstSummary).mtimeMs : null;
    await event();
    // A new round leaves the first round's files alone (its findings cannot change).
    if (what === 'new round' && before !== null && fs.statSync(firstSummary!).mtimeMs === before) leftAlone++;
    compare(what);
  };
  try {
    const drops: Record<string, () => Promise<void>> = {
      'new round': async () => {
        await scenario.newRoundSheet();
        await scenario.newRoundResults();
      },
      'planned round': () => scenario.plannedRound(),
      'late rope sheet': () => scenario.lateSheet(),
      'corrected report': () => scenario.reissue(),
      'file for two sites': () => scenario.twoSites(),
      'rebuild weeks later': () => scenario.laterRebuild(),
    };
    await step('new round', drops['new round']!);
    await step('new round', drops['new round']!);
    for (let i = 0; i < steps; i++) {
      const what = pick(scenario.rng, Object.keys(drops));
      await step(what, drops[what]!);
    }
  } finally {
    ws.close();
    full.close();
  }
  return { compared, leftAlone, readFromDay };
}

describe('incremental outputs', () => {
  it('equal a full rebuild after every drop of random event sequences', { timeout: 240_000 }, async () => {
    let leftAlone = 0;
    let readFromDay = 0;
    for (const seed of [11, 12, 13]) {
      const result = await runSequence(seed, 8);
      expect(result.compared).toBe(10);
      leftAlone += result.leftAlone;
      readFromDay += result.readFromDay;
    }
    // The comparison would pass if every drop rewrote everything: show that some left rounds alone,
    // and that some builds read only the ropes of the rounds the change log named.
    expect(leftAlone).toBeGreaterThan(0);
    expect(readFromDay).toBeGreaterThan(5);
  });

  it('rewrites the later rounds of a pen whose earlier result the lab corrects', async () => {
    const { made, clock, ws } = clockedWorkspace('2026-09-01');
    const site = ws.config.siteById.get('HOLLOW-CREEK')!;
    const drop = async (name: string, bytes: Buffer) => {
      fs.writeFileSync(path.join(made.paths.inbox, name), bytes);
      expect((await processFile(ws, path.join(made.paths.inbox, name))).receipt.status).toBe('accepted');
    };
    const rope = (sampleId: string, hungOn: string) => ({ sampleId, barnId: 'F1', penId: 'A3', hungOn });
    const ct = (sampleId: string, value: number, collectedOn: string, status?: string): LabRow => ({
      sampleId,
      assay: 'PRRSV',
      ct: value,
      collectedOn,
      ...(status ? { status } : {}),
    });
    try {
      await drop('r1.csv', ropeSheet(site, [rope('HX-1', '2026-09-01')]));
      clock.today = '2026-09-04';
      await drop('r1-results.csv', northfieldExport([ct('HX-1', 30.1, '2026-09-01')], '2026-09-04', 1));
      clock.today = '2026-09-15';
      await drop('r2.csv', ropeSheet(site, [rope('HX-2', '2026-09-15')]));
      clock.today = '2026-09-18';
      await drop('r2-results.csv', northfieldExport([ct('HX-2', 31.2, '2026-09-15')], '2026-09-18', 2));
      const second = fs
        .readdirSync(path.join(made.paths.outbox, 'hollow-creek'))
        .find((name) => name.startsWith('r02-'))!;
      const history = () =>
        fs.readFileSync(path.join(made.paths.outbox, 'hollow-creek', second, 'summary.csv'), 'utf8');
      // The pen's history in round 2 quotes round 1 as reported (demo Northfield cutoffs: both positive).
      expect(history()).toContain('r1:30.1 r2:31.2');
      // A third round elsewhere: round 2 is no longer the latest (the latest is rewritten each build).
      clock.today = '2026-09-29';
      await drop('r3.csv', ropeSheet(site, [{ ...rope('HX-3', '2026-09-29'), penId: 'A7' }]));
      await drop('r3-results.csv', northfieldExport([ct('HX-3', 33.0, '2026-09-29')], '2026-09-29', 3));
      clock.today = '2026-10-02';
      await drop('r1-corrected.csv', northfieldExport([ct('HX-1', 28.4, '2026-09-01', 'Corrected')], '2026-10-02', 4));
      // Same class, so no figure of round 2 changes: only the history it quotes, which it must.
      expect(history()).toContain('r1:28.4 r2:31.2');
    } finally {
      ws.close();
    }
  });

  it('rewrites every round when the list of built rounds is gone, and the same bytes come back', async () => {
    const { made, clock, ws } = clockedWorkspace('2026-09-01');
    try {
      const scenario = new Scenario(seededRng(5), ws, made.paths.inbox, clock);
      await scenario.newRoundSheet();
      await scenario.newRoundResults();
      const before = treeHashes(made.paths.outbox, ['receipts']);
      fs.rmSync(path.join(made.paths.outbox, 'hollow-creek', BUILT_ROUNDS_FILE));
      const [build] = regenerateOutputs(ws, ['hollow-creek']);
      expect(build!.roundsWritten).toBe(build!.rounds.length);
      expect(treeHashes(made.paths.outbox, ['receipts'])).toEqual(before);
      const [again] = regenerateOutputs(ws, ['hollow-creek']);
      // Nothing changed: the plan's latest round is written again at most.
      expect(again!.roundsWritten).toBeLessThanOrEqual(1);
    } finally {
      ws.close();
    }
  });

  it('reads every rope again when a round the change log leaves alone has lost its kept model', async () => {
    const { made, clock, now, ws } = clockedWorkspace('2026-09-01');
    const fullOutbox = path.join(path.dirname(made.paths.outbox), 'outbox-full');
    const full = openWorkspace({ ...made.paths, outbox: fullOutbox }, now, () => {});
    const fromDay: (string | undefined)[] = [];
    const chosen = ws.store.siteInputsChosen.bind(ws.store);
    ws.store.siteInputsChosen = (siteId, choose, horizon) => {
      const read = chosen(siteId, choose, horizon);
      fromDay.push(read.outline.ropesFrom);
      return read;
    };
    try {
      const scenario = new Scenario(seededRng(8), ws, made.paths.inbox, clock);
      for (let round = 0; round < 3; round++) {
        await scenario.newRoundSheet();
        await scenario.newRoundResults();
      }
      const siteDir = path.join(made.paths.outbox, 'hollow-creek');
      const first = fs.readdirSync(siteDir).find((name) => name.startsWith('r01-'))!;
      fs.rmSync(path.join(siteDir, first, ROUND_MODEL_FILE));
      fromDay.length = 0;
      await scenario.newRoundSheet();
      // The log names the new round only: its ropes are read from it on, the first round's model is
      // missing, and the site is read again whole (no day).
      expect(fromDay.slice(0, 2)).toEqual([expect.any(String), undefined]);
      regenerateOutputs(full, ['hollow-creek'], { full: true });
      expect(treeHashes(made.paths.outbox, ['receipts'])).toEqual(treeHashes(fullOutbox, ['receipts']));
      expect(fs.existsSync(path.join(siteDir, first, ROUND_MODEL_FILE))).toBe(true);
    } finally {
      ws.close();
      full.close();
    }
  });
});
