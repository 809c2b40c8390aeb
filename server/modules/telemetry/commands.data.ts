/**
 * The durable command log (`rig_commands`, migration 1835…): every command to a rig is stored
 * before it is published, keyed by (rig_code, cmd_id), so a process that takes over the MQTT link
 * finds what its predecessor sent and what the rig answered (command-store.ts).
 */
import type { Pool } from 'pg';

export type StoredCommandState = 'queued' | 'sent' | 'acked' | 'refused' | 'expired';

export interface CommandRow {
  state: StoredCommandState;
  error: string | null;
  publishes: number;
}

/**
 * Store a command about to be published by this process (state `sent`), or find the one stored
 * under its key. A `queued` one (asked for by a process without the link) is taken over here.
 * Returns the row as it was before this call when it already existed (`existed: true`).
 */
export async function claimForSend(
  pool: Pool,
  c: { rigCode: string; cmdId: string; type: string; body: unknown; by: string },
): Promise<{ existed: boolean; row: CommandRow }> {
  const ins = await pool.query<CommandRow>(
    `INSERT INTO rig_commands (rig_code, cmd_id, type, body, state, sent_at, sent_by, publishes)
     VALUES ($1, $2, $3, $4, 'sent', now(), $5, 1)
     ON CONFLICT (rig_code, cmd_id) DO NOTHING
     RETURNING state, error, publishes`,
    [c.rigCode, c.cmdId, c.type, JSON.stringify(c.body), c.by],
  );
  if (ins.rows.length) return { existed: false, row: ins.rows[0] };
  // Already stored: a `queued` or unanswered `sent` one is (re)published by this process now.
  const upd = await pool.query<CommandRow>(
    `UPDATE rig_commands SET state = 'sent', sent_at = coalesce(sent_at, now()), sent_by = $3, publishes = publishes + 1
     WHERE rig_code = $1 AND cmd_id = $2 AND state IN ('queued', 'sent')
     RETURNING state, error, publishes`,
    [c.rigCode, c.cmdId, c.by],
  );
  if (upd.rows.length) return { existed: true, row: upd.rows[0] };
  const cur = await readCommand(pool, c.rigCode, c.cmdId);
  return { existed: true, row: cur ?? { state: 'sent', error: null, publishes: 0 } };
}

/** The rig's answer, stored once (a later repeat of the same answer changes nothing). */
export async function recordAnswer(pool: Pool, rigCode: string, cmdId: string, ok: boolean, error: string | null): Promise<boolean> {
  const r = await pool.query(
    `UPDATE rig_commands SET state = $3, error = $4, answered_at = now()
     WHERE rig_code = $1 AND cmd_id = $2 AND state IN ('queued', 'sent')`,
    [rigCode, cmdId, ok ? 'acked' : 'refused', error],
  );
  return (r.rowCount ?? 0) > 0;
}

export async function readCommand(pool: Pool, rigCode: string, cmdId: string): Promise<CommandRow | null> {
  const r = await pool.query<CommandRow>(`SELECT state, error, publishes FROM rig_commands WHERE rig_code = $1 AND cmd_id = $2`, [
    rigCode,
    cmdId,
  ]);
  return r.rows[0] ?? null;
}

/** A command asked for by a process without the MQTT link (a standby's request): the leader publishes it. */
export async function queueCommand(pool: Pool, c: { rigCode: string; cmdId: string; type: string; body: unknown }): Promise<void> {
  await pool.query(
    `INSERT INTO rig_commands (rig_code, cmd_id, type, body, state) VALUES ($1, $2, $3, $4, 'queued')
     ON CONFLICT (rig_code, cmd_id) DO NOTHING`,
    [c.rigCode, c.cmdId, c.type, JSON.stringify(c.body)],
  );
}

/** Give up on a queued command no leader took in time; false when a leader took it meanwhile. */
export async function expireQueued(pool: Pool, rigCode: string, cmdId: string, why: string): Promise<boolean> {
  const r = await pool.query(
    `UPDATE rig_commands SET state = 'expired', error = $3, answered_at = now() WHERE rig_code = $1 AND cmd_id = $2 AND state = 'queued'`,
    [rigCode, cmdId, why],
  );
  return (r.rowCount ?? 0) > 0;
}

/** Queued commands waiting for the leader (oldest first; a minute old at most: their callers gave up). */
export async function queuedCommands(
  pool: Pool,
  limit = 50,
): Promise<Array<{ rigCode: string; cmdId: string; body: Record<string, unknown> }>> {
  const r = await pool.query<{ rig_code: string; cmd_id: string; body: Record<string, unknown> }>(
    `SELECT rig_code, cmd_id, body FROM rig_commands
     WHERE state = 'queued' AND created_at > now() - interval '1 minute'
     ORDER BY created_at LIMIT $1`,
    [limit],
  );
  return r.rows.map((x) => ({ rigCode: x.rig_code, cmdId: x.cmd_id, body: x.body }));
}

/**
 * Answered commands older than the keep window go (the log is for hand-overs, not history: runs
 * and audit entries keep what happened). 90 days outlasts any run's wish to send the same cmdId.
 */
export const COMMAND_LOG_KEEP_DAYS = 90;

export async function pruneCommandLog(pool: Pool, keepDays = COMMAND_LOG_KEEP_DAYS): Promise<number> {
  const r = await pool.query(
    `DELETE FROM rig_commands WHERE created_at < now() - $1 * interval '1 day' AND state IN ('acked', 'refused', 'expired')`,
    [keepDays],
  );
  return r.rowCount ?? 0;
}
