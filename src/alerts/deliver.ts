/**
 * Delivery of alerts, after the outputs and outside any write transaction of the store. Each
 * site's outputs hold its alerts (outbox/<site>/alerts.json, written with the other outputs);
 * a delivery run reads them, notes the alerts it has not seen in the delivery state (with the
 * channels the site has configured at that moment), appends them to outbox/alerts.jsonl, then
 * sends the e-mails and runs the commands still owed. A failure is logged in one line and the
 * delivery stays owed for the next run; a channel that fails is not tried again for that site
 * in the same run (a server that is down costs one timeout, not one per alert). Nothing here
 * throws at its caller: ingest goes on whatever happens to delivery.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Site } from '../config/types.js';
import { terminalText } from '../util/terminalText.js';
import type { Workspace } from '../workspace.js';
import { oneLine, runCommand, sendEmail } from './channels.js';
import {
  workspaceDeliveryStateFile,
  emptyState,
  readDeliveryState,
  takeDeliveryLock,
  writeDeliveryState,
  type Channel,
  type ChannelState,
  type DeliveryState,
} from './deliveryState.js';
import { appendToFeed, FEED_FILE, feedLine, type FeedLine } from './feed.js';
import { SITE_ALERTS_FILE, SITE_ALERTS_SCHEMA, type AlertRecord } from './records.js';

/** How a delivery is made; tests may replace a channel. */
export interface Senders {
  email: typeof sendEmail;
  command: typeof runCommand;
}

export interface DeliverOptions {
  /** Environment of the command and source of SMTP passwords. */
  env: Readonly<Record<string, string | undefined>>;
  senders?: Partial<Senders>;
}

export interface DeliveryReport {
  /** Alerts seen for the first time. */
  recorded: number;
  /** Lines appended to the feed. */
  appended: number;
  delivered: number;
  failed: number;
  /** Deliveries still owed after this run. */
  waiting: number;
  /** Another process was delivering: nothing done here (it, or the next run, delivers). */
  busy: boolean;
}

const pendingState = (): ChannelState => ({
  done: false,
  attempts: 0,
  lastError: null,
  lastAttemptAt: null,
  doneAt: null,
});

/** The channels a site sends alerts through besides the feed. */
function externalChannels(site: Site | undefined): Channel[] {
  const alerts = site?.alerts;
  if (alerts === undefined) return [];
  return [
    ...(alerts.email === undefined ? [] : (['email'] as const)),
    ...(alerts.command === undefined ? [] : (['command'] as const)),
  ];
}

/** A site's alert records from its outputs (none when its outputs were never written). */
function readSiteAlerts(outbox: string, siteId: string): AlertRecord[] {
  let text: string;
  try {
    text = fs.readFileSync(path.join(outbox, siteId, SITE_ALERTS_FILE), 'utf8');
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw error;
  }
  const value = JSON.parse(text) as { schema?: unknown; alerts?: unknown };
  if (value.schema !== SITE_ALERTS_SCHEMA || !Array.isArray(value.alerts))
    throw new Error(`${path.join(siteId, SITE_ALERTS_FILE)} is not a list of alerts (${SITE_ALERTS_SCHEMA})`);
  return value.alerts as AlertRecord[];
}

/**
 * Records new alerts, appends them to the feed and delivers what is owed. Logs one line per
 * failure through `ws.log`.
 */
export async function deliverAlerts(ws: Workspace, options: DeliverOptions): Promise<DeliveryReport> {
  const report: DeliveryReport = { recorded: 0, appended: 0, delivered: 0, failed: 0, waiting: 0, busy: false };
  const warn = (text: string) => ws.log(terminalText(`warning: ${text}`));
  const stateFile = workspaceDeliveryStateFile(ws);
  let release: (() => void) | null;
  try {
    release = takeDeliveryLock(stateFile);
  } catch (error) {
    warn(
      `alerts not delivered: the lock beside ${stateFile} cannot be taken (${oneLine((error as Error).message)}); retried on the next run`,
    );
    return report;
  }
  if (release === null) return { ...report, busy: true };
  try {
    await deliverLocked(ws, options, stateFile, report, warn);
  } finally {
    release();
  }
  return report;
}

/** One delivery run under the lock: the workspace, the delivery record, and what the run reports. */
interface DeliveryRun {
  ws: Workspace;
  stateFile: string;
  state: DeliveryState;
  report: DeliveryReport;
  warn: (text: string) => void;
  now: () => string;
  save: () => void;
}

/**
 * The delivery record, or a new one when it cannot be read: what was delivered is then unknown;
 * the feed's own keys keep it from doubling; an e-mail or a command may be repeated, which is
 * better than lost. The damaged file is kept beside.
 */
function readStateOrStartAgain(stateFile: string, warn: (text: string) => void): DeliveryState {
  try {
    return readDeliveryState(stateFile);
  } catch (error) {
    const aside = `${stateFile}.damaged`;
    warn(
      `${stateFile} cannot be read (${oneLine((error as Error).message)}); moved to ${path.basename(aside)}, starting a new delivery record`,
    );
    fs.renameSync(stateFile, aside);
    return emptyState();
  }
}

