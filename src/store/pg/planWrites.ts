/**
 * A site's plan replaced in PostgreSQL (the SQLite writer's replacePlan, src/store/writer.ts):
 * the site's planned ropes for the round after `afterRound` that are no longer planned and have
 * no result are dropped, and the plan's ropes are written over what is stored under their sample
 * IDs, in one statement each.
 */
import type { PlannedRope } from '../../domain/records.js';
import type { SyncConnection } from './syncConnection.js';

export function planWrites(
  conn: SyncConnection,
  siteId: string,
  afterRound: number,
  ropes: readonly PlannedRope[],
): void {
  const keep = new Set(ropes.map((rope) => rope.sampleId));
  const current = conn.query<{ sampleId: string }>(
    `SELECT sample_id AS "sampleId" FROM planned_ropes p WHERE site_id = $1 AND after_round = $2
       AND NOT EXISTS (SELECT 1 FROM samples s JOIN results r ON r.sample = s.id WHERE s.sample_id = p.sample_id OR s.sample_id = p.pool_id)`,
    [siteId, afterRound],
  ).rows;
  const remove = current.map((row) => row.sampleId).filter((id) => !keep.has(id));
  if (remove.length > 0) conn.query('DELETE FROM planned_ropes WHERE sample_id = ANY($1::text[])', [remove]);
  // A sample ID planned twice: the last one stands, as one upsert after another leaves it.
  const last = [...new Map(ropes.map((rope) => [rope.sampleId, rope])).values()];
  if (last.length === 0) return;
  const column = <K extends keyof PlannedRope>(key: K) => last.map((rope) => rope[key] ?? null);
  conn.query(
    `INSERT INTO planned_ropes (sample_id, site_id, barn_id, pen_id, side, reason, due_on, planned_at, after_round, pool_id)
     SELECT * FROM unnest($1::text[], $2::text[], $3::text[], $4::text[], $5::text[], $6::text[], $7::text[], $8::text[], $9::bigint[], $10::text[])
     ON CONFLICT (sample_id) DO UPDATE SET site_id = excluded.site_id, barn_id = excluded.barn_id, pen_id = excluded.pen_id,
       side = excluded.side, reason = excluded.reason, due_on = excluded.due_on, planned_at = excluded.planned_at,
       after_round = excluded.after_round, pool_id = excluded.pool_id`,
    [
      column('sampleId'),
      column('siteId'),
      column('barnId'),
      column('penId'),
      column('side'),
      column('reason'),
      column('dueOn'),
      column('plannedAt'),
      column('afterRound'),
      column('poolId'),
    ],
  );
}
