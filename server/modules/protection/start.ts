/**
 * The background half of alarms: live protection, run-event alarms, and the notifier that turns
 * every newly raised alarm into in-app notifications and e-mails, and the socket thermal model's
 * tracker (server/modules/thermal: identified θ and τ, the 'thermal-path' flag). Started from server/features.ts
 * after telemetry (it uses ctx.services.rigLink at trip time, whenever that exists). The monitor is
 * ctx.services.protection while it runs.
 */
import type { AppContext } from '../../context';
import { ALARM_EVENT, RUN_EVENT, type AlarmEvent, type RunEvent } from '../../events';
import { handleRunEvent } from '../alarms/run-event-alarms';
import { MailService, type MailServiceOptions } from '../mail/mail.service';
import { ThermalTracker } from '../thermal/thermal.tracker';
import { ProtectionMonitor, type ProtectionMonitorOptions } from './protection.monitor';

export interface ProtectionFeatureOptions {
  monitor?: Partial<ProtectionMonitorOptions>;
  mail?: MailServiceOptions;
}

export interface ProtectionFeature {
  monitor: ProtectionMonitor;
  thermal: ThermalTracker;
  mail: MailService;
  /** Everything queued so far handled: telemetry, trips, alarms, notifications, e-mails. */
  idle(): Promise<void>;
  stop(): Promise<void>;
}

export async function startProtectionFeature(ctx: AppContext, opts: ProtectionFeatureOptions = {}): Promise<ProtectionFeature> {
  if (opts.mail) ctx.services.mail = new MailService(ctx, opts.mail);
  const { mail, notifications } = ctx.services;
  const pending = new Set<Promise<unknown>>();
  const track = (label: string, p: Promise<unknown>) => {
    const t = p
      .catch((err) => console.error(`[alarms] ${label} failed:`, err instanceof Error ? err.message : err))
      .finally(() => pending.delete(t));
    pending.add(t);
  };

  const onAlarm = (e: AlarmEvent) => {
    if (e.change === 'raised') track('notifying about an alarm', notifications.announceAlarm(e.alarm));
  };
  const onRunEvent = (e: RunEvent) => track(`handling run event ${e?.type}`, handleRunEvent(ctx, e));
  ctx.events.on(ALARM_EVENT, onAlarm);
  ctx.events.on(RUN_EVENT, onRunEvent);

  // The socket thermal model first: protection reads its identified θca (server/modules/thermal).
  const thermal = new ThermalTracker(ctx);
  thermal.start();
  ctx.services.thermalTracker = thermal;
  const monitor = new ProtectionMonitor(ctx, opts.monitor);
  await monitor.start();
  ctx.services.protection = monitor;

  const idle = async () => {
    for (let k = 0; k < 20; k++) {
      await thermal.idle();
      await monitor.idle();
      while (pending.size > 0) await Promise.allSettled([...pending]);
      await mail.idle();
      await monitor.idle();
      if (pending.size === 0) return;
    }
  };

  return {
    monitor,
    thermal,
    mail,
    idle,
    async stop() {
      ctx.events.off(RUN_EVENT, onRunEvent);
      await monitor.stop();
      await thermal.stop();
      if (ctx.services.thermalTracker === thermal) ctx.services.thermalTracker = undefined;
      await idle();
      ctx.events.off(ALARM_EVENT, onAlarm);
      await mail.close();
      if (ctx.services.protection === monitor) ctx.services.protection = undefined;
      if (ctx.services.mail === mail) ctx.services.mail = new MailService(ctx); // the closed one is not reused
    },
  };
}

/** For server/features.ts: start and hand back the stop function. */
export async function startProtection(ctx: AppContext): Promise<() => Promise<void>> {
  const f = await startProtectionFeature(ctx);
  return () => f.stop();
}
