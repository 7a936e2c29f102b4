import type { Config } from '../config/types.js';
import { looksLikePlannedId, parseSampleId } from '../plan/sampleId.js';
import type { PlannedIdCheck } from './rows.js';

/**
 * The planned-ID check for a configuration: only IDs that start with a configured site code are
 * held to the check character, so a lab's or farm's own numbering is never refused by it.
 */
export function plannedIdChecker(config: Pick<Config, 'sites'>): PlannedIdCheck {
  const codes = config.sites.map((site) => site.code);
  return (sampleId) => {
    if (!looksLikePlannedId(sampleId)) return { kind: 'other' };
    const parsed = parseSampleId(sampleId);
    if (parsed.ok) return codes.includes(parsed.siteCode) ? { kind: 'planned', canonical: parsed.id } : { kind: 'other' };
    return codes.some((code) => sampleId.startsWith(code) && /^\d/.test(sampleId.slice(code.length))) ? { kind: 'bad-check' } : { kind: 'other' };
  };
}
