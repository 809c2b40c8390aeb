/**
 * Run a fleet of simulated rigs until SIGINT/SIGTERM:
 *   SWC_NODE_PROJECT=server/tsconfig.json node -r @swc-node/register rig-simulator/main.ts --config rig-simulator/fleet.example.json
 * Without --config (or EMBERLOT_SIM_CONFIG): EMBERLOT_SIM_RIGS="OV-01:username:secret,OV-02:username:secret".
 * Env: EMBERLOT_MQTT_URL (one broker URL or a comma-separated list) or EMBERLOT_MQTT_PORT (broker),
 * EMBERLOT_MQTT_PERSISTENT=1 (persistent MQTT sessions, cluster layout), EMBERLOT_CLOCK_RATE (stress hours per
 * wall second, default 1), EMBERLOT_SIM_SAMPLE_S (wall seconds per message, default 0.25),
 * EMBERLOT_SIM_VERBOSE=1 (connection lines).
 */
import fs from 'node:fs';
import { z } from 'zod';
import { SimulatedChamber, type ChamberRigConfig } from './chamber';
import { createRigFleet, type RigConfig } from './rig';

const faultsSchema = z
  .object({
    poorHeatSink: z
      .object({
        sockets: z.array(z.number().int().min(0)),
        thetaCaCPerW: z.number().positive().optional(),
        rampCPerWPerH: z.number().min(0).optional(),
      })
      .optional(),
    dryingPad: z
      .object({
        sockets: z.array(z.number().int().min(0)),
        startCPerW: z.number().positive().optional(),
        rampCPerWPerH: z.number().min(0).optional(),
        maxCPerW: z.number().positive().optional(),
      })
      .strict()
      .optional(),
    dropOff: z
      .object({ afterWallS: z.number().min(0), forWallS: z.number().positive(), everyWallS: z.number().positive().optional() })
      .optional(),
    noise: z.object({ tempC: z.number().min(0).optional(), currentPct: z.number().min(0).optional() }).optional(),
    malformedRate: z.number().min(0).max(1).optional(),
    clockJump: z.object({ everySamples: z.number().int().positive(), jumpS: z.number() }).optional(),
  })
  .strict();

/** A device in a socket, as the demo fleet writer (scripts/demo-fleet.ts) describes it. */
const deviceSchema = z
  .object({
    serial: z.string(),
    partNumber: z.string(),
    lotCode: z.string(),
    betaRef: z.number().positive(),
    betaRefTC: z.number(),
    xtb: z.number(),
    icboRefA: z.number().positive(),
    icboRefTC: z.number(),
    doublingC: z.number().positive(),
    thetaJcCPerW: z.number().positive(),
    tjMaxC: z.number(),
    hfeDriftPctPer1000h: z.number(),
    leakageRatioPer1000h: z.number().positive(),
    failMode: z.enum(['short', 'open']),
  })
  .strict();

const rigSchema = z
  .object({
    rigCode: z.string(),
    devices: z.array(deviceSchema).min(1).max(256).optional(),
    username: z.string().optional(),
    password: z.string().optional(),
    brokerUrl: z.string().optional(),
    firmware: z.string().optional(),
    sockets: z.number().int().min(1).max(256).optional(),
    mode: z.enum(['powered', 'reverse']).optional(),
    lots: z.array(z.string()).optional(),
    chamberC: z.number().optional(),
    setpointC: z.number().optional(),
    humidityPct: z.number().min(0).max(100).nullable().optional(),
    humidityCapable: z.boolean().optional(),
    maxTempC: z.number().optional(),
    chamberTauStressH: z.number().positive().optional(),
    caseTauStressS: z.number().positive().optional(),
    thetaCaCPerW: z.number().positive().optional(),
    biasOn: z.boolean().optional(),
    vV: z.number().optional(),
    iA: z.number().optional(),
    icA: z.number().min(0).optional(),
    samplePeriodWallS: z.number().positive().optional(),
    stressHoursPerWallSecond: z.number().positive().optional(),
    resendAfterWallS: z.number().positive().optional(),
    seqStart: z.number().int().min(0).optional(),
    seed: z.number().int().optional(),
    faults: faultsSchema.optional(),
  })
  .strict();

/** A chamber for the unbiased kinds (rig-simulator/chamber.ts): it publishes chamber reports, not socket telemetry. */
const chamberSchema = z
  .object({
    rigCode: z.string(),
    username: z.string().optional(),
    password: z.string().optional(),
    brokerUrl: z.string().optional(),
    minTempC: z.number().optional(),
    maxTempC: z.number().optional(),
    maxRampKPerMin: z.number().positive().optional(),
    tauMin: z.number().positive().optional(),
    humidityCapable: z.boolean().optional(),
    pressureVessel: z.boolean().optional(),
    minutesPerWallSecond: z.number().positive().optional(),
    samplePeriodWallS: z.number().positive().optional(),
    seqStart: z.number().int().min(0).optional(),
  })
  .strict();

const fleetSchema = z.object({
  brokerUrl: z.string().optional(),
  defaults: rigSchema.omit({ rigCode: true }).partial().optional(),
  rigs: z.array(rigSchema).min(1),
  chambers: z.array(chamberSchema).optional(),
});

function argValue(name: string): string | undefined {
  const k = process.argv.indexOf(name);
  return k >= 0 ? process.argv[k + 1] : undefined;
}

