/**
 * outbox/alerts.jsonl: every alert, one JSON object a line, once each (JSON Lines, jsonlines.org).
 * The feed is also its own record: before appending, the keys already in it are read, so a run
 * that stopped between appending and noting it in the delivery state appends nothing twice.
 */
import fs from 'node:fs';
import type { AlertRecord } from './records.js';
import { jsonLine } from '../report/jsonText.js';

export const FEED_FILE = 'alerts.jsonl';

/** One line of the feed (also what the command reads and what the e-mail says). */
export interface FeedLine {
  key: string;
  site: string;
  siteName: string;
  round: number;
  roundId: string;
  roundStart: string;
  roundEnd: string;
  assay: string | null;
  barn: string | null;
  kind: string;
  /** What to do (absent in lines written before it was recorded). */
  action?: string;
  detail?: string;
  message: string;
  numbers: AlertRecord['numbers'];
  /** When ropewatch first saw the alert (ISO 8601, UTC). */
  seenAt: string;
}

export function feedLine(record: AlertRecord, seenAt: string): FeedLine {
  return {
    key: record.key,
    site: record.site.id,
    siteName: record.site.name,
    round: record.round.number,
    roundId: record.round.id,
    roundStart: record.round.startOn,
    roundEnd: record.round.endOn,
    assay: record.assay,
    barn: record.barn,
    kind: record.kind,
    action: record.action,
    detail: record.detail,
    message: record.message,
    numbers: record.numbers,
    seenAt,
  };
}

/** The keys of the lines in the feed (a line that is not JSON, say cut short by a crash, has none). */
export function feedKeys(text: string): Set<string> {
  const keys = new Set<string>();
  for (const line of text.split('\n')) {
    if (line.trim() === '') continue;
    try {
      const value = JSON.parse(line) as { key?: unknown };
      if (typeof value.key === 'string') keys.add(value.key);
    } catch {
      // Not a line this program finished writing: it names no alert.
    }
  }
  return keys;
}

/**
 * Appends the lines whose keys the feed does not hold yet, in one write; afterwards every line
 * given is in the feed. Returns how many were appended.
 * @throws whatever the file system throws (nothing was appended then)
 */
export function appendToFeed(file: string, lines: readonly FeedLine[]): number {
  let text = '';
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code !== 'ENOENT') throw error;
  }
  const present = feedKeys(text);
  const fresh = lines.filter((line) => !present.has(line.key));
  if (fresh.length > 0) {
    // A line cut short by a crash is ended first, so that the next line stands on its own.
    const lead = text.length > 0 && !text.endsWith('\n') ? '\n' : '';
    fs.appendFileSync(file, lead + fresh.map((line) => jsonLine(line) + '\n').join(''));
  }
  return fresh.length;
}
