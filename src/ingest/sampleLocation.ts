/**
 * Where a sample ID says it was taken: a site's configured sample pattern read as site, barn,
 * pen and (optionally) date. Pure; the compiled pattern set is built once per site list.
 */
import { compilePatternSet, type PatternSet } from '../config/pattern.js';
import type { Site } from '../config/types.js';
import { canonicalPenKey } from '../domain/layout.js';
import { parseDateCell } from './recordCells.js';
import type { RopeLocation } from '../domain/records.js';

/** The sites with a sample pattern, and one automaton that tells which of their patterns match an ID. */
interface PatternSites {
  sites: readonly Site[];
  set: PatternSet;
}
const patternSitesOf = new WeakMap<readonly Site[], PatternSites>();

function patternSites(sites: readonly Site[]): PatternSites {
  let found = patternSitesOf.get(sites);
  if (found === undefined) {
    const withPattern = sites.filter((site) => site.samplePattern !== undefined);
    // Built from the patterns' sources, so it works as well on sites that crossed to the parse worker.
    found = { sites: withPattern, set: compilePatternSet(withPattern.map((site) => site.samplePattern!)) };
    patternSitesOf.set(sites, found);
  }
  return found;
}

/** A sample ID that a site's pattern reads as a barn of that site and a pen the barn's layout lacks. */
export interface UnknownEncodedPen {
  unknownPen: string;
  siteId: string;
  barnId: string;
}

export type EncodedLocation = RopeLocation | UnknownEncodedPen | 'no-date' | 'bad-date' | undefined;

/**
 * Finds the site, barn and pen a sample ID encodes through a site's configured pattern. The pen
 * is the layout's own label (`07` and `7` name pen 7), so two spellings of one pen are one place.
 * A pen the barn lacks is returned as such (when no other site places the ID), never read as
 * "no location": the label names a place, and that place does not exist.
 */
export function locationFromPattern(
  sampleId: string,
  sites: readonly Site[],
  fallbackDate: string | undefined,
): EncodedLocation {
  // Exports come a site at a time: the site that placed the last ID is asked first, and an
  // answer that names a place (or a date problem) from it is final, as it would be below, where
  // that site also goes first among the sites whose patterns match.
  const last = lastPatternSite.get(sites);
  if (last !== undefined) {
    const located = locationInSite(last, sampleId, fallbackDate, sites);
    if (located !== undefined && (typeof located !== 'object' || !('unknownPen' in located))) return located;
  }
  // One pass over the ID finds the sites whose pattern matches (usually none or one); only
  // those are asked for their groups.
  const candidates = patternSites(sites);
  const matching = candidates.set.matching(sampleId);
  if (matching.length === 0) return undefined;
  if (matching.length === 1) return locationInSite(candidates.sites[matching[0]!]!, sampleId, fallbackDate, sites);
  // Several sites' patterns match: the site that matched last goes first, then the others in
  // configuration order.
  const matched = [...matching].sort((a, b) => a - b).map((index) => candidates.sites[index]!);
  let unknown: UnknownEncodedPen | undefined;
  for (const site of last !== undefined && matched.includes(last)
    ? [last, ...matched.filter((other) => other !== last)]
    : matched) {
    const located = locationInSite(site, sampleId, fallbackDate, sites);
    if (located !== undefined && typeof located === 'object' && 'unknownPen' in located) unknown ??= located;
    else if (located !== undefined) return located;
  }
  return unknown;
}
const lastPatternSite = new WeakMap<readonly Site[], Site>();

/**
 * Pen labels as compared (canonicalPenKey), by the label as written: IDs repeat a barn's few pen
 * labels over and over, and the key takes two regular-expression passes to make.
 */
const penKeys = new Map<string, string>();
const PEN_KEYS_REMEMBERED = 10_000;

function penKeyOf(penText: string): string {
  let key = penKeys.get(penText);
  if (key === undefined) {
    key = canonicalPenKey(penText);
    if (penKeys.size >= PEN_KEYS_REMEMBERED) penKeys.clear();
    penKeys.set(penText, key);
  }
  return key;
}

function locationInSite(
  site: Site,
  sampleId: string,
  fallbackDate: string | undefined,
  sites: readonly Site[],
): EncodedLocation {
  const groups = site.samplePattern?.exec(sampleId);
  // An optional group (barn or pen) that took no part in the match places nothing.
  const barnText = groups?.['barn'];
  const penText = groups?.['pen'];
  if (barnText === undefined || penText === undefined) return undefined;
  const barn = site.barnById.get(barnText.toUpperCase());
  if (!barn) return undefined;
  const pen = barn.penByKey.get(penKeyOf(penText));
  if (!pen) return { unknownPen: penText, siteId: site.id, barnId: barn.id };
  const dateText = groups?.['date'];
  const encodedDate = dateText ? parseDateCell(dateText, 'yyyyMMdd') : undefined;
  // A date the tube label claims but the calendar lacks (20261345) is a mistyped label, not a reason to guess.
  if (dateText && encodedDate === undefined) return 'bad-date';
  const hungOn = encodedDate ?? fallbackDate;
  if (!hungOn) return 'no-date';
  if (lastPatternSite.get(sites) !== site) lastPatternSite.set(sites, site);
  return { siteId: site.id, barnId: barn.id, penId: pen.id, hungOn };
}
