/**
 * The two ways an alert leaves the machine besides the feed: an e-mail through the site's SMTP
 * server (nodemailer, loaded only when a site sends e-mail), and a command that reads the alert as
 * JSON on standard input. Each delivery has a deadline: a server or a command that hangs counts
 * as a failure (retried on the next run), never as a wait without end.
 */
import { spawn } from 'node:child_process';
import type { SiteAlerts } from '../config/types.js';
import type { FeedLine } from './feed.js';

/** One line of text for a log: the first line, at most 300 characters. */
export function oneLine(text: string): string {
  const first = text.trim().split(/\r?\n/)[0] ?? '';
  return first.length > 300 ? `${first.slice(0, 299)}\u2026` : first;
}

/**
 * The subject of an alert's e-mail: the site, the round and what to do (a reader acts on the
 * subject line; the statistic is in the body), or what happened for a line recorded without it.
 */
export function mailSubject(line: FeedLine): string {
  const what =
    line.action ??
    `${line.kind}${line.assay === null ? '' : ` (${line.assay})`}${line.barn === null ? '' : `, barn ${line.barn}`}`;
  return `ropewatch alert: ${line.siteName}, round ${line.round}: ${what}`;
}

/** The body of an alert's e-mail: the message, the numbers behind it, and its key. */
export function mailText(line: FeedLine): string {
  const numbers = Object.entries(line.numbers).map(([name, value]) => `  ${name}: ${value ?? 'n/a'}`);
  return (
    `${line.message}\n\n` +
    `Site: ${line.siteName} (${line.site})\nRound: ${line.round} (${line.roundId}, ropes ${line.roundStart} to ${line.roundEnd})\n` +
    (numbers.length > 0 ? `Numbers behind it:\n${numbers.join('\n')}\n` : '') +
    `\nAlert key: ${line.key}\n`
  );
}

type Email = NonNullable<SiteAlerts['email']>;

/**
 * Sends one alert by e-mail.
 * @param env where the password is read from (`smtp.passwordEnv`)
 * @throws Error (one line) when the server refuses, cannot be reached, or takes longer than `timeoutMs`
 */
export async function sendEmail(
  email: Email,
  line: FeedLine,
  timeoutMs: number,
  env: Readonly<Record<string, string | undefined>>,
): Promise<void> {
  const { smtp } = email;
  let pass: string | undefined;
  if (smtp.passwordEnv !== undefined) {
    pass = env[smtp.passwordEnv];
    if (pass === undefined || pass === '')
      throw new Error(`the environment variable ${smtp.passwordEnv} (smtp.passwordEnv) is not set`);
  }
  const nodemailer = (await import('nodemailer')).default;
  const transport = nodemailer.createTransport({
    host: smtp.host,
    port: smtp.port,
    secure: smtp.secure,
    ...(smtp.user === undefined ? {} : { auth: { user: smtp.user, pass: pass ?? '' } }),
    connectionTimeout: timeoutMs,
    greetingTimeout: timeoutMs,
    socketTimeout: timeoutMs,
  });
  let timer: NodeJS.Timeout | undefined;
  try {
    await Promise.race([
      transport.sendMail({ from: email.from, to: [...email.to], subject: mailSubject(line), text: mailText(line) }),
      new Promise<never>((_, reject) => {
        timer = setTimeout(
          () =>
            reject(new Error(`the SMTP server ${smtp.host}:${smtp.port} did not answer within ${timeoutMs / 1000} s`)),
          timeoutMs,
        );
      }),
    ]);
  } catch (error) {
    throw new Error(oneLine((error as Error).message ?? String(error)), { cause: error });
  } finally {
    clearTimeout(timer);
    transport.close();
  }
}

/**
 * Runs the site's command with the alert as one JSON line on standard input. Exit status 0 means
 * delivered. The command runs without a shell, in `cwd` (the configuration folder).
 * @throws Error (one line) when it cannot start, exits with another status, or outlives `timeoutMs` (it is killed)
 */
export function runCommand(
  argv: readonly string[],
  line: FeedLine,
  timeoutMs: number,
  cwd: string,
  env: Readonly<Record<string, string | undefined>>,
): Promise<void> {
  return new Promise<void>((resolve, reject) => {
    let settled = false;
    const finish = (error?: Error) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      if (error === undefined) resolve();
      else reject(error);
    };
    let stderr = '';
    const child = spawn(argv[0]!, argv.slice(1), { cwd, env: { ...env }, stdio: ['pipe', 'ignore', 'pipe'] });
    const timer = setTimeout(() => {
      child.kill('SIGKILL');
      finish(new Error(`the command ${argv[0]} did not finish within ${timeoutMs / 1000} s and was stopped`));
    }, timeoutMs);
    child.on('error', (error: NodeJS.ErrnoException) =>
      finish(new Error(`the command ${argv[0]} cannot be run (${error.code ?? error.message})`)),
    );
    child.stderr.setEncoding('utf8');
    child.stderr.on('data', (chunk: string) => {
      if (stderr.length < 4096) stderr += chunk;
    });
    // A command that exits without reading its input closes the pipe: its exit status tells.
    child.stdin.on('error', () => {});
    child.stdin.end(JSON.stringify(line) + '\n');
    child.on('close', (code, signal) => {
      if (code === 0) finish();
      else
        finish(
          new Error(
            `the command ${argv[0]} ${code === null ? `was ended by ${signal}` : `exited with status ${code}`}${stderr.trim() === '' ? '' : `: ${oneLine(stderr)}`}`,
          ),
        );
    });
  });
}
