/**
 * startTelemetry(ctx): the MQTT link (ctx.services.rigLink) + the ingest
 * (ctx.services.telemetryIngest) + the offline sweep. Returns the stop function, which clears both slots.
 * The broker may not be up yet: the link keeps retrying and logs once.
 */
import type { AppContext } from '../../context';
import { pgPoolOf } from '../../db/pool';
import { RIG_STATUS_CHANGED, type RigStatusChanged } from '../../events';
import { TelemetryIngest, type IngestOptions } from './ingest';
import { MqttRigLink } from './rig-link';
import { DurableRigLink } from './command-store';
import { recoverRollups } from './rollups';
import { pruneRejectedMessages, REJECTED_PRUNE_EVERY_MS, type RejectionRetention } from './rejections-retention';
import { markQuietRigsOffline } from './telemetry.data';
import type { IngestDeps } from './ingest';
import cron from 'node-cron';
import { runTelemetryUpkeep, UPKEEP_CRON, type UpkeepOptions } from './upkeep';

/** A rig that sent nothing (telemetry or status) for this long is marked offline. */
export const OFFLINE_AFTER_MS = 60_000;

export { pgPoolOf };

export interface TelemetryFeatureOptions extends IngestOptions {
  /** Override the MQTT URL/credentials (tests); default ctx.config.mqtt. */
  mqtt?: { url: string; username: string; password: string };
  clientId?: string;
  /** Persistent MQTT session + QoS 1 telemetry under `clientId` (workers that fail over; rig-link.ts). */
  persistentSession?: boolean;
  /** Names this process in the command log (rig_commands.sent_by). */
  processId?: string;
  offlineAfterMs?: number;
  sweepEveryMs?: number;
  /** rejected_messages retention (rejections-retention.ts) and how often it is applied. */
  rejections?: RejectionRetention & { pruneEveryMs?: number };
  /** Chambers' reports, validated (server/features.ts hands in the chamber module's handler). */
  onChamber?: IngestDeps['onChamber'];
  /** Tier windows (default ctx.config.telemetryKeep) and the upkeep's cron expression (null: none; tests call runTelemetryUpkeep). */
  upkeep?: Partial<UpkeepOptions> & { cronExpression?: string | null };
}

