/**
 * In-process event: a session ended (sign-out). Open streams bound to it end at once; streams of
 * a deactivated user, or of a session that expired or was deleted by any other path, end at the
 * floor stream's next session check (floor.stream.ts, SESSION_CHECK_MS).
 */
export const SESSION_ENDED = 'session-ended';

export interface SessionEnded {
  sid: string;
}
