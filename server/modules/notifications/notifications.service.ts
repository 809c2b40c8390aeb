/**
 * In-app notifications (one row per user) and the fan-out that creates them together with the
 * e-mails: alarms go to active users with notify_alarms, read-point reminders to active users with
 * notify_read_points. Every e-mail goes through the MailService (logged in mail_log).
 */
import { In, IsNull } from 'typeorm';
import type { Role } from '../../../shared/roles';
import type { AppNotification, NotificationList, NotificationListQuery } from '../../../shared/schemas/alarms';
import { ALARM_KIND_LABEL, SEVERITY_LABEL, type Alarm } from '../../../shared/schemas/alarms';
import type { SessionUser } from '../../../shared/schemas/auth';
import type { AppContext } from '../../context';
import { NotificationEntity, UserEntity } from '../../db/entities';
import { notFound } from '../../http/errors';

export function toNotification(n: NotificationEntity): AppNotification {
  return {
    id: n.id,
    kind: n.kind,
    title: n.title,
    body: n.body,
    link: n.link,
    readAt: n.readAt ? n.readAt.toISOString() : null,
    createdAt: n.createdAt.toISOString(),
  };
}

const clip = (s: string, n: number) => (s.length > n ? s.slice(0, n - 1) + '…' : s);

export interface Announcement {
  /** Who: alarm subscribers, read-point subscribers, or exactly the users listed in `userIds`. */
  audience: 'alarms' | 'read-points' | 'listed';
  /** With audience 'listed': these users (those still active). */
  userIds?: string[];
  /** Only subscribers holding one of these roles (all subscribers when absent). */
  roles?: Role[];
  kind: string;
  title: string;
  body: string;
  link: string | null;
  /** E-mail subject (defaults to the title). */
  subject?: string;
  /** E-mail body (defaults to the in-app body). */
  mailText?: string;
}

export class NotificationsService {
  constructor(private readonly ctx: AppContext) {}

  async list(user: SessionUser, q: NotificationListQuery): Promise<NotificationList> {
    const repo = this.ctx.ds.getRepository(NotificationEntity);
    const where = q.unread ? { userId: user.id, readAt: IsNull() } : { userId: user.id };
    const [rows, unread] = await Promise.all([
      repo.find({ where, order: { createdAt: 'DESC' }, take: q.limit }),
      repo.count({ where: { userId: user.id, readAt: IsNull() } }),
    ]);
    return { items: rows.map(toNotification), unread };
  }

  async markRead(user: SessionUser, id: string): Promise<AppNotification> {
    const repo = this.ctx.ds.getRepository(NotificationEntity);
    const n = await repo.findOne({ where: { id, userId: user.id } });
    // Someone else's notification reads as missing: no hint that it exists.
    if (!n) throw notFound('The notification');
    if (!n.readAt) {
      n.readAt = this.ctx.now();
      await repo.save(n);
    }
    return toNotification(n);
  }

  async markAllRead(user: SessionUser): Promise<{ marked: number }> {
    const r = await this.ctx.ds.getRepository(NotificationEntity).update({ userId: user.id, readAt: IsNull() }, { readAt: this.ctx.now() });
    return { marked: r.affected ?? 0 };
  }

  /** Notification rows for every subscriber, and one queued e-mail each. Returns the recipients. */
  async announce(a: Announcement): Promise<string[]> {
    if (a.audience === 'listed' && !a.userIds?.length) return [];
    const users = await this.ctx.ds.getRepository(UserEntity).find({
      where: {
        active: true,
        ...(a.audience === 'listed'
          ? { id: In(a.userIds ?? []) }
          : a.audience === 'alarms'
            ? { notifyAlarms: true }
            : { notifyReadPoints: true }),
        ...(a.roles ? { role: In(a.roles) } : {}),
      },
      select: { id: true, email: true, name: true },
    });
    if (users.length === 0) return [];
    await this.ctx.ds
      .getRepository(NotificationEntity)
      .insert(
        users.map((u) => ({ userId: u.id, kind: clip(a.kind, 32), title: clip(a.title, 200), body: a.body, link: a.link, readAt: null })),
      );
    const mail = this.ctx.services.mail;
    for (const u of users) {
      mail.enqueue({ to: u.email, subject: clip(a.subject ?? a.title, 200), text: a.mailText ?? a.body, kind: a.kind });
    }
    return users.map((u) => u.email);
  }

  /** A new alarm: in-app notification and e-mail to everyone subscribed to alarms. */
  async announceAlarm(alarm: Alarm): Promise<string[]> {
    const where = [alarm.rigCode ? `rig ${alarm.rigCode}` : null, alarm.socketIndex !== null ? `socket ${alarm.socketIndex}` : null]
      .filter(Boolean)
      .join(', ');
    const subject = `[Emberlot] ${SEVERITY_LABEL[alarm.severity]}: ${ALARM_KIND_LABEL[alarm.kind]}${where ? ` (${where})` : ''}`;
    const numbers = Object.entries(alarm.details)
      .filter(([, v]) => typeof v === 'number' || typeof v === 'string')
      .map(([k, v]) => `  ${k}: ${typeof v === 'number' ? Number(v.toPrecision(6)) : v}`);
    const mailText = [
      `${SEVERITY_LABEL[alarm.severity]} alarm: ${alarm.title}`,
      '',
      alarm.message,
      '',
      `What to do: ${alarm.action}`,
      '',
      alarm.rigCode ? `Rig: ${alarm.rigCode}` : null,
      alarm.runCode ? `Run: ${alarm.runCode}` : null,
      alarm.socketIndex !== null ? `Socket: ${alarm.socketIndex}` : null,
      `Raised: ${alarm.raisedAt}`,
      numbers.length ? '' : null,
      numbers.length ? 'Numbers:' : null,
      ...numbers,
      '',
      'Acknowledge it in Emberlot under Alarms. You get these e-mails because alarm notices are on in your account settings.',
    ]
      .filter((l) => l !== null)
      .join('\n');
    return this.announce({
      audience: 'alarms',
      kind: alarm.kind,
      title: alarm.title,
      body: `${alarm.message} ${alarm.action}`.trim(),
      link: `/alarms?id=${alarm.id}`,
      subject,
      mailText,
    });
  }
}
