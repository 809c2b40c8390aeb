/**
 * Alarms, in-app notifications and the mail log: request schemas (validated on the server, reused by
 * the app) and the response shapes. Alarm words are Emberlot's own.
 */
import { z } from 'zod';

import { ALARM_KINDS, ALARM_SEVERITIES, type AlarmSeverityName } from '../domain/alarms';
export {
  ALARM_KINDS,
  type AlarmKindName,
  isAlarmKind,
  ALARM_KIND_LABEL,
  ALARM_SEVERITIES,
  type AlarmSeverityName,
  SEVERITY_LABEL,
} from '../domain/alarms';

/**
 * Alarm statuses as the list filter sees them:
 * open = not yet acknowledged (whether or not the condition has gone away);
 * acknowledged = someone acknowledged it; all = both.
 */
export const ALARM_STATUSES = ['open', 'acknowledged', 'all'] as const;

const uuid = () => z.string().uuid('Not a valid id');
const intFromQuery = (min: number, max: number, d: number) => z.coerce.number().int().min(min).max(max).default(d);

export const alarmListQuerySchema = z
  .object({
    status: z.enum(ALARM_STATUSES).default('open'),
    rigId: uuid().optional(),
    runId: uuid().optional(),
    severity: z.enum(ALARM_SEVERITIES).optional(),
    kind: z.enum(ALARM_KINDS).optional(),
    limit: intFromQuery(1, 500, 100),
    offset: intFromQuery(0, 1_000_000, 0),
  })
  .strict();
export type AlarmListQuery = z.infer<typeof alarmListQuerySchema>;

export const acknowledgeAlarmSchema = z
  .object({
    /** What the operator saw or did ("Socket left off; heat sink clamp loose, reported to maintenance"). */
    note: z.string().trim().min(3, 'Write a short note: what you checked or did').max(1000, 'Keep the note under 1000 characters'),
  })
  .strict();
export type AcknowledgeAlarmInput = z.infer<typeof acknowledgeAlarmSchema>;

export const alarmSchema = z.object({
  id: z.string(),
  kind: z.enum(ALARM_KINDS),
  severity: z.enum(ALARM_SEVERITIES),
  rigId: z.string().nullable(),
  rigCode: z.string().nullable(),
  runId: z.string().nullable(),
  runCode: z.string().nullable(),
  socketIndex: z.number().int().nullable(),
  title: z.string(),
  message: z.string(),
  /** What to do, one plain sentence or two. */
  action: z.string(),
  /** The numbers behind the alarm (Tj estimate, loop gain, seconds to Tj max, measured vs set …). */
  details: z.record(z.string(), z.any()),
  raisedAt: z.string(),
  /** Last time the condition was seen (repeats update the alarm instead of adding new ones). */
  lastSeenAt: z.string(),
  occurrences: z.number().int(),
  acknowledgedAt: z.string().nullable(),
  acknowledgedBy: z.object({ id: z.string(), name: z.string() }).nullable(),
  ackNote: z.string().nullable(),
  /** When the condition went away; the alarm still needs acknowledging. */
  clearedAt: z.string().nullable(),
  /** open: not acknowledged yet; active: the condition still holds. */
  open: z.boolean(),
  active: z.boolean(),
});
export type Alarm = z.infer<typeof alarmSchema>;

export interface AlarmList {
  items: Alarm[];
  total: number;
}

export interface AlarmCounts {
  /** Not acknowledged. */
  open: number;
  /** Not acknowledged and the condition still holds. */
  active: number;
  bySeverity: Record<AlarmSeverityName, number>;
  byRig: Array<{ rigId: string; rigCode: string; open: number; critical: number }>;
}

// ---------------------------------------------------------------------------------------------
// Notifications (in-app, per user)

export const notificationListQuerySchema = z
  .object({
    unread: z
      .enum(['true', 'false'])
      .transform((v) => v === 'true')
      .optional(),
    limit: intFromQuery(1, 200, 50),
  })
  .strict();
export type NotificationListQuery = z.infer<typeof notificationListQuerySchema>;

export const notificationSchema = z.object({
  id: z.string(),
  kind: z.string(),
  title: z.string(),
  body: z.string(),
  link: z.string().nullable(),
  readAt: z.string().nullable(),
  createdAt: z.string(),
});
export type AppNotification = z.infer<typeof notificationSchema>;
export interface NotificationList {
  items: AppNotification[];
  unread: number;
}

// ---------------------------------------------------------------------------------------------
// Mail log (admin)

export const MAIL_STATUSES = ['sent', 'failed'] as const;
export const mailListQuerySchema = z
  .object({
    status: z.enum(MAIL_STATUSES).optional(),
    limit: intFromQuery(1, 500, 100),
    offset: intFromQuery(0, 1_000_000, 0),
  })
  .strict();
export type MailListQuery = z.infer<typeof mailListQuerySchema>;

export const mailLogEntrySchema = z.object({
  id: z.string(),
  toAddress: z.string(),
  subject: z.string(),
  body: z.string(),
  kind: z.string(),
  status: z.enum(MAIL_STATUSES),
  error: z.string().nullable(),
  messageId: z.string().nullable(),
  createdAt: z.string(),
});
export type MailLogEntry = z.infer<typeof mailLogEntrySchema>;
export interface MailList {
  items: MailLogEntry[];
  total: number;
  sent: number;
  failed: number;
}

export const idParamSchema = z.object({ id: uuid() });
