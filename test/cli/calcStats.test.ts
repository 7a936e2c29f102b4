import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/runCli.js';
import { expectClose } from '../helpers/expectClose.js';

async function json(argv: string[]): Promise<Record<string, unknown>> {
  const run = await runCli(argv);
  expect(run.code, run.stderr).toBe(0);
  return JSON.parse(run.stdout) as Record<string, unknown>;
}

describe('ropewatch calc detect', () => {
  it('prints the probability and its inputs as JSON', async () => {
    const out = await json(['calc', 'detect', '--pens', '36', '--sampled', '6', '--infected', '9', '--json']);
    // Cameron & Baldock 1998, Prev Vet Med 34:1-17 (hypergeometric form): N=36 d=9 n=6 -> 0.848028.
    expectClose(out.probability as number, 0.848028, { abs: 5e-7 }, 'N=36 n=6 d=9');
    expect(out).toMatchObject({ pens: 36, sampled: 6, infected: 9, sensitivity: 1 });
    expect(out).not.toHaveProperty('falseAlarm');
  });

  it('adds the false-alarm probability when a specificity is given', async () => {
    const out = await json([
      'calc',
      'detect',
      '--pens',
      '36',
      '--sampled',
      '6',
      '--infected',
      '9',
      '--sensitivity',
      '0.9',
      '--specificity',
      '0.99',
      '--json',
    ]);
    // Cameron & Baldock 1998, Prev Vet Med 34:1-17: 0.807354; false alarm by hand 1 - 0.99^6.
    expectClose(out.probability as number, 0.807354, { abs: 5e-7 }, 'N=36 n=6 d=9 Se=0.9');
    expectClose(out.falseAlarm as number, 1 - 0.99 ** 6, { rel: 1e-12 }, 'n=6 Sp=0.99');
    expect(out.specificity).toBe(0.99);
  });

  it('prints one sentence without --json', async () => {
    const run = await runCli(['calc', 'detect', '--pens', '36', '--sampled', '6', '--infected', '1']);
    expect(run.code).toBe(0);
    expect(run.stdout.trim().split('\n')).toHaveLength(1);
    expect(run.stdout).toMatch(/6 ropes in 36 pens .*0\.166667/);
  });

  it('exits 2 with a message naming the option for bad arguments', async () => {
    const cases: [string[], RegExp][] = [
      [
        ['--pens', '36', '--sampled', '40', '--infected', '1'],
        /--sampled must be a whole number in \[0, 36\], got "40"/,
      ],
      [['--pens', '36', '--sampled', '6', '--infected', '37'], /--infected/],
      [
        ['--pens', '36', '--sampled', '6', '--infected', '1', '--sensitivity', '1.2'],
        /--sensitivity must be a probability/,
      ],
      [['--pens', '36', '--sampled', '6'], /--infected needs a number/],
      [['--pens', 'many', '--sampled', '6', '--infected', '1'], /--pens must be a number/],
    ];
    for (const [args, message] of cases) {
      const run = await runCli(['calc', 'detect', ...args, '--json']);
      expect(run.code, args.join(' ')).toBe(2);
      expect(run.stderr).toMatch(message);
      expect(run.stdout).toBe('');
    }
  });
});

