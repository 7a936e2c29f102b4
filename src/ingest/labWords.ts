/**
 * What one lab's words say in a cell: its own call, a failed internal control, the state of the
 * report. Words are found as whole words inside the cell, case and accents ignored (util/words.ts),
 * so "IK ungültig" is a failed control and "positiv (Korrektur)" a positive call in a corrected
 * report. Built once per lab profile; each distinct cell text is read once per profile (exports
 * repeat a handful of calls and states over thousands of rows).
 */
import type { CallClass, LabProfile, ReportStatusKind } from '../config/types.js';
import { WordMatcher } from '../util/words.js';

export interface CellWords {
  /**
   * The lab's call in the cell: the class of the longest call phrase found; undefined when none
   * is found, or when two classes tie ("positive/negative").
   */
  call: CallClass | undefined;
  /** The control-failure word found in the cell, as configured. */
  controlFailed: string | undefined;
  /** The report state in the cell: corrected over preliminary over final. */
  status: ReportStatusKind | undefined;
  /** The status word found, as configured. */
  statusWord: string | undefined;
}

type Meaning = { kind: 'call'; cls: CallClass } | { kind: 'control' } | { kind: 'status'; status: ReportStatusKind };

const STATUS_RANK: Readonly<Record<ReportStatusKind, number>> = { final: 1, preliminary: 2, corrected: 3 };
const CACHE_LIMIT = 10_000;
const RECENT_CELLS = 4;
const NOTHING: CellWords = Object.freeze({
  call: undefined,
  controlFailed: undefined,
  status: undefined,
  statusWord: undefined,
});

export class LabWords {
  private readonly matcher: WordMatcher<Meaning>;
  private readonly cache = new Map<string, CellWords>();

  constructor(lab: Pick<LabProfile, 'callWords' | 'statusWords' | 'controlFailedTokens'>) {
    const entries: [string, Meaning][] = [];
    for (const word of lab.controlFailedTokens) entries.push([word, { kind: 'control' }]);
    for (const cls of ['positive', 'suspect', 'negative', 'invalid'] as const)
      for (const word of lab.callWords[cls]) entries.push([word, { kind: 'call', cls }]);
    for (const status of ['preliminary', 'final', 'corrected'] as const)
      for (const word of lab.statusWords[status]) entries.push([word, { kind: 'status', status }]);
    this.matcher = new WordMatcher(entries);
  }

  /**
   * The last few cells read and what they say: a row's call, control and status cells repeat
   * row after row, and comparing a cell with a handful of texts costs less than hashing it for
   * the cache.
   */
  private readonly recentCells: string[] = new Array<string>(RECENT_CELLS).fill('');
  private readonly recentWords: CellWords[] = new Array<CellWords>(RECENT_CELLS).fill(NOTHING);
  private nextRecent = 0;

  /** What the lab's words in `cell` say. */
  read(cell: string): CellWords {
    if (cell === '') return NOTHING;
    const recent = this.recentCells;
    for (let i = 0; i < RECENT_CELLS; i++) if (recent[i] === cell) return this.recentWords[i]!;
    let read = this.cache.get(cell);
    if (read === undefined) {
      read = this.readUncached(cell);
      if (this.cache.size >= CACHE_LIMIT) this.cache.clear();
      this.cache.set(cell, read);
    }
    recent[this.nextRecent] = cell;
    this.recentWords[this.nextRecent] = read;
    this.nextRecent = (this.nextRecent + 1) % RECENT_CELLS;
    return read;
  }

  private readUncached(cell: string): CellWords {
    const found = this.matcher.find(cell);
    if (found.length === 0) return NOTHING;
    let call: CallClass | undefined;
    let callWords = 0;
    let tied = false;
    let controlFailed: string | undefined;
    let status: ReportStatusKind | undefined;
    let statusWord: string | undefined;
    for (const match of found) {
      const meaning = match.value;
      if (meaning.kind === 'control') {
        controlFailed ??= match.phrase;
      } else if (meaning.kind === 'status') {
        if (status === undefined || STATUS_RANK[meaning.status] > STATUS_RANK[status]) {
          status = meaning.status;
          statusWord = match.phrase;
        }
      } else if (match.words > callWords) {
        call = meaning.cls;
        callWords = match.words;
        tied = false;
      } else if (match.words === callWords && meaning.cls !== call) {
        tied = true;
      }
    }
    return { call: tied ? undefined : call, controlFailed, status, statusWord };
  }
}

const byLab = new WeakMap<object, LabWords>();

/** The word reader of a lab profile, built on first use (also for a profile cloned into the parse worker). */
export function labWords(lab: Pick<LabProfile, 'callWords' | 'statusWords' | 'controlFailedTokens'>): LabWords {
  let words = byLab.get(lab);
  if (words === undefined) {
    words = new LabWords(lab);
    byLab.set(lab, words);
  }
  return words;
}
