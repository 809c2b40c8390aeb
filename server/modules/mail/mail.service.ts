/**
 * Outgoing e-mail: a nodemailer SMTP transport to ctx.config.smtp (the local sink by default), a
 * small in-process queue, retries, and one mail_log row per message (sent, or failed with the
 * error). Sending never throws into the caller and never crashes the process: a mail server that
 * is down costs log rows marked "failed", nothing else.
 */
import nodemailer, { type Transporter } from 'nodemailer';
import type { AppContext } from '../../context';
import { MailLogEntity } from '../../db/entities';
import type { MailList, MailListQuery, MailLogEntry } from '../../../shared/schemas/alarms';
import { mailStatusCounts } from './mail.data';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  /** What it is about, for the log: the alarm kind, 'read-point-due' … */
  kind: string;
}

export interface MailServiceOptions {
  /** Attempts per message (first try included). */
  attempts?: number;
  /** Wait before retry k (1-based) = backoffMs · k. */
  backoffMs?: number;
  /** SMTP socket timeouts, ms. */
  timeoutMs?: number;
}

export function toMailLogEntry(r: MailLogEntity): MailLogEntry {
  return {
    id: r.id,
    toAddress: r.toAddress,
    subject: r.subject,
    body: r.body,
    kind: r.kind,
    status: r.status,
    error: r.error,
    messageId: r.messageId,
    createdAt: r.createdAt.toISOString(),
  };
}

const clip = (s: string, n: number) => (s.length > n ? s.slice(0, n - 1) + '…' : s);

export class MailService {
  private transport: Transporter | null = null;
  private readonly queue: OutgoingMail[] = [];
  private running: Promise<void> | null = null;
  private closed = false;
  private readonly opts: Required<MailServiceOptions>;
  readonly stats = { sent: 0, failed: 0, retries: 0 };

  constructor(
    private readonly ctx: AppContext,
    opts: MailServiceOptions = {},
  ) {
    this.opts = { attempts: opts.attempts ?? 3, backoffMs: opts.backoffMs ?? 500, timeoutMs: opts.timeoutMs ?? 10_000 };
  }

  private getTransport(): Transporter {
    if (!this.transport) {
      const { host, port } = this.ctx.config.smtp;
      this.transport = nodemailer.createTransport({
        host,
        port,
        secure: false,
        // Loopback only, to the local sink or a relay on the same machine: no TLS upgrade.
        ignoreTLS: true,
        connectionTimeout: this.opts.timeoutMs,
        greetingTimeout: this.opts.timeoutMs,
        socketTimeout: this.opts.timeoutMs,
      });
    }
    return this.transport;
  }

  /** Queue a message; it is sent (and logged) in the background. */
  enqueue(mail: OutgoingMail): void {
    if (this.closed) return;
    this.queue.push(mail);
    if (!this.running) {
      this.running = this.drain().finally(() => {
        this.running = null;
      });
    }
  }

  /** Resolves when the queue is empty and nothing is in flight (tests, shutdown). */
  async idle(): Promise<void> {
    while (this.running) await this.running;
  }

  async close(): Promise<void> {
    await this.idle();
    this.closed = true;
    this.transport?.close();
    this.transport = null;
  }

  private async drain(): Promise<void> {
    while (this.queue.length > 0) {
      const mail = this.queue.shift()!;
      try {
        await this.sendNow(mail);
      } catch (err) {
        console.error('[mail] unexpected error:', err instanceof Error ? err.message : err);
      }
    }
  }

  /** Send one message with retries and log the outcome. Never throws. */
  async sendNow(mail: OutgoingMail): Promise<MailLogEntry | null> {
    let lastError = '';
    let messageId: string | null = null;
    for (let attempt = 1; attempt <= this.opts.attempts; attempt++) {
      try {
        const info = await this.getTransport().sendMail({
          from: this.ctx.config.smtp.from,
          to: mail.to,
          subject: mail.subject,
          text: mail.text,
        });
        messageId = info.messageId ?? null;
        lastError = '';
        break;
      } catch (err) {
        lastError = err instanceof Error ? err.message : String(err);
        if (attempt < this.opts.attempts) {
          this.stats.retries++;
          await new Promise((r) => setTimeout(r, this.opts.backoffMs * attempt));
        }
      }
    }
    const failed = lastError !== '';
    if (failed) this.stats.failed++;
    else this.stats.sent++;
    try {
      if (!this.ctx.ds.isInitialized) return null;
      const row = await this.ctx.ds.getRepository(MailLogEntity).save({
        toAddress: clip(mail.to, 254),
        subject: clip(mail.subject, 200),
        body: mail.text,
        kind: clip(mail.kind, 32),
        status: failed ? 'failed' : 'sent',
        error: failed ? `After ${this.opts.attempts} attempts: ${clip(lastError, 900)}` : null,
        messageId: messageId ? clip(messageId, 200) : null,
      });
      return toMailLogEntry(row);
    } catch (err) {
      console.error('[mail] could not write the mail log:', err instanceof Error ? err.message : err);
      return null;
    }
  }

  async list(q: MailListQuery): Promise<MailList> {
    const repo = this.ctx.ds.getRepository(MailLogEntity);
    const where = q.status ? { status: q.status } : {};
    const [rows, total] = await repo.findAndCount({ where, order: { createdAt: 'DESC' }, take: q.limit, skip: q.offset });
    const counts = await mailStatusCounts(this.ctx.ds.manager);
    const of = (s: string) => counts.find((c) => c.status === s)?.n ?? 0;
    return { items: rows.map(toMailLogEntry), total, sent: of('sent'), failed: of('failed') };
  }
}
