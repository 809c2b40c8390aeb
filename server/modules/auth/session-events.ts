/** The session-ended event lives in the event map (server/events.ts); re-exported for its readers. */
export { SESSION_ENDED, type SessionEnded } from '../../events';
