/**
 * Words a site's findings for the writers: the round summaries' coded notices
 * (src/report/summaryNotices.ts) and the plan's coded notes and readings
 * (src/report/planWording.ts). The analysis itself returns numbers only.
 */
import type { SiteAnalysis, SiteFindings } from '../analysis/analyseSite.js';
import { wordPlan } from './planWording.js';
import { wordSummary } from './summaryNotices.js';

export function wordSiteAnalysis(findings: SiteFindings): SiteAnalysis {
  return { ...findings, summaries: findings.summaries.map(wordSummary), plan: wordPlan(findings.plan) };
}
