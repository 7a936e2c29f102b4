/**
 * Alerts by e-mail through an SMTP server the test starts on the loopback interface
 * (smtp-server, the reference server of the nodemailer project). What the server receives is
 * checked against RFC 5321 (SMTP) and RFC 5322 (message format): the envelope sender and
 * recipients, and the Subject header.
 */
import fs from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { SMTPServer } from 'smtp-server';
import { deliverAlerts } from '../../src/alerts/deliver.js';
import { readDeliveryState, workspaceDeliveryStateFile } from '../../src/alerts/deliveryState.js';
import { workspacesPerTest } from '../helpers/workspace.js';
import { dropRound, withSite } from './scenario.js';

const workspace = workspacesPerTest();

interface Received {
  from: string;
  to: string[];
  data: string;
}

interface MailServer {
  port: number;
  received: Received[];
  /** When set, every message is refused with this reply (RFC 5321 4.2.2: 451, local error). */
  refuse: string | null;
  close: () => Promise<void>;
}

const servers: { close: () => Promise<void> }[] = [];
afterEach(async () => {
  await Promise.all(servers.splice(0).map((server) => server.close()));
});

async function startMailServer(password?: string): Promise<MailServer> {
  const state: MailServer = { port: 0, received: [], refuse: null, close: async () => {} };
  const server = new SMTPServer({
    // Plain SMTP on the loopback interface: no STARTTLS, login allowed without TLS (test only).
    disabledCommands: password === undefined ? ['STARTTLS', 'AUTH'] : ['STARTTLS'],
    allowInsecureAuth: true,
    authOptional: password === undefined,
    logger: false,
    onAuth(auth, _session, callback) {
      if (auth.username === 'clinic' && auth.password === password) callback(null, { user: 'clinic' });
      else callback(new Error('Invalid username or password'));
    },
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (chunk: Buffer) => chunks.push(chunk));
      stream.on('end', () => {
        if (state.refuse !== null) return callback(Object.assign(new Error(state.refuse), { responseCode: 451 }));
        state.received.push({
          from: session.envelope.mailFrom === false ? '' : session.envelope.mailFrom.address,
          to: session.envelope.rcptTo.map((rcpt) => rcpt.address),
          data: Buffer.concat(chunks).toString('utf8'),
        });
        callback();
      });
    },
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  state.port = (server.server.address() as net.AddressInfo).port;
  state.close = () => new Promise<void>((resolve) => server.close(() => resolve()));
  servers.push(state);
  return state;
}

const emailSite = (port: number, extra: Record<string, unknown> = {}, timeoutSeconds = 5) =>
  withSite((site) => {
    site.alerts = {
      email: {
        smtp: { host: '127.0.0.1', port, secure: false, ...extra },
        from: 'ropewatch@clinic.example',
        to: ['vet@clinic.example', 'Herd Office <office@farm.example>'],
      },
      timeoutSeconds,
    };
  });

/** The Subject header, unfolded (RFC 5322 2.2.3: a long header is folded before whitespace; unfolding removes the line breaks). */
const rawSubject = (data: string) => /^Subject: (.*)$/m.exec(data.replace(/\r?\n(?=[ \t])/g, ''))?.[1]?.trim();

/**
 * Decodes RFC 2047 encoded-words (4.1 B = base64, 4.2 Q = quoted-printable with _ for space);
 * whitespace between two adjacent encoded-words is dropped (6.2).
 */
function decodeWords(header: string): string {
  return header
    .replace(/(\?=)\s+(=\?)/g, '$1$2')
    .replace(/=\?utf-8\?([bq])\?([^?]*)\?=/gi, (_, encoding: string, text: string) =>
      encoding.toLowerCase() === 'b'
        ? Buffer.from(text, 'base64').toString('utf8')
        : Buffer.from(
            text
              .replace(/_/g, ' ')
              .replace(/=([0-9a-f]{2})/gi, (__, hex: string) => String.fromCharCode(parseInt(hex, 16))),
            'latin1',
          ).toString('utf8'),
    );
}

const subjectOf = (data: string) => {
  const raw = rawSubject(data);
  return raw === undefined ? undefined : decodeWords(raw);
};