/** Step 1: the alerts not seen before, each with the channels its site has now. */
function recordNewAlerts(run: DeliveryRun): void {
  const { ws, state, report } = run;
  for (const site of ws.config.sites) {
    let records: AlertRecord[];
    try {
      records = readSiteAlerts(ws.outbox, site.id);
    } catch (error) {
      run.warn(
        `the alerts of ${site.id} cannot be read (${oneLine((error as Error).message)}); they are read again on the next run`,
      );
      continue;
    }
    for (const record of records) {
      if (state.alerts[record.key] !== undefined) continue;
      // A rope sheet comes before its results: until one result is back, the round's ropes are
      // not missing, and the alert is taken (with the counts it has then) once results come.
      if (record.kind === 'missing-ropes' && record.awaitingResults) continue;
      const channels: DeliveryState['alerts'][string]['channels'] = { feed: pendingState() };
      for (const channel of externalChannels(site)) channels[channel] = pendingState();
      state.alerts[record.key] = { firstSeenAt: run.now(), alert: record, channels };
      report.recorded++;
    }
  }
  if (report.recorded > 0) run.save();
}

/** The feed line of a recorded alert, as every channel sends it. */
const lineOf = (state: DeliveryState, key: string): FeedLine =>
  feedLine(state.alerts[key]!.alert, state.alerts[key]!.firstSeenAt);

/** Step 2: every alert the feed still owes, appended in one write. */
function appendOwedToFeed(run: DeliveryRun): void {
  const { ws, state } = run;
  const forFeed = Object.entries(state.alerts)
    .filter(([, entry]) => entry.channels.feed !== undefined && !entry.channels.feed.done)
    .map(([key]) => key);
  if (forFeed.length === 0) return;
  try {
    run.report.appended = appendToFeed(
      path.join(ws.outbox, FEED_FILE),
      forFeed.map((key) => lineOf(state, key)),
    );
    const at = run.now();
    for (const key of forFeed)
      Object.assign(state.alerts[key]!.channels.feed!, {
        done: true,
        attempts: state.alerts[key]!.channels.feed!.attempts + 1,
        lastError: null,
        lastAttemptAt: at,
        doneAt: at,
      });
    run.save();
  } catch (error) {
    run.warn(
      `${forFeed.length} alert(s) not appended to ${path.join(ws.outbox, FEED_FILE)} (${oneLine((error as Error).message)}); retried on the next run`,
    );
  }
}

/** Step 3: e-mail and command, one alert at a time; a channel that fails rests until the next run. */
async function sendOwed(run: DeliveryRun, options: DeliverOptions): Promise<void> {
  const { ws, state, report } = run;
  const senders: Senders = { email: sendEmail, command: runCommand, ...options.senders };
  const resting = new Set<string>();
  for (const [key, entry] of Object.entries(state.alerts)) {
    for (const channel of ['email', 'command'] as const) {
      const owed = entry.channels[channel];
      if (owed === undefined || owed.done) continue;
      const site = ws.config.sites.find((candidate) => candidate.id === entry.alert.site.id);
      const alerts = site?.alerts;
      const configured = channel === 'email' ? alerts?.email : alerts?.command;
      // The site or its channel left the configuration: the delivery waits, in case it returns.
      if (alerts === undefined || configured === undefined || resting.has(`${entry.alert.site.id}/${channel}`)) {
        report.waiting++;
        continue;
      }
      const timeoutMs = alerts.timeoutSeconds * 1000;
      owed.attempts++;
      owed.lastAttemptAt = run.now();
      try {
        if (channel === 'email') await senders.email(alerts.email!, lineOf(state, key), timeoutMs, options.env);
        else await senders.command(alerts.command!, lineOf(state, key), timeoutMs, ws.configDir, options.env);
        Object.assign(owed, { done: true, lastError: null, doneAt: run.now() });
        report.delivered++;
      } catch (error) {
        owed.lastError = oneLine((error as Error).message ?? String(error));
        report.failed++;
        report.waiting++;
        resting.add(`${entry.alert.site.id}/${channel}`);
        run.warn(
          `alert ${key} not delivered by ${channel === 'email' ? 'e-mail' : 'command'} (attempt ${owed.attempts}): ${owed.lastError}; retried on the next run`,
        );
      }
      try {
        run.save();
      } catch (error) {
        run.warn(`the delivery record ${run.stateFile} cannot be written (${oneLine((error as Error).message)})`);
      }
    }
  }
}

async function deliverLocked(
  ws: Workspace,
  options: DeliverOptions,
  stateFile: string,
  report: DeliveryReport,
  warn: (text: string) => void,
): Promise<void> {
  const state = readStateOrStartAgain(stateFile, warn);
  const run: DeliveryRun = {
    ws,
    stateFile,
    state,
    report,
    warn,
    now: () => ws.now().toISOString(),
    save: () => writeDeliveryState(stateFile, state),
  };
  recordNewAlerts(run);
  appendOwedToFeed(run);
  await sendOwed(run, options);
}
