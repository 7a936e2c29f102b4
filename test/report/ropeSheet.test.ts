/**
 * Skipped sample numbers on the rope sheet: every number below the highest that no rope carries
 * is named, with the reason the planner had for leaving it out.
 */
import { describe, expect, it } from 'vitest';
import { formatSampleId } from '../../src/plan/sampleId.js';
import { skippedLine, skippedSequences } from '../../src/report/html/ropeSheetPage.js';

/**
 * ISO/IEC 7064:2003 pure system MOD 37-2, written out here as the oracle: P = 0; for each
 * character value a (0-9, A-Z = 10-35): P = 2 (P + a) mod 37; check value (38 - P) mod 37,
 * shown from 0-9A-Z*.
 */
function isoCheck(text: string): string {
  const alphabet = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ*';
  let p = 0;
  for (const ch of text) p = (2 * (p + alphabet.indexOf(ch))) % 37;
  return alphabet[(38 - p) % 37]!;
}

const ropesOf = (site: string, round: number, sequences: readonly number[]) => ({
  ropes: sequences.map((sequence) => ({ sampleId: formatSampleId({ siteCode: site, round, sequence }) })),
});

describe('skipped sample numbers on the rope sheet', () => {
  it('names each missing number below the highest, with the check-character reason exactly when its check would be I, O, L or *', () => {
    // Sequences 1 to 100 of site TRN round 5, less the first three whose check is I, O, L or *
    // and the first three others (by the oracle above).
    const all = Array.from({ length: 100 }, (_, i) => i + 1);
    const ambiguous = (n: number) => 'IOL*'.includes(isoCheck(`TRN05${String(n).padStart(3, '0')}`));
    const left = [...all.filter(ambiguous).slice(0, 3), ...all.filter((n) => !ambiguous(n)).slice(0, 3)].sort(
      (a, b) => a - b,
    );
    const skipped = skippedSequences(
      ropesOf(
        'TRN',
        5,
        all.filter((n) => !left.includes(n)),
      ),
    );
    expect(skipped.map((entry) => entry.sequence)).toEqual(left);
    for (const entry of skipped) {
      const check = isoCheck(`TRN05${String(entry.sequence).padStart(3, '0')}`);
      expect(entry.reason, `sequence ${entry.sequence} (check ${check})`).toBe(
        'IOL*'.includes(check) ? 'check-character' : 'earlier-plan',
      );
    }
    // Both reasons occur in this range (else the test above would not tell them apart).
    expect(new Set(skipped.map((entry) => entry.reason)).size).toBe(2);
  });

  it('says nothing when no number is missing, and words both reasons with the numbers', () => {
    expect(skippedSequences(ropesOf('HCF', 8, [3, 1, 2]))).toEqual([]);
    expect(skippedLine([])).toBe('');
    const line = skippedLine([
      { sequence: 1, reason: 'check-character' },
      { sequence: 7, reason: 'check-character' },
      { sequence: 23, reason: 'earlier-plan' },
    ]);
    expect(line).toContain('no tube is missing');
    expect(line).toContain('001, 007: never used');
    expect(line).toContain('023: given to a pen by an earlier version');
  });
});
