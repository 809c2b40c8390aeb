/**
 * The API process's background workers, by EMBERLOT_WORKERS (server/config.ts `workers`):
 *  - unset / 'single': started at once and always running here (the single-machine default);
 *  - 'elect': run only while this process is the elected leader (leadership.ts); meanwhile the
 *    process serves HTTP as a standby, its rig commands queued for the leader (command-store.ts),
 *    its revocations published to the brokers directly (one-shot-revoke.ts); run and alarm events,
 *    the live floor and the leader's live ingest figures carried between processes by event-relay.ts.
 * Returns the stop function.
 */
import type { AppContext } from '../context';
import { pgPoolOf } from '../db/pool';
import { startFeatures } from '../features';
import { QUEUE_POLL_MS, QueuedRigLink } from '../modules/telemetry/command-store';
import { publishRevokeOnce } from '../modules/telemetry/one-shot-revoke';
import { pruneRateLimits } from '../modules/auth/rate-limit.data';
import { startEventRelay } from './event-relay';
import { LeaderElection } from './leadership';

export async function startWorkers(ctx: AppContext): Promise<() => Promise<void>> {
  const workers = ctx.config.workers;
  if (workers?.mode !== 'elect') return startFeatures(ctx);

  // A standby's revocation (rigs admin) goes straight to the brokers on a short connection of its own.
  const standbyLink = new QueuedRigLink(
    () => pgPoolOf(ctx),
    QUEUE_POLL_MS,
    (rigCode) => publishRevokeOnce(ctx.config.mqtt, rigCode),
  );
  const election: LeaderElection = new LeaderElection({
    db: ctx.config.db,
    onLead: async (): Promise<() => Promise<void>> => {
      if (ctx.services.rigLink === standbyLink) ctx.services.rigLink = undefined;
      // The same MQTT client id in every leader, with a persistent session: the broker queues
      // telemetry, status and acks while no leader is connected, and hands them to the next one.
      return startFeatures(ctx, { clientId: workers.ingestClientId, persistentSession: true, processId: election.processId });
    },
    onStandby: () => {
      if (!ctx.services.rigLink) ctx.services.rigLink = standbyLink;
    },
  });
  ctx.services.leadership = election;
  const stopRelay = startEventRelay(ctx, election.processId);
  election.start();
  // The shared sign-in limiter's finished windows (auth.routes.ts uses the PostgreSQL store here).
  const prune = setInterval(() => void pruneRateLimits(pgPoolOf(ctx)).catch(() => undefined), 3_600_000);
  (prune as unknown as { unref?: () => void }).unref?.();
  return async () => {
    clearInterval(prune);
    standbyLink.stop();
    await election.stop();
    await stopRelay();
    if (ctx.services.rigLink === standbyLink) ctx.services.rigLink = undefined;
    ctx.services.leadership = undefined;
  };
}