describe('ropewatch calc sample-size', () => {
  it('prints sampled for a finite barn and for an infinite population', async () => {
    // N=100 d=5 C=0.95 -> 45: Cameron & Baldock 1998 (exact search); MacDiarmid 1988 gives an approximation (from memory).
    // p=0.05 C=0.95 infinite -> 59: Cannon & Roe 1982, Livestock disease surveys: a field manual for veterinarians (binomial form, from memory).
    expect(
      (await json(['calc', 'sample-size', '--pens', '100', '--infected', '5', '--confidence', '0.95', '--json']))
        .sampled,
    ).toBe(45);
    const inf = await json([
      'calc',
      'sample-size',
      '--pens',
      'inf',
      '--prevalence',
      '0.05',
      '--confidence',
      '0.95',
      '--json',
    ]);
    expect(inf).toMatchObject({ pens: 'inf', sampled: 59, reachable: true });
    // Cameron & Baldock 1998 (exact search): N=100 d=10 -> 25, here given as a prevalence of 0.1 (d = ceil(0.1 * 100) = 10).
    expect(
      (await json(['calc', 'sample-size', '--pens', '100', '--prevalence', '0.1', '--confidence', '0.95', '--json']))
        .sampled,
    ).toBe(25);
  });

  it('reports an unreachable target with sampled null, the census confidence and rounds needed, exit 0', async () => {
    // Follows from Cameron & Baldock 1998: with one infected pen the ceiling is Se.
    // N=40 d=1 Se=0.9 target 0.95 -> ceiling 0.90; by hand 2 rounds.
    const out = await json([
      'calc',
      'sample-size',
      '--pens',
      '40',
      '--infected',
      '1',
      '--confidence',
      '0.95',
      '--sensitivity',
      '0.9',
      '--json',
    ]);
    expect(out.sampled).toBeNull();
    expect(out.reachable).toBe(false);
    expectClose(out.censusConfidence as number, 0.9, { rel: 1e-12 }, 'census');
    expect(out.roundsNeeded).toBe(2);
    const run = await runCli([
      'calc',
      'sample-size',
      '--pens',
      '40',
      '--infected',
      '1',
      '--confidence',
      '0.95',
      '--sensitivity',
      '0.9',
    ]);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/No number of ropes reaches 95%.*0\.9; 2 independent negative rounds would/);
  });

  it('exits 2 when the design prevalence is missing, doubled or meaningless', async () => {
    const cases: string[][] = [
      ['--pens', '40', '--confidence', '0.95'],
      ['--pens', '40', '--infected', '2', '--prevalence', '0.05', '--confidence', '0.95'],
      ['--pens', 'inf', '--infected', '2', '--confidence', '0.95'],
      ['--pens', '40', '--infected', '41', '--confidence', '0.95'],
      ['--pens', '40', '--infected', '2', '--confidence', '95'],
      ['--pens', '40', '--prevalence', '0', '--confidence', '0.95'],
      ['--pens', 'inf', '--prevalence', '0.05', '--confidence', '1'],
      ['--pens', '40', '--infected', '2'],
    ];
    for (const args of cases) {
      const run = await runCli(['calc', 'sample-size', ...args, '--json']);
      expect(run.code, args.join(' ')).toBe(2);
      expect(run.stderr).toMatch(/^ropewatch: /);
    }
  });
});

describe('ropewatch calc site', () => {
  it('prints the site probability for a list of barns', async () => {
    // Martin, Cameron & Greiner 2007, Prev Vet Med 79:71-97: three barns at 0.85 -> 0.996625.
    const out = await json(['calc', 'site', '--barn', '0.85,0.85,0.85', '--json']);
    expectClose(out.probability as number, 0.996625, { rel: 1e-12 }, 'k=3 p=0.85');
    expect(out.barns).toEqual([0.85, 0.85, 0.85]);
  });

  it('exits 2 for a probability outside [0, 1] or a missing list', async () => {
    expect((await runCli(['calc', 'site', '--barn', '0.85,1.5', '--json'])).code).toBe(2);
    expect((await runCli(['calc', 'site', '--json'])).code).toBe(2);
  });
});

