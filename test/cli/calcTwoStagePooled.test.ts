/**
 * `calc site --infected-barns` and `calc detect --pool-size`: the two-stage and pooled kernels
 * behind the scriptable contract.
 */
import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/runCli.js';
import { expectClose } from '../helpers/expectClose.js';

async function json(argv: string[]): Promise<Record<string, unknown>> {
  const run = await runCli(argv);
  expect(run.code, run.stderr).toBe(0);
  return JSON.parse(run.stdout) as Record<string, unknown>;
}

describe('ropewatch calc site --infected-barns', () => {
  it('prints the two-stage probability when only some barns are infected', async () => {
    // By hand (two-stage design, Cameron & Baldock 1998): 1 - (0.05 + 0.08 + 0.40) / 3 = 0.823333.
    const out = await json(['calc', 'site', '--barn', '0.9,0.5,0.2', '--infected-barns', '2', '--json']);
    expectClose(out.probability as number, 1 - 0.53 / 3, { rel: 1e-13 }, 'p=0.9,0.5,0.2 D=2');
    expect(out).toMatchObject({ barns: [0.9, 0.5, 0.2], infectedBarns: 2 });
    // Without --infected-barns: every barn infected, 1 - 0.1 * 0.5 * 0.8 = 0.96 (by hand).
    expectClose(
      (await json(['calc', 'site', '--barn', '0.9,0.5,0.2', '--json'])).probability as number,
      0.96,
      { rel: 1e-13 },
      'all barns',
    );
    const sentence = await runCli(['calc', 'site', '--barn', '0.9,0.5,0.2', '--infected-barns', '1']);
    expect(sentence.stdout).toContain('If 1 barn of 3 were infected');
  });

  it('refuses a number of infected barns outside [1, barns] with exit 2', async () => {
    expect((await runCli(['calc', 'site', '--barn', '0.9,0.5', '--infected-barns', '3', '--json'])).code).toBe(2);
    expect((await runCli(['calc', 'site', '--barn', '0.9,0.5', '--infected-barns', '0', '--json'])).code).toBe(2);
  });
});

describe('ropewatch calc detect --pool-size', () => {
  it('prints the pooled detection beside the unpooled one', async () => {
    // 4 ropes of a 6-pen barn with 2 infected, one pool of 4 at PSe 1: the pool is positive
    // unless all 4 ropes are clean, C(4,4)/C(6,4) = 1/15 (by hand), so 14/15; one by one (Se 1)
    // the same 14/15 (hypergeometric, Cameron & Baldock 1998 with Se = 1).
    const out = await json([
      'calc',
      'detect',
      '--pens',
      '6',
      '--sampled',
      '4',
      '--infected',
      '2',
      '--pool-size',
      '4',
      '--pool-sensitivity',
      '1',
      '--json',
    ]);
    expectClose(out.probability as number, 14 / 15, { rel: 1e-13 }, 'N=6 n=4 d=2 k=4 PSe=1');
    expectClose(out.unpooledProbability as number, 14 / 15, { rel: 1e-13 }, 'unpooled');
    expect(out).toMatchObject({ poolSize: 4, pools: 1, poolSpecificity: 1, falseAlarm: 0 });
    // A diluted pool (PSe 0.6) finds less: 14/15 * 0.6 (one pool, by hand).
    const diluted = await json([
      'calc',
      'detect',
      '--pens',
      '6',
      '--sampled',
      '4',
      '--infected',
      '2',
      '--pool-size',
      '4',
      '--pool-sensitivity',
      '0.6',
      '--json',
    ]);
    expectClose(diluted.probability as number, (14 / 15) * 0.6, { rel: 1e-13 }, 'PSe=0.6');
  });

  it('needs a pool sensitivity with a pool size, and a pool size with a pool sensitivity', async () => {
    expect(
      (await runCli(['calc', 'detect', '--pens', '6', '--sampled', '4', '--infected', '2', '--pool-size', '2'])).code,
    ).toBe(2);
    expect(
      (
        await runCli([
          'calc',
          'detect',
          '--pens',
          '6',
          '--sampled',
          '4',
          '--infected',
          '2',
          '--pool-sensitivity',
          '0.8',
        ])
      ).code,
    ).toBe(2);
  });
});
