/**
 * A process that migrates a PostgreSQL database, for the test of two processes starting at once
 * (migrations.test.ts): it connects, waits at the barrier (a shared advisory lock the test holds
 * exclusively until both are waiting), then migrates and prints the migrations it applied.
 */
import { migratePg } from '../../../src/store/pg/migrations.js';
import { SyncConnection } from '../../../src/store/pg/syncConnection.js';

const [url, barrier] = process.argv.slice(2);
const conn = new SyncConnection(url as string);
conn.query('SELECT pg_advisory_lock_shared($1)', [Number(barrier)]);
conn.query('SELECT pg_advisory_unlock_shared($1)', [Number(barrier)]);
const applied = migratePg(conn);
conn.close();
process.stdout.write(`${JSON.stringify(applied)}\n`);