function loadConfigs(): { rigs: RigConfig[]; chambers: ChamberRigConfig[] } {
  const env = process.env;
  const brokerFromEnv = env.EMBERLOT_MQTT_URL ?? `mqtt://127.0.0.1:${env.EMBERLOT_MQTT_PORT ?? 18830}`;
  const clock = env.EMBERLOT_CLOCK_RATE ? Number(env.EMBERLOT_CLOCK_RATE) : undefined;
  const sample = env.EMBERLOT_SIM_SAMPLE_S ? Number(env.EMBERLOT_SIM_SAMPLE_S) : undefined;
  const path = argValue('--config') ?? env.EMBERLOT_SIM_CONFIG;
  let fleet: z.infer<typeof fleetSchema>;
  if (path) {
    const parsed = fleetSchema.safeParse(JSON.parse(fs.readFileSync(path, 'utf8')));
    if (!parsed.success) {
      throw new Error(`fleet config ${path}: ${parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
    }
    fleet = parsed.data;
  } else if (env.EMBERLOT_SIM_RIGS) {
    fleet = {
      rigs: env.EMBERLOT_SIM_RIGS.split(',').map((entry) => {
        const [rigCode, username, password] = entry.split(':');
        return { rigCode, username, password, biasOn: true, setpointC: 100 };
      }),
    };
  } else {
    throw new Error('give --config <fleet.json>, EMBERLOT_SIM_CONFIG or EMBERLOT_SIM_RIGS="OV-01:user:secret,…"');
  }
  const verbose = env.EMBERLOT_SIM_VERBOSE === '1';
  // The seq counter lives in memory. Starting a new process from the wall clock in ms keeps every
  // seq above those of earlier runs (they sent < 1000 messages per second), so the server's
  // de-duplication never swallows fresh samples as old ones; the jump (and the stress clock
  // falling back to 0) marks the restart.
  const seqFromClock = Date.now();
  const log = verbose ? (line: string) => console.log(line) : undefined;
  const chambers = (fleet.chambers ?? []).map((c): ChamberRigConfig => {
    if (!c.password) throw new Error(`chamber ${c.rigCode}: no password`);
    return {
      ...c,
      username: c.username ?? `rig-${c.rigCode.toLowerCase()}`,
      password: c.password,
      brokerUrl: env.EMBERLOT_MQTT_URL ?? c.brokerUrl ?? fleet.brokerUrl ?? brokerFromEnv,
      seqStart: c.seqStart ?? seqFromClock,
      log,
    };
  });
  const rigs = fleet.rigs.map((r) => {
    const merged = { ...fleet.defaults, ...r };
    const username = merged.username ?? `rig-${r.rigCode}`;
    if (!merged.password) throw new Error(`rig ${r.rigCode}: no password`);
    return {
      ...merged,
      rigCode: r.rigCode,
      username,
      password: merged.password,
      brokerUrl: env.EMBERLOT_MQTT_URL ?? merged.brokerUrl ?? fleet.brokerUrl ?? brokerFromEnv,
      seqStart: merged.seqStart ?? seqFromClock,
      persistentSession: env.EMBERLOT_MQTT_PERSISTENT === '1',
      stressHoursPerWallSecond: clock ?? merged.stressHoursPerWallSecond,
      samplePeriodWallS: sample ?? merged.samplePeriodWallS,
      log,
    };
  });
  return { rigs, chambers };
}

async function main(): Promise<void> {
  const { rigs: configs, chambers: chamberConfigs } = loadConfigs();
  const fleet = createRigFleet(configs);
  const chambers = chamberConfigs.map((c) => new SimulatedChamber(c));
  // The chambers sign in once the rigs have (or after 20 s): the broker checks one new rig name at a
  // time with bcrypt, and a burst of first sign-ins on a loaded machine once kept a rig out long
  // enough for its run's first command to go unanswered (the run went into fault).
  const chambersStart = Date.now();
  const startChambers = setInterval(() => {
    if (!fleet.rigs.every((r) => r.connected) && Date.now() - chambersStart < 20_000) return;
    clearInterval(startChambers);
    for (const c of chambers) c.start();
  }, 250);
  console.log(
    `[rig-simulator] ${fleet.rigs.length} rig(s) (${configs.map((c) => c.rigCode).join(', ')}) → ${configs[0].brokerUrl}, ` +
      `${configs[0].stressHoursPerWallSecond ?? 1} stress h per wall s` +
      (chambers.length ? `; ${chambers.length} chamber(s) (${chambers.map((c) => c.rigCode).join(', ')})` : ''),
  );
  const summary = setInterval(() => {
    const line = fleet.rigs
      .map(
        (r) =>
          `${r.rigCode}${r.connected ? '' : '(offline)'} seq ${r.lastSeq()} unconfirmed ${r.outbox.size}${r.stats.outboxOverflow ? ` OVERFLOW ${r.stats.outboxOverflow}` : ''}`,
      )
      .join(' | ');
    const chamberLine = chambers
      .map((c) => `${c.rigCode} ${c.stats.reports} reports, air ${c.state().airC.toFixed(1)} °C, ${c.state().programCycles} cycles`)
      .join(' | ');
    console.log(`[rig-simulator] ${line}${chamberLine ? ` | ${chamberLine}` : ''}`);
  }, 30_000);
  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    clearInterval(summary);
    clearInterval(startChambers);
    console.log(`[rig-simulator] ${signal}: stopping`);
    const force: { unref?: () => void } = setTimeout(() => process.exit(1), 5000) as never;
    force.unref?.();
    await Promise.all([fleet.stop(), ...chambers.map((c) => c.stop())]);
    process.exit(0);
  };
  process.on('SIGINT', () => void stop('SIGINT'));
  process.on('SIGTERM', () => void stop('SIGTERM'));
}

main().catch((err) => {
  console.error(`[rig-simulator] ${err instanceof Error ? err.message : err}`);
  process.exit(1);
});
