/**
 * Run lifecycle states and the named sets of them — declared once.
 *
 *   booked ──(operator loads sockets)──▶ loading ──start──▶ heating ──(chamber in band)──▶ stressing
 *   stressing ──(read point reached: bias off)──▶ read-hold ──(measurements done)──▶ heating
 *   stressing ──(plan hours reached: bias off, chamber to ambient)──▶ cooling ──▶ finished
 *   heating/stressing ──pause──▶ paused ──resume──▶ heating
 *   heating/stressing/paused/read-hold/cooling ──(the rig refused a command, or did not confirm it)──▶ fault
 *   fault ──retry after the fix (operator or engineer, with a reason; audited)──▶ heating
 *   any state before finished ──abort (with a reason)──▶ aborted
 * In fault the scheduler only removes bias from the run's sockets; no hours count.
 */
export const RUN_STATES = [
  'booked',
  'loading',
  'heating',
  'stressing',
  'paused',
  'read-hold',
  'cooling',
  'fault',
  'finished',
  'aborted',
] as const;
export type RunState = (typeof RUN_STATES)[number];

/** States in which the run's devices sit in the oven (the rig is physically used). */
export const ON_RIG_STATES: readonly RunState[] = ['loading', 'heating', 'stressing', 'paused', 'read-hold', 'cooling', 'fault'];
/** States the scheduler drives (commands, accrual; in fault only bias off). */
export const DRIVEN_STATES: readonly RunState[] = ['heating', 'stressing', 'paused', 'read-hold', 'cooling', 'fault'];
/** States a rig's refused or unconfirmed command moves into fault. */
export const FAULTABLE_STATES: readonly RunState[] = ['heating', 'stressing', 'paused', 'read-hold', 'cooling'];
/** States in which the run needs the chamber at its set point. */
export const HEAT_STATES: readonly RunState[] = ['heating', 'stressing', 'paused'];
export const TERMINAL_STATES: readonly RunState[] = ['finished', 'aborted'];
/** States after bias came off for a read point or the end of stress, whose measurements may fall overdue. */
export const MEASURE_PENDING_STATES: readonly RunState[] = ['read-hold', 'cooling', 'finished'];

/** SQL list literal of a state set, for raw queries: `state IN ${sqlStateList(ON_RIG_STATES)}`. */
export const sqlStateList = (states: readonly RunState[]): string => `(${states.map((s) => `'${s}'`).join(',')})`;

export const RUN_ACTIONS = ['load', 'start', 'pause', 'resume', 'abort', 'measurements-done', 'retry'] as const;
export type RunAction = (typeof RUN_ACTIONS)[number];

export const RUN_ACTION_LABEL: Record<RunAction, string> = {
  load: 'Load sockets',
  start: 'Start',
  pause: 'Pause',
  resume: 'Resume',
  abort: 'Abort',
  'measurements-done': 'Measurements done',
  retry: 'Retry after fix',
};