export async function startTelemetry(ctx: AppContext, opts: TelemetryFeatureOptions = {}): Promise<() => Promise<void>> {
  const { ingest, mqttLink, link } = createIngestAndLink(ctx, opts);
  ctx.services.rigLink = link;
  ctx.services.telemetryIngest = ingest;
  // Rollups a crash left unwritten are rebuilt from the stored samples before any new message is
  // taken (rollups.ts). The rigs hold their telemetry meanwhile; with the database down this waits.
  let stopping = false;
  const log = opts.log ?? ((l: string) => console.log(`[ingest] ${l}`));
  const started = (async () => {
    for (let attempt = 1, waitMs = 200; !stopping; attempt++, waitMs = Math.min(waitMs * 2, 5_000)) {
      try {
        const rebuilt = await recoverRollups(pgPoolOf(ctx));
        if (rebuilt) log(`rebuilt ${rebuilt} rollup rows from stored samples (the previous run stopped before writing them)`);
        break;
      } catch (err) {
        if (attempt === 1) log(`rollup recovery failed (${(err as Error).message}); retrying before taking telemetry`);
        await new Promise((r) => setTimeout(r, waitMs));
      }
    }
    if (!stopping) {
      mqttLink.start();
      link.start({ drainQueue: !!opts.persistentSession }); // standbys queue commands only in elect mode
    }
  })();
  // Usually the first attempt succeeds at once: then the link is started when this resolves.
  await Promise.race([started, new Promise((r) => setTimeout(r, 2_000))]);

  // Rigs that went quiet without a last will reaching us (e.g. both broker and rig restarted).
  const offlineAfterMs = opts.offlineAfterMs ?? OFFLINE_AFTER_MS;
  let sweeping = false;
  const sweep = setInterval(async () => {
    if (sweeping) return;
    sweeping = true;
    try {
      const rows = await markQuietRigsOffline(ctx.ds, new Date(ctx.now().getTime() - offlineAfterMs));
      const at = ctx.now();
      for (const r of rows)
        ctx.events.emit(RIG_STATUS_CHANGED, { rigId: r.id, rigCode: r.code, online: false, at } satisfies RigStatusChanged);
    } catch {
      /* database down: the ingest reports that */
    } finally {
      sweeping = false;
    }
  }, opts.sweepEveryMs ?? 10_000);

  // rejected_messages stays bounded (by age and by count).
  let pruning = false;
  const prune = setInterval(async () => {
    if (pruning) return;
    pruning = true;
    try {
      const n = await pruneRejectedMessages(pgPoolOf(ctx), opts.rejections);
      if (n) log(`pruned ${n} rejected messages beyond the retention`);
    } catch {
      /* database down: the ingest reports that */
    } finally {
      pruning = false;
    }
  }, opts.rejections?.pruneEveryMs ?? REJECTED_PRUNE_EVERY_MS);
  (prune as { unref?: () => void }).unref?.();

  // Partitions, kept windows, the hourly tier (upkeep.ts): at start, then on the cron.
  const upkeepOpts: UpkeepOptions = { ...ctx.config.telemetryKeep, ...opts.upkeep };
  const upkeepExpr = opts.upkeep?.cronExpression === undefined ? UPKEEP_CRON : opts.upkeep.cronExpression;
  let upkeepRun: Promise<void> = Promise.resolve();
  const upkeep = () =>
    (upkeepRun = upkeepRun.then(async () => {
      if (stopping) return;
      try {
        const r = await runTelemetryUpkeep(pgPoolOf(ctx), upkeepOpts, ctx.now());
        if (r.dropped.length) log(`upkeep dropped ${r.dropped.join(', ')} (kept ${r.kept} raw messages around events)`);
      } catch (err) {
        log(`telemetry upkeep failed (${(err as Error).message}); next run retries`);
      }
    }));
  const upkeepTask = upkeepExpr
    ? cron.createTask(upkeepExpr, () => void upkeep(), { name: 'emberlot-telemetry-upkeep', noOverlap: true })
    : null;
  if (upkeepTask) {
    void upkeep();
    void upkeepTask.start();
  }

  return async () => {
    stopping = true;
    if (upkeepTask) {
      await upkeepTask.stop();
      await upkeepTask.destroy();
    }
    await upkeepRun;
    await started;
    clearInterval(sweep);
    clearInterval(prune);
    await ingest.stop();
    await link.stop();
    await mqttLink.stop();
    if (ctx.services.rigLink === link) ctx.services.rigLink = undefined;
    if (ctx.services.telemetryIngest === ingest) ctx.services.telemetryIngest = undefined;
  };
}

/** The ingest, its MQTT link, and the command log in front of the link (each needs the other). */
function createIngestAndLink(ctx: AppContext, opts: TelemetryFeatureOptions) {
  const mqttCfg = opts.mqtt ?? ctx.config.mqtt;
  // eslint-disable-next-line prefer-const -- the ingest's callbacks close over it; assigned once, just below
  let link: DurableRigLink;
  const ingest = new TelemetryIngest(
    {
      pool: () => pgPoolOf(ctx),
      events: ctx.events,
      now: () => ctx.now(),
      publishStored: (rigCode, cmd) => link.publishStored(rigCode, cmd),
      onAck: (rigCode, ack) => link.onAck(rigCode, ack),
      onChamber: opts.onChamber,
      // Back-pressure: live protection and the thermal tracker judge every landed message.
      listenerBacklog: () => (ctx.services.protection?.backlog ?? 0) + (ctx.services.thermalTracker?.backlog ?? 0),
    },
    opts,
  );
  const mqttLink = new MqttRigLink({
    url: mqttCfg.url,
    username: mqttCfg.username,
    password: mqttCfg.password,
    clientId: opts.clientId,
    persistentSession: opts.persistentSession,
    onMessage: (topic, payload) => ingest.handleMessage(topic, payload),
    seqSeen: (rigCode) => ingest.seqSeen(rigCode),
    log: opts.log ? (l) => opts.log!(`[mqtt] ${l}`) : undefined,
  });
  // Every command goes through the command log (command-store.ts): stored before it is published.
  link = new DurableRigLink(mqttLink, () => pgPoolOf(ctx), opts.processId ?? `pid-${process.pid}`, opts.log);
  return { ingest, mqttLink, link };
}
