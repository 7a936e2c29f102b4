/**
 * The per-site alert settings and the veterinarian's herd status in sites.yaml: refusals name the
 * file and the key path; an unknown category is refused with the nearest configured one.
 * Expected outcomes follow from the schema (src/config/siteNotices.ts).
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_ALERT_TIMEOUT_SECONDS } from '../../src/config/siteNotices.js';
import { loadConfig } from '../../src/config/load.js';
import { configCases, configError } from './configCases.js';

const { configEdited } = configCases();
const firstSite = (edit: (site: any, doc: any) => void) => configEdited('sites.yaml', (doc) => edit(doc.sites[0], doc));

describe('site alerts in sites.yaml', () => {
  it('loads e-mail and command settings with their defaults', () => {
    const config = loadConfig(
      firstSite((site) => {
        site.alerts = {
          email: {
            smtp: { host: 'mail.clinic.example', user: 'clinic', passwordEnv: 'SMTP_PASSWORD' },
            from: 'ropewatch@clinic.example',
            to: ['vet@clinic.example'],
          },
          command: ['notify', '--site'],
        };
      }),
    );
    // RFC 6409: 587 is the message submission port, upgraded with STARTTLS rather than TLS from the start.
    expect(config.sites[0]!.alerts).toEqual({
      email: {
        smtp: { host: 'mail.clinic.example', port: 587, secure: false, user: 'clinic', passwordEnv: 'SMTP_PASSWORD' },
        from: 'ropewatch@clinic.example',
        to: ['vet@clinic.example'],
      },
      command: ['notify', '--site'],
      timeoutSeconds: DEFAULT_ALERT_TIMEOUT_SECONDS,
    });
    expect(config.sites[1]!.alerts).toBeUndefined();
  });

  it('refuses a password written in the YAML, naming the key path', () => {
    const error = configError(
      firstSite(
        (site) =>
          (site.alerts = {
            email: { smtp: { host: 'mail', user: 'clinic', password: 'x' }, from: 'a@b.example', to: ['c@d.example'] },
          }),
      ),
    );
    expect(error.keyPath).toBe('sites[0].alerts.email.smtp.password');
  });

  it('names the key path of a misspelt key with the nearest known key', () => {
    const error = configError(
      firstSite(
        (site) =>
          (site.alerts = { email: { smtp: { host: 'mail', prot: 25 }, from: 'a@b.example', to: ['c@d.example'] } }),
      ),
    );
    expect(error.keyPath).toBe('sites[0].alerts.email.smtp.prot');
    expect(error.detail).toContain('port');
  });

  it('refuses an address without "@", an empty recipient list, an empty command and a password variable without a user', () => {
    // RFC 5321 4.1.2: a mailbox is local-part "@" domain.
    expect(
      configError(
        firstSite(
          (site) => (site.alerts = { email: { smtp: { host: 'mail' }, from: 'ropewatch', to: ['c@d.example'] } }),
        ),
      ).keyPath,
    ).toBe('sites[0].alerts.email.from');
    expect(
      configError(
        firstSite((site) => (site.alerts = { email: { smtp: { host: 'mail' }, from: 'a@b.example', to: [] } })),
      ).keyPath,
    ).toBe('sites[0].alerts.email.to');
    expect(configError(firstSite((site) => (site.alerts = { command: [] }))).keyPath).toBe('sites[0].alerts.command');
    expect(
      configError(
        firstSite(
          (site) =>
            (site.alerts = {
              email: { smtp: { host: 'mail', passwordEnv: 'P' }, from: 'a@b.example', to: ['c@d.example'] },
            }),
        ),
      ).keyPath,
    ).toBe('sites[0].alerts.email.smtp.user');
    // POSIX.1-2017 8.1: an environment variable's name does not begin with a digit.
    expect(
      configError(
        firstSite(
          (site) =>
            (site.alerts = {
              email: {
                smtp: { host: 'mail', user: 'u', passwordEnv: '1PASS' },
                from: 'a@b.example',
                to: ['c@d.example'],
              },
            }),
        ),
      ).keyPath,
    ).toBe('sites[0].alerts.email.smtp.passwordEnv');
  });
});

describe('herd status in sites.yaml', () => {
  it('loads free text when no categories are configured', () => {
    const config = loadConfig(
      firstSite(
        (site) =>
          (site.herdStatus = { category: 'provisionally negative', setOn: '2026-07-30', note: ' two clean rounds ' }),
      ),
    );
    expect(config.sites[0]!.herdStatus).toEqual({
      category: 'provisionally negative',
      setOn: '2026-07-30',
      note: 'two clean rounds',
    });
  });

  it('takes a configured category in the list spelling, whatever the case written', () => {
    const config = loadConfig(
      firstSite((site, doc) => {
        doc.herdStatusCategories = ['positive unstable', 'positive stable', 'provisionally negative', 'negative'];
        site.herdStatus = { category: 'Positive Stable', setOn: '2026-07-30' };
      }),
    );
    expect(config.sites[0]!.herdStatus).toEqual({ category: 'positive stable', setOn: '2026-07-30', note: undefined });
  });

  it('refuses a category not in the list, with the nearest one', () => {
    const error = configError(
      firstSite((site, doc) => {
        doc.herdStatusCategories = ['positive unstable', 'positive stable', 'negative'];
        site.herdStatus = { category: 'positive stabel', setOn: '2026-07-30' };
      }),
    );
    expect(error.keyPath).toBe('sites[0].herdStatus.category');
    // Damerau 1964: "stabel" is one transposition from "stable".
    expect(error.detail).toContain('did you mean "positive stable"?');
  });

  it('refuses a day that is not a calendar date', () => {
    // ISO 8601 calendar dates: February 2026 has 28 days.
    const error = configError(firstSite((site) => (site.herdStatus = { category: 'negative', setOn: '2026-02-30' })));
    expect(error.keyPath).toBe('sites[0].herdStatus.setOn');
    expect(
      configError(firstSite((site) => (site.herdStatus = { category: 'negative', setOn: '30.07.2026' }))).keyPath,
    ).toBe('sites[0].herdStatus.setOn');
  });
});
