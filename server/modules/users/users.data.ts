/** The users module's raw SQL, apart from the rules in users.service.ts. */
import type { EntityManager } from 'typeorm';

/** Ends every open session of a user (sessions live in the "session" table of connect-pg-simple). */
export async function endSessionsOf(m: EntityManager, userId: string): Promise<void> {
  await m.query(`DELETE FROM "session" WHERE (sess->'passport'->>'user') = $1`, [userId]);
}
