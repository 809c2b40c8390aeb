/**
 * Who may do what: one role × action table that both the API's route declarations
 * (`access: rolesFor('run.start')`) and the screens (`useCan()('run.start')`) read, so the server and
 * the app cannot disagree about who may press a button. Emberlot's own policy, not from a standard.
 *
 * The order of the roles in an entry is the order the API names them in a 403 message.
 * Reading things that every signed-in person may read needs no entry (routes say 'signed-in').
 */
import type { Role } from '../roles';

export const PERMISSIONS = {
  // Plans: engineers write; a check stores nothing, so managers and admins may try one too.
  'plan.edit': ['engineer'],
  'plan.check': ['engineer', 'manager', 'admin'],
  // Part numbers (ratings) and lots (serials).
  'deviceType.edit': ['engineer'],
  'lot.edit': ['engineer'],
  // Runs: engineers book; proposals store nothing. The floor loads, starts, pauses, resumes,
  // finishes read-point holds and aborts.
  'run.book': ['engineer'],
  'run.propose': ['engineer', 'manager', 'admin'],
  // Re-order booked runs by priority-weighted lateness (the calendar proposal; audited).
  'run.reschedule': ['engineer', 'manager'],
  'run.load': ['operator', 'engineer'],
  'run.start': ['operator', 'engineer'],
  'run.pause': ['operator', 'engineer'],
  'run.resume': ['operator', 'engineer'],
  'run.measurements-done': ['operator', 'engineer'],
  'run.abort': ['operator', 'engineer'],
  'run.retry': ['operator', 'engineer'],
  // A protection trip is reset by the floor or an engineer, with a reason, after the plan check
  // passes again for that socket's device (server/modules/protection/trip-reset.service.ts).
  'run.reset-trip': ['operator', 'engineer'],
  'alarm.acknowledge': ['operator', 'engineer', 'admin'],
  // Lot-verdict evidence: the floor and engineers record dispositions; withdrawing one or letting a
  // flagged reading be judged is an engineer's call.
  'evidence.read': ['admin', 'engineer', 'operator', 'manager'],
  'disposition.record': ['engineer', 'operator'],
  'disposition.withdraw': ['engineer'],
  'reading.confirm': ['engineer'],
  'measurement.read': ['admin', 'engineer', 'operator', 'manager'],
  'measurement.upload': ['engineer', 'operator'],
  // A correction is a new version with a reason; time zero after Start, a change to a finished
  // run's readings or withdrawing a failure is a deviation on the lot: an engineer's call (issue #21).
  'measurement.correct': ['engineer', 'operator'],
  'measurement.deviation': ['engineer'],
  'trends.read': ['admin', 'engineer', 'manager'],
  // The chance of passing below which engineers are told after a read-point upload (issue #25).
  'forecast.alert': ['engineer'],
  // Their own alert level (who is told when a lot's chance of passing falls: engineers).
  'forecast.alert.own': ['engineer'],
  // Reports (issue #22): the lot report for those who read trends; the certificate of conformance
  // for the people who sign verdicts.
  'report.lot': ['admin', 'engineer', 'manager'],
  'report.certificate': ['engineer', 'manager'],
  'rig.read': ['admin', 'engineer', 'operator', 'manager'],
  'rig.manage': ['admin'],
  // The lab's hold temperatures (bias off, safe to open): admins, audited.
  'lab-settings.manage': ['admin'],
  'telemetry.inspect': ['admin', 'engineer'],
  'user.manage': ['admin'],
  // Safety approvals: an engineer asks to run a plan despite a blocking finding; a second person
  // of these roles who also holds the per-user safety-approval grant (People) decides it.
  'override.request': ['engineer'],
  'override.decide': ['engineer', 'manager', 'admin'],
  // Signing a lot verdict (an electronic signature, 21 CFR Part 11 §11.50/§11.200).
  'verdict.sign': ['engineer', 'manager'],
  // Qualifications (issue #22): engineers build and edit the matrix; managers read and download.
  'qualification.read': ['engineer', 'manager', 'admin'],
  'qualification.edit': ['engineer'],
  // Withdrawing a cell's waiver or outside result (kept on record, audited).
  'qualification.withdraw': ['engineer'],
  'audit.read': ['admin', 'manager'],
  // Re-planning after a rig drops out and the lab's utilisation (issue #26): engineers and managers
  // accept a proposal (audited); managers read the figures, engineers too.
  'replan.read': ['engineer', 'manager', 'admin'],
  'replan.accept': ['engineer', 'manager'],
  'utilisation.read': ['manager', 'engineer', 'admin'],
  'mail.read': ['admin'],
  // Places in the app's navigation (components/shell/destinations.ts).
  'page.floor': ['operator', 'engineer', 'admin'],
  'page.alarms': ['operator', 'engineer', 'admin'],
  'page.readings': ['operator', 'engineer'],
  'page.plans': ['engineer'],
  'page.devices': ['engineer', 'manager'],
  'page.schedule': ['engineer', 'operator', 'manager'],
  'page.trends': ['manager', 'engineer'],
  'page.people': ['admin'],
  'page.approvals': ['engineer', 'manager', 'admin'],
  'page.audit': ['admin', 'manager'],
  'page.qualifications': ['engineer', 'manager'],
  'page.mail': ['admin'],
  'page.rigs': ['admin', 'engineer'],
  'page.capacity': ['manager', 'engineer'],
} satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof PERMISSIONS;

/** The roles that may take an action (for a route's `access`). */
export const rolesFor = (action: Permission): readonly Role[] => PERMISSIONS[action];

/** Whether a role may take an action. */
export const can = (role: Role, action: Permission): boolean => (PERMISSIONS[action] as readonly Role[]).includes(role);
