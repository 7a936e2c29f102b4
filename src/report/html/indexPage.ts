/**
 * The index of all sites (outbox/index.html), built from the per-site digests (site.json) so
 * that regenerating one site keeps the others listed.
 */
import { alertItem } from './alerts.js';
import { escapeHtml } from './escape.js';
import { renderPage } from './page.js';

export const DIGEST_SCHEMA = 'ropewatch.site-digest/1';

export interface SiteDigest {
  schema: typeof DIGEST_SCHEMA;
  site: { id: string; name: string };
  latestRound: { number: number; id: string; startOn: string; endOn: string } | null;
  /** `action` and `detail` are absent from digests written before alerts had two lines. */
  alerts: {
    kind: string;
    assayId: string | null;
    barnId: string | null;
    message: string;
    action?: string;
    detail?: string;
  }[];
  notices: string[];
  nextRound: { round: number; dueDate: string; overdue: boolean; daysOverdue: number };
  /** Paths relative to the outbox. */
  links: {
    summary: string | null;
    clusters: string | null;
    nextRound: string;
    /** The plan's reasoning (absent from digests written before the page existed). */
    plan?: string;
    rounds: { id: string; startOn: string; summary: string; clusters: string }[];
  };
}

/**
 * Renders the index page.
 * @param digests the sites' digests, in display order
 * @param organisation the organisation named in config, if any
 */
export function renderIndexPage(digests: readonly SiteDigest[], organisation: string | undefined): string {
  const notices = [...new Set(digests.flatMap((digest) => digest.notices))];
  const rows = digests
    .map((digest) => {
      const latest = digest.latestRound;
      const alerts =
        digest.alerts.length === 0
          ? '<span class="muted">none</span>'
          : `<ul>${digest.alerts.map((alert) => (alert.action !== undefined && alert.detail !== undefined ? alertItem({ kind: alert.kind, action: alert.action, detail: alert.detail }) : `<li data-alert="${escapeHtml(alert.kind)}">${escapeHtml(alert.message)}</li>`)).join('')}</ul>`;
      const next = digest.nextRound.overdue
        ? `<strong class="below">overdue since ${escapeHtml(digest.nextRound.dueDate)} (${digest.nextRound.daysOverdue} days)</strong>`
        : `due ${escapeHtml(digest.nextRound.dueDate)}`;
      const links = [
        digest.links.summary ? `<a href="${escapeHtml(digest.links.summary)}">Round summary</a>` : '',
        digest.links.clusters ? `<a href="${escapeHtml(digest.links.clusters)}">Cluster review</a>` : '',
        `<a href="${escapeHtml(digest.links.nextRound)}">Rope sheet, round ${digest.nextRound.round}</a>`,
        digest.links.plan ? `<a href="${escapeHtml(digest.links.plan)}">Plan and its reasoning (vet)</a>` : '',
      ]
        .filter((text) => text !== '')
        .join('<br>');
      const earlier = digest.links.rounds
        .slice(0, -1)
        .reverse()
        .map(
          (round) =>
            `<a href="${escapeHtml(round.summary)}">${escapeHtml(round.id)}</a> (<a href="${escapeHtml(round.clusters)}">clusters</a>)`,
        )
        .join(', ');
      return (
        `<tr data-site="${escapeHtml(digest.site.id)}"><td><strong>${escapeHtml(digest.site.name)}</strong><br><span class="muted">${escapeHtml(digest.site.id)}</span></td>` +
        `<td>${latest ? `round ${latest.number}<br>${escapeHtml(latest.startOn)} to ${escapeHtml(latest.endOn)}` : '<span class="muted">no round yet</span>'}</td>` +
        `<td>${alerts}</td><td>${next}</td><td>${links}${earlier ? `<br><span class="muted">Earlier: ${earlier}</span>` : ''}</td></tr>`
      );
    })
    .join('');
  return renderPage({
    title: `${organisation ?? 'ropewatch'}: sites`,
    heading: organisation ? `${organisation}: surveillance sites` : 'Surveillance sites',
    subheading: `${digests.length} site${digests.length === 1 ? '' : 's'}; the latest round of each, its alerts and the next round.`,
    notices,
    body: `<table data-index=""><thead><tr><th>Site</th><th>Latest round</th><th>Alerts</th><th>Next round</th><th>Pages</th></tr></thead><tbody>${rows}</tbody></table>`,
  });
}
