/** Alarm kinds and severities and their words — declared once, without zod (Emberlot's own words). */

export const ALARM_KINDS = [
  'runaway-trip',
  'runaway-warning',
  'rig-offline',
  'ambient-out-of-band',
  'ambient-not-reached',
  'read-point-overdue',
  'bias-out-of-tolerance',
  'leakage-jump',
  'ingest-dropped',
  'command-failed',
  'thermal-path',
] as const;
export type AlarmKindName = (typeof ALARM_KINDS)[number];
export const isAlarmKind = (s: string): s is AlarmKindName => (ALARM_KINDS as readonly string[]).includes(s);

/** Short names for lists and e-mail subjects. */
export const ALARM_KIND_LABEL: Record<AlarmKindName, string> = {
  'runaway-trip': 'Socket tripped: runaway',
  'runaway-warning': 'Runaway risk',
  'rig-offline': 'Rig offline',
  'ambient-out-of-band': 'Chamber out of band',
  'ambient-not-reached': 'Chamber not at temperature',
  'read-point-overdue': 'Read point overdue',
  'bias-out-of-tolerance': 'Bias out of tolerance',
  'leakage-jump': 'Leakage jump',
  'ingest-dropped': 'Telemetry dropped',
  'command-failed': 'Rig command failed',
  'thermal-path': 'Thermal path degrading',
};

export const ALARM_SEVERITIES = ['critical', 'warning', 'info'] as const;
export type AlarmSeverityName = (typeof ALARM_SEVERITIES)[number];
export const SEVERITY_LABEL: Record<AlarmSeverityName, string> = {
  critical: 'Critical',
  warning: 'Warning',
  info: 'Notice',
};
