/**
 * Two per-site settings about people rather than pens: where a site's alerts go (e-mail through
 * an SMTP server, a command that reads each alert as JSON), and the veterinarian's categorical
 * status of the herd. Schemas here; `normaliseSiteNotices` checks what zod cannot (a category
 * from the configured list, a real calendar date) and freezes the result.
 */
import { isMatch } from 'date-fns/isMatch';
import { z } from 'zod';
import { didYouMean } from './nearest.js';
import { ConfigError } from './problems.js';

/** Seconds a delivery may take before it counts as failed (and is retried on the next run). */
export const DEFAULT_ALERT_TIMEOUT_SECONDS = 20;

/** An environment variable's name (POSIX.1-2017, 8.1: letters, digits and underscores, not starting with a digit). */
const envName = z
  .string()
  .regex(
    /^[A-Za-z_][A-Za-z0-9_]*$/,
    'the name of an environment variable: letters, digits and "_", not starting with a digit',
  );

/**
 * An address as SMTP carries it (RFC 5321, 4.1.2: local-part "@" domain), optionally with a
 * display name before it in angle brackets (RFC 5322, 3.4). A loose check: catches a missing
 * "@" or a space, leaves the rest to the server.
 */
const mailbox = z
  .string()
  .regex(/^(?:[^<>]*<[^\s@<>]+@[^\s@<>]+>|[^\s@<>]+@[^\s@<>]+)$/, 'an e-mail address such as vet@clinic.example');

export const smtpSchema = z
  .object({
    host: z.string().min(1),
    // TCP ports (RFC 793); 587 is the submission port (RFC 6409).
    port: z.number().int().min(1).max(65_535).default(587),
    /** true: TLS from the start (port 465, RFC 8314); false: plain, upgraded with STARTTLS when the server offers it. */
    secure: z.boolean().default(false),
    user: z.string().min(1).optional(),
    /** The environment variable that holds the password (never the password itself). */
    passwordEnv: envName.optional(),
  })
  .strict()
  .superRefine((smtp, ctx) => {
    if (smtp.passwordEnv !== undefined && smtp.user === undefined)
      ctx.addIssue({ code: 'custom', path: ['user'], message: 'is missing: passwordEnv needs the user it logs in as' });
  });

export const siteAlertsSchema = z
  .object({
    email: z
      .object({
        smtp: smtpSchema,
        from: mailbox,
        to: z.array(mailbox).min(1),
      })
      .strict()
      .optional(),
    /** A program and its arguments (no shell): it reads each alert as JSON on standard input; exit 0 means delivered. */
    command: z.array(z.string().min(1)).min(1).optional(),
    /** Seconds one delivery (one e-mail, one run of the command) may take. */
    timeoutSeconds: z.number().gt(0).max(600).default(DEFAULT_ALERT_TIMEOUT_SECONDS),
  })
  .strict();

export const herdStatusSchema = z
  .object({
    /** The veterinarian's word for the herd's status: free text, or one of sites.yaml `herdStatusCategories`. */
    category: z.string().trim().min(1),
    /** The day it was set (yyyy-MM-dd). */
    setOn: z.string(),
    note: z.string().optional(),
  })
  .strict();

/** sites.yaml `herdStatusCategories`: when given, every site's category must be one of them. */
export const herdStatusCategoriesSchema = z.array(z.string().trim().min(1)).min(1);

export interface SmtpSettings {
  host: string;
  port: number;
  secure: boolean;
  user: string | undefined;
  passwordEnv: string | undefined;
}

/** Where a site's alerts go besides outbox/alerts.jsonl. */
export interface SiteAlerts {
  email: { smtp: SmtpSettings; from: string; to: readonly string[] } | undefined;
  command: readonly string[] | undefined;
  timeoutSeconds: number;
}

/** The veterinarian's status of a herd, as configured. */
export interface HerdStatus {
  category: string;
  setOn: string;
  note: string | undefined;
}

type RawAlerts = z.output<typeof siteAlertsSchema>;
type RawHerdStatus = z.output<typeof herdStatusSchema>;

/** The alert settings, frozen. */
export function normaliseAlerts(raw: RawAlerts | undefined): SiteAlerts | undefined {
  if (raw === undefined) return undefined;
  const email =
    raw.email === undefined
      ? undefined
      : Object.freeze({
          smtp: Object.freeze({ user: undefined, passwordEnv: undefined, ...raw.email.smtp }),
          from: raw.email.from,
          to: Object.freeze([...raw.email.to]),
        });
  return Object.freeze({
    email,
    command: raw.command === undefined ? undefined : Object.freeze([...raw.command]),
    timeoutSeconds: raw.timeoutSeconds,
  });
}

/**
 * The herd status, checked: `setOn` a real calendar date (ISO 8601 calendar date, yyyy-MM-dd),
 * the category one of `categories` when a list is configured (compared ignoring case; the
 * list's spelling is kept).
 * @param at the key path of the site's herdStatus, for messages
 * @throws ConfigError naming the file and key path
 */
export function normaliseHerdStatus(
  raw: RawHerdStatus | undefined,
  categories: readonly string[] | undefined,
  file: string,
  at: string,
): HerdStatus | undefined {
  if (raw === undefined) return undefined;
  if (!/^\d{4}-\d{2}-\d{2}$/.test(raw.setOn) || !isMatch(raw.setOn, 'yyyy-MM-dd')) {
    throw new ConfigError(file, `${at}.setOn`, `must be a date written yyyy-MM-dd, got ${JSON.stringify(raw.setOn)}`);
  }
  let category = raw.category;
  if (categories !== undefined) {
    const known = categories.find((name) => name.toLowerCase() === raw.category.toLowerCase());
    if (known === undefined) {
      const hint = didYouMean(raw.category, categories, (text) => JSON.stringify(text));
      throw new ConfigError(
        file,
        `${at}.category`,
        `${JSON.stringify(raw.category)} is not in herdStatusCategories (${categories.map((name) => JSON.stringify(name)).join(', ')})${hint ? `: ${hint}` : ''}`,
      );
    }
    category = known;
  }
  return Object.freeze({
    category,
    setOn: raw.setOn,
    note: raw.note === undefined || raw.note.trim() === '' ? undefined : raw.note.trim(),
  });
}
