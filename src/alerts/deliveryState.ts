/**
 * What was already done with each alert: appended to outbox/alerts.jsonl, sent by e-mail, given
 * to the command. Kept beside a SQLite store (`<store>-alerts.json`, as SQLite keeps
 * `<store>-wal`), and at the top of the outbox for a PostgreSQL one (`.alert-delivery.json`), so that outputs rebuilt many times (catch-up, a changed configuration) deliver each alert once,
 * and a failed delivery waits, with its alert, for the next run. One process delivers at a time:
 * a lock file beside the state names its pid; a lock whose process is gone is taken over.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { WorkspacePaths } from '../workspacePaths.js';
import { writeFileAtomic } from '../report/files.js';
import { takePidLock } from '../util/pidLock.js';
import type { AlertRecord } from './records.js';

export const DELIVERY_STATE_SCHEMA = 'ropewatch.alert-deliveries/1';

export type Channel = 'feed' | 'email' | 'command';

export interface ChannelState {
  done: boolean;
  attempts: number;
  /** The last failure, one line; null once delivered or before any attempt. */
  lastError: string | null;
  lastAttemptAt: string | null;
  doneAt: string | null;
}

export interface DeliveryEntry {
  firstSeenAt: string;
  alert: AlertRecord;
  channels: Partial<Record<Channel, ChannelState>>;
}

export interface DeliveryState {
  schema: typeof DELIVERY_STATE_SCHEMA;
  alerts: Record<string, DeliveryEntry>;
}

/** The state file of a SQLite store: beside it. */
export function deliveryStateFile(dbFile: string): string {
  return `${dbFile}-alerts.json`;
}

/** The state file of a PostgreSQL store, which has no file to sit beside: at the top of the outbox. */
export const OUTBOX_DELIVERY_STATE = '.alert-delivery.json';

/** Where the delivery state of a workspace's store is kept. */
export function workspaceDeliveryStateFile(paths: Pick<WorkspacePaths, 'storeLocation' | 'outbox'>): string {
  const location = paths.storeLocation;
  return location.kind === 'sqlite' ? deliveryStateFile(location.file) : path.join(paths.outbox, OUTBOX_DELIVERY_STATE);
}

export const emptyState = (): DeliveryState => ({ schema: DELIVERY_STATE_SCHEMA, alerts: {} });

/**
 * Reads the state; a missing file is an empty state.
 * @throws Error when the file exists but is not a state this version wrote
 */
export function readDeliveryState(file: string): DeliveryState {
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return emptyState();
    throw error;
  }
  const value = JSON.parse(text) as Partial<DeliveryState>;
  if (value.schema !== DELIVERY_STATE_SCHEMA || typeof value.alerts !== 'object' || value.alerts === null)
    throw new Error(`${file} is not a delivery state (${DELIVERY_STATE_SCHEMA})`);
  return value as DeliveryState;
}

export function writeDeliveryState(file: string, state: DeliveryState): void {
  writeFileAtomic(file, JSON.stringify(state, null, 1) + '\n');
}

/**
 * Takes the delivery lock (a file beside the state holding the pid). Returns the function that
 * releases it, or null when a live process holds it.
 */
export function takeDeliveryLock(stateFile: string): (() => void) | null {
  return takePidLock(`${stateFile}.lock`);
}