describe('ropewatch calc freedom', () => {
  it('prints one {posterior, nextPrior} per round, posterior first then discount', async () => {
    // By hand (Martin, Cameron & Greiner 2007, update then discount): 0.5/0.6 = 0.833333, * 0.99 = 0.825;
    // 0.825/0.86 = 0.959302, * 0.99 = 0.949709.
    const out = await json([
      'calc',
      'freedom',
      '--prior',
      '0.5',
      '--round-sensitivity',
      '0.8,0.8',
      '--introduction',
      '0.01',
      '--json',
    ]);
    const rounds = out.rounds as { posterior: number; nextPrior: number }[];
    expect(rounds).toHaveLength(2);
    expect(Object.keys(rounds[0]!).sort()).toEqual(['nextPrior', 'posterior']);
    expectClose(rounds[0]!.posterior, 0.5 / 0.6, { rel: 1e-14 }, 'round 1 posterior');
    expectClose(rounds[0]!.nextPrior, 0.825, { rel: 1e-14 }, 'round 1 nextPrior');
    expectClose(rounds[1]!.posterior, 0.825 / 0.86, { rel: 1e-14 }, 'round 2 posterior');
    expectClose(rounds[1]!.nextPrior, (0.825 / 0.86) * 0.99, { rel: 1e-14 }, 'round 2 nextPrior');
    // By hand: equilibrium 1 - 0.01/0.8 = 0.9875.
    expectClose((out.equilibrium as { prior: number }).prior, 0.9875, { rel: 1e-14 }, 'equilibrium');
    expect(out.order).toBe('update-then-discount');
  });

  it('follows the check value worked by hand when asked to discount first', async () => {
    // Martin, Cameron & Greiner 2007, Prev Vet Med 79:71-97 (by hand): prior 0.5 discounted to 0.495, posterior 0.8305369.
    const out = await json([
      'calc',
      'freedom',
      '--prior',
      '0.5',
      '--round-sensitivity',
      '0.8',
      '--introduction',
      '0.01',
      '--order',
      'discount-then-update',
      '--json',
    ]);
    expectClose((out.rounds as { posterior: number }[])[0]!.posterior, 0.8305369, { abs: 5e-8 }, 'posterior');
  });

  it('resets at a positive round and lowers confidence for a late round', async () => {
    const reset = await json([
      'calc',
      'freedom',
      '--prior',
      '0.5',
      '--round-sensitivity',
      '0.8,0.8',
      '--introduction',
      '0.01',
      '--positive-rounds',
      '1',
      '--json',
    ]);
    // Kernel rule: a positive round's posterior is 0 and the next round starts from the configured prior.
    expect((reset.rounds as { posterior: number; nextPrior: number }[])[0]).toEqual({ posterior: 0, nextPrior: 0.5 });
    const late = await json([
      'calc',
      'freedom',
      '--prior',
      '0.5',
      '--round-sensitivity',
      '0.8,0.8',
      '--introduction',
      '0.01',
      '--interval-days',
      '28',
      '--elapsed-days',
      '0,56',
      '--json',
    ]);
    // By hand: after round 1, 0.8333 * (1 - 0.0199) = 0.81675 before round 2.
    expectClose(
      (late.rounds as { nextPrior: number }[])[0]!.nextPrior,
      (0.5 / 0.6) * 0.9801,
      { rel: 1e-13 },
      'late nextPrior',
    );
  });

  it('prints one sentence without --json and exits 2 on bad arguments', async () => {
    const run = await runCli([
      'calc',
      'freedom',
      '--prior',
      '0.5',
      '--round-sensitivity',
      '0.8',
      '--introduction',
      '0.01',
    ]);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/After 1 round, probability of freedom 0\.833333/);
    const bad: string[][] = [
      ['--prior', '1.5', '--round-sensitivity', '0.8', '--introduction', '0.01'],
      ['--prior', '0.5', '--round-sensitivity', '0.8,x', '--introduction', '0.01'],
      ['--prior', '0.5', '--round-sensitivity', '0.8'],
      ['--prior', '0.5', '--round-sensitivity', '0.8', '--introduction', '0.01', '--order', 'sideways'],
      ['--prior', '0.5', '--round-sensitivity', '0.8', '--introduction', '0.01', '--positive-rounds', '2'],
      ['--prior', '0.5', '--round-sensitivity', '0.8', '--introduction', '0.01', '--elapsed-days', '28'],
    ];
    for (const args of bad) {
      const result = await runCli(['calc', 'freedom', ...args, '--json']);
      expect(result.code, args.join(' ')).toBe(2);
      expect(result.stdout).toBe('');
    }
  });
});