describe('alerts by e-mail', () => {
  it('sends one e-mail per alert to every recipient, and none again on the next run', async () => {
    const mail = await startMailServer();
    const ws = workspace(emailSite(mail.port));
    await dropRound(ws);
    const first = await deliverAlerts(ws.ws(), { env: {} });
    expect(first).toMatchObject({ failed: 0, waiting: 0 });
    expect(first.delivered).toBe(first.recorded);
    expect(mail.received).toHaveLength(first.recorded);
    // RFC 5321 3.3: the envelope carries the sender and each recipient's address (display names dropped).
    expect(mail.received[0]).toMatchObject({
      from: 'ropewatch@clinic.example',
      to: ['vet@clinic.example', 'office@farm.example'],
    });
    const subjects = mail.received.map((message) => subjectOf(message.data));
    // The subject says what to do: the alert's action line, as the feed holds it.
    const feed = fs
      .readFileSync(path.join(ws.paths.outbox, 'alerts.jsonl'), 'utf8')
      .trim()
      .split('\n')
      .map((line) => JSON.parse(line) as { kind: string; action: string });
    const action = feed.find((line) => line.kind === 'first-positive')!.action;
    expect(action).toMatch(/^Positive PRRSV/);
    expect(subjects).toContain(`ropewatch alert: Hollow Creek Finisher, round 1: ${action}`);
    const firstPositive = mail.received.find(
      (message) => subjectOf(message.data) === `ropewatch alert: Hollow Creek Finisher, round 1: ${action}`,
    )!;
    expect(firstPositive.data).toContain('Alert key: hollow-creek/r01-2026-08-03/PRRSV/first-positive/F1');
    expect(firstPositive.data).toContain('positive: 1');
    const again = await deliverAlerts(ws.ws(), { env: {} });
    expect(again).toMatchObject({ recorded: 0, delivered: 0 });
    expect(mail.received).toHaveLength(first.recorded);
  });

  it('logs in with the password from the environment variable the configuration names', async () => {
    const mail = await startMailServer('s3cret');
    const ws = workspace(emailSite(mail.port, { user: 'clinic', passwordEnv: 'ROPEWATCH_SMTP_PASSWORD' }));
    await dropRound(ws);
    const lines: string[] = [];
    const open = { ...ws.ws(), log: (line: string) => lines.push(line) };
    // Without the variable: nothing sent, one line logged, every alert still owed.
    const missing = await deliverAlerts(open, { env: {} });
    expect(missing).toMatchObject({ delivered: 0, failed: 1, waiting: missing.recorded });
    expect(lines).toEqual([
      expect.stringMatching(
        /^warning: alert \S+ not delivered by e-mail \(attempt 1\): the environment variable ROPEWATCH_SMTP_PASSWORD \(smtp\.passwordEnv\) is not set; retried on the next run$/,
      ),
    ]);
    // A wrong password: the server refuses the login (RFC 4954 6: 535).
    const wrong = await deliverAlerts(open, { env: { ROPEWATCH_SMTP_PASSWORD: 'guess' } });
    expect(wrong).toMatchObject({ delivered: 0, failed: 1 });
    expect(lines[1]).toMatch(/535/);
    const right = await deliverAlerts(open, { env: { ROPEWATCH_SMTP_PASSWORD: 's3cret' } });
    expect(right).toMatchObject({ delivered: missing.recorded, failed: 0, waiting: 0 });
    expect(mail.received).toHaveLength(missing.recorded);
  });

  it('keeps a refused e-mail owed, tries the rest of the site no more in that run, and sends each once when the server accepts', async () => {
    const mail = await startMailServer();
    mail.refuse = 'Mailbox temporarily unavailable';
    const ws = workspace(emailSite(mail.port));
    await dropRound(ws);
    const lines: string[] = [];
    const open = { ...ws.ws(), log: (line: string) => lines.push(line) };
    const refused = await deliverAlerts(open, { env: {} });
    // One attempt: a refusing server is not asked again for each alert in the same run.
    expect(refused).toMatchObject({ delivered: 0, failed: 1, waiting: refused.recorded });
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(
      /^warning: alert \S+ not delivered by e-mail \(attempt 1\): .*451.*Mailbox temporarily unavailable; retried on the next run$/,
    );
    const state = readDeliveryState(workspaceDeliveryStateFile(ws.paths));
    const owed = Object.values(state.alerts).filter((entry) => entry.channels.email?.done === false);
    expect(owed).toHaveLength(refused.recorded);
    // The feed does not wait for the e-mail.
    expect(Object.values(state.alerts).every((entry) => entry.channels.feed?.done === true)).toBe(true);
    mail.refuse = null;
    const later = await deliverAlerts(open, { env: {} });
    expect(later).toMatchObject({ delivered: refused.recorded, failed: 0, waiting: 0 });
    const keys = mail.received.map((message) => /^Alert key: (.*)$/m.exec(message.data)?.[1]);
    expect(new Set(keys).size).toBe(refused.recorded);
    expect(keys).toHaveLength(refused.recorded);
  });

  it('gives up on a server that accepts the connection but never answers, within the configured time', async () => {
    // A TCP listener that never sends the SMTP greeting (RFC 5321 4.3.1: the client waits for 220).
    const silent = net.createServer(() => {});
    const sockets = new Set<net.Socket>();
    silent.on('connection', (socket) => sockets.add(socket));
    await new Promise<void>((resolve) => silent.listen(0, '127.0.0.1', resolve));
    servers.push({
      close: () =>
        new Promise<void>((resolve) => {
          for (const socket of sockets) socket.destroy();
          silent.close(() => resolve());
        }),
    });
    const ws = workspace(emailSite((silent.address() as net.AddressInfo).port, {}, 0.5));
    await dropRound(ws);
    const lines: string[] = [];
    const started = performance.now();
    const report = await deliverAlerts({ ...ws.ws(), log: (line: string) => lines.push(line) }, { env: {} });
    const seconds = (performance.now() - started) / 1000;
    expect(report).toMatchObject({ delivered: 0, failed: 1 });
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/Greeting never received|did not answer within 0\.5 s/);
    // Common practice, no source: one timeout (0.5 s) and the time to take it down, well under 5 s.
    expect(seconds).toBeLessThan(5);
  });
});
