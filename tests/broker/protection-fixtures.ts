/**
 * Fixtures for the protection and alarm tests: a rig with an active run and a socket map in the
 * database, a socket simulator built on the self-heating laws of shared/physics, a fake RigLink and
 * a seeded PRNG. Invented data only (Harrowgate Power Devices, HPD-… parts).
 */
import { randomUUID } from 'node:crypto';
import type { DataSource } from 'typeorm';
import { gainAtTemperature, leakageAtTemperature } from '../../shared/physics';
import { socketColumns, type SocketReading, type CommandAck } from '../../shared/mqtt';
import type { AppContext } from '../../server/context';
import type { ProtectionFeature } from '../../server/modules/protection/start';
import { TELEMETRY_LANDED, type TelemetryLanded } from '../../server/modules/telemetry/contracts';
import type { Bias, PlanKind } from '../../shared/schemas/plans';
import {
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  RunSocketEntity,
  StressPlanEntity,
  type RunState,
} from '../../server/db/entities';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { mulberry32 } from '../../shared/random';
export { mulberry32 };

export function gaussian(rand: () => number): () => number {
  return () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}

// ---------------------------------------------------------------------------------------------
// Database

export interface RunFixture {
  rig: RigEntity;
  run: RunEntity;
  plan: StressPlanEntity;
  deviceType: DeviceTypeEntity;
  devices: DeviceEntity[];
}

export interface RunFixtureSpec {
  rigCode: string;
  sockets: number;
  kind?: PlanKind;
  chamberC?: number;
  bias?: Partial<Bias>;
  state?: RunState;
  tjMaxC?: number;
  thetaJcCPerW?: number;
}

let counter = 0;

/** A rig, a device type + lot + devices, a plan and a run in `state` with a full socket map. */
export async function createRunFixture(ds: DataSource, spec: RunFixtureSpec): Promise<RunFixture> {
  const n = ++counter;
  const tag = `${spec.rigCode}-${n}`;
  const m = ds.manager;
  const rig = await m.save(
    m.create(RigEntity, {
      code: spec.rigCode,
      name: `Oven ${spec.rigCode}`,
      location: 'Bay 2',
      socketCount: Math.max(16, spec.sockets),
      maxTempC: 250,
      maxVoltageV: 1000,
      mqttUsername: `rig-${spec.rigCode}`,
      mqttSecretHash: 'x',
      credentialsIssuedAt: new Date(),
      online: true,
    }),
  );
  const deviceType = await m.save(
    m.create(DeviceTypeEntity, {
      partNumber: `HPD-T${200 + n}N`,
      description: 'Invented TO-220 NPN power transistor',
      kind: 'bjt',
      polarity: 'NPN',
      bvcboV: 250,
      bvceoV: 160,
      bveboV: 7,
      icMaxA: 8,
      pMaxW: 60,
      tjMaxC: spec.tjMaxC ?? 150,
      thetaJcCPerW: spec.thetaJcCPerW ?? 1.5,
      thetaJaCPerW: 62,
      betaRef: 80,
      betaRefIcA: 0.5,
      betaRefTC: 25,
      xtb: 1.5,
      icboRefA: 10e-9,
      breakdownN: 3,
    }),
  );
  const lot = await m.save(m.create(LotEntity, { code: `HPD-L${tag}`, deviceTypeId: deviceType.id, quantity: spec.sockets }));
  const devices: DeviceEntity[] = [];
  for (let i = 0; i < spec.sockets; i++) {
    devices.push(await m.save(m.create(DeviceEntity, { lotId: lot.id, serial: `${tag}-${String(i + 1).padStart(3, '0')}` })));
  }
  const kind = spec.kind ?? 'hotl';
  const reverse = kind === 'htrb' || kind === 'thb';
  const bias: Bias = {
    vcbV: reverse ? 160 : null,
    vebV: null,
    vceV: reverse ? null : 20,
    ibA: reverse ? null : 0.005,
    icA: null,
    tolerancePct: 5,
    ...(spec.bias ?? {}),
  };
  const plan = await m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: `Protection test plan ${tag}`,
      kind,
      deviceTypeId: deviceType.id,
      chamberC: spec.chamberC ?? 100,
      // Symmetric (±3 % of the set point, as plans had before bands in kelvin): these rigs are
      // driven at chamberC itself, not at the middle of a one-sided band.
      chamberBand: { belowK: 0.03 * (spec.chamberC ?? 100), aboveK: 0.03 * (spec.chamberC ?? 100) },
      humidityPct: null,
      bias,
      durationH: 1000,
      readPointsH: [0, 168, 500, 1000],
      sampleSize: spec.sockets,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 },
    }),
  );
  const run = await m.save(
    m.create(RunEntity, {
      code: `R-${tag}`,
      planId: plan.id,
      rigId: rig.id,
      state: spec.state ?? 'stressing',
      sampleSize: spec.sockets,
      stateChangedAt: new Date(),
      startedAt: new Date(),
    }),
  );
  await m.insert(RunLotEntity, { runId: run.id, lotId: lot.id });
  await m.insert(
    RunSocketEntity,
    devices.map((d, i) => ({ runId: run.id, deviceId: d.id, socketIndex: i })),
  );
  return { rig, run, plan, deviceType, devices };
}

// ---------------------------------------------------------------------------------------------
// Socket physics (shared/physics laws; two thermal nodes like a real socket)

export interface SocketModel {
  mode: 'powered' | 'reverse';
  thetaJcCPerW: number;
  /** Case-to-chamber resistance at t = 0 … */
  thetaCaCPerW: number;
  /** … growing by this many °C/W per stress second (a degrading pad or clamp) up to thetaCaMaxCPerW. */
  thetaCaRampPerS?: number;
  thetaCaMaxCPerW?: number;
  caseTauS: number;
  vV: number;
  /** Forced base current (powered). */
  ibA?: number;
  betaRef?: number;
  xtb?: number;
  /** Leakage at 25 °C (reverse). */
  iLeakRefA?: number;
}

/**
 * One socket: case lags toward chamber + θca·P (first order, τ = caseTauS);
 * Tj = case + θjc·P (JEDEC JESD51 definition); P = VCE·β(Tj)·IB with β(T) from the Gummel–Poon law
 * (powered) or V_R·I_CBO(Tj) with leakage doubling per 10 °C (reverse) — shared/physics.
 */
export class SocketSim {
  caseC: number;
  tjC: number;
  thetaCa: number;
  energised = true;
  tripped = false;
  maxTjC: number;

  constructor(
    readonly model: SocketModel,
    chamberC: number,
  ) {
    this.caseC = chamberC;
    this.thetaCa = model.thetaCaCPerW;
    this.tjC = chamberC + model.thetaJcCPerW * this.powerAt(chamberC);
    this.maxTjC = this.tjC;
  }

  currentAt(tjC: number): number {
    if (!this.energised) return 0;
    const m = this.model;
    if (m.mode === 'reverse') return leakageAtTemperature({ iRefA: m.iLeakRefA ?? 10e-9, tRefC: 25, tC: tjC });
    return (m.ibA ?? 0.005) * gainAtTemperature({ betaRef: m.betaRef ?? 80, tRefC: 25, tC: tjC, xtb: m.xtb ?? 1.5 });
  }

  powerAt(tjC: number): number {
    return this.energised ? this.model.vV * this.currentAt(tjC) : 0;
  }

  /** Advance dtS stress seconds in sub-steps (0.25 s: ≤ 1/240 of the fastest case lag used here). */
  step(dtS: number, chamberC: number): void {
    const h = 0.25;
    const n = Math.max(1, Math.round(dtS / h));
    for (let k = 0; k < n; k++) {
      const p = this.powerAt(this.tjC);
      const target = chamberC + this.thetaCa * p;
      this.caseC = target + (this.caseC - target) * Math.exp(-(dtS / n) / this.model.caseTauS);
      if (this.model.thetaCaRampPerS && this.energised) {
        this.thetaCa = Math.min(this.model.thetaCaMaxCPerW ?? Infinity, this.thetaCa + this.model.thetaCaRampPerS * (dtS / n));
      }
      this.tjC = this.caseC + this.model.thetaJcCPerW * this.powerAt(this.tjC);
      if (this.tjC > this.maxTjC) this.maxTjC = this.tjC;
    }
  }

  reading(i: number, noise: { caseC: number; currentRel: number }, z: () => number): SocketReading {
    const iA = this.currentAt(this.tjC);
    return {
      i,
      caseC: Number((this.caseC + noise.caseC * z()).toFixed(2)),
      vV: this.energised ? this.model.vV : 0,
      iA: Number(Math.max(0, iA * (1 + noise.currentRel * z())).toPrecision(5)),
      biasOn: this.energised,
      tripped: this.tripped,
    };
  }
}

// ---------------------------------------------------------------------------------------------
// Fake RigLink

export interface SentCommand {
  rigCode: string;
  command: RigCommandBody;
  cmdId: string | undefined;
}

export class FakeRigLink implements RigLink {
  readonly sent: SentCommand[] = [];
  /** Rig codes whose commands time out. */
  readonly unreachable = new Set<string>();
  private readonly applied = new Set<string>();
  constructor(private readonly onCommand: (c: SentCommand) => void = () => undefined) {}

  async send(rigCode: string, command: RigCommandBody, opts?: { cmdId?: string; timeoutMs?: number }): Promise<CommandAck> {
    const c = { rigCode, command, cmdId: opts?.cmdId };
    this.sent.push(c);
    if (this.unreachable.has(rigCode)) throw new Error(`No answer from ${rigCode} within ${opts?.timeoutMs ?? 10000} ms`);
    const cmdId = opts?.cmdId ?? `auto-${this.sent.length}`;
    // Like a rig: a cmdId is applied once.
    if (!this.applied.has(`${rigCode}/${cmdId}`)) {
      this.applied.add(`${rigCode}/${cmdId}`);
      this.onCommand(c);
    }
    return { v: 1, rig: rigCode, cmdId, ok: true };
  }

  connected(): boolean {
    return true;
  }
}

// ---------------------------------------------------------------------------------------------
// Driving telemetry through ctx.events

/** A sound socket at chamber 100 °C: about 3.4 W, Tj ≈ 112 °C, loop gain ≈ 0.05. */
export const HEALTHY: SocketModel = { mode: 'powered', thetaJcCPerW: 1.5, thetaCaCPerW: 2, caseTauS: 120, vV: 20, ibA: 0.0015 };

/** rigCode → its simulated sockets and the trips the fake link delivered, not yet applied. */
export type RigSims = Map<string, { sims: SocketSim[]; pending: Array<{ socket: number }> }>;

export interface DriveSpec {
  ctx: AppContext;
  feature: ProtectionFeature;
  rigs: RigSims;
  nextSeq: () => number;
  fx: RunFixture;
  sims: SocketSim[];
  chamberC: number;
  sampleS: number;
  durationS: number;
  seed: number;
  /** Stress seconds between the trip decision and the rig's relay opening (command round trip). */
  latencyS: number;
  /** Stop `afterTripSamples` samples after this socket tripped. */
  watch?: number;
  afterTripSamples?: number;
  noise?: { caseC: number; currentRel: number; chamberC: number };
  /** Bias off (not tripped) on every socket during [fromS, toS). */
  biasGap?: { fromS: number; toS: number };
}

/**
 * Sample the sockets every `sampleS` stress seconds, emit TELEMETRY_LANDED as the ingest would,
 * wait until protection has handled it, then advance the physics (applying a trip `latencyS` later).
 */
export async function driveTelemetry(d: DriveSpec): Promise<{ samples: number }> {
  const z = gaussian(mulberry32(d.seed));
  const noise = d.noise ?? { caseC: 0.2, currentRel: 0.005, chamberC: 0.1 };
  const entry = { sims: d.sims, pending: [] as Array<{ socket: number }> };
  d.rigs.set(d.fx.rig.code, entry);
  const t0 = Date.UTC(2031, 2, 3, 8, 0, 0);
  let trippedAt: number | null = null;
  let k = 0;
  for (let tS = 0; tS <= d.durationS; tS += d.sampleS, k++) {
    if (d.biasGap) {
      const off = tS >= d.biasGap.fromS && tS < d.biasGap.toS;
      for (const s of d.sims) if (!s.tripped) s.energised = !off;
    }
    const landed: TelemetryLanded = {
      rigId: d.fx.rig.id,
      rigCode: d.fx.rig.code,
      seq: d.nextSeq(),
      ts: new Date(t0 + tS * 1000),
      stressClockS: tS,
      chamberC: Number((d.chamberC + noise.chamberC * z()).toFixed(2)),
      humidityPct: null,
      setpointC: d.chamberC,
      ...socketColumns(d.sims.map((s, i) => s.reading(i, noise, z))),
    };
    d.ctx.events.emit(TELEMETRY_LANDED, landed);
    await d.feature.monitor.idle();
    const first = Math.min(d.latencyS, d.sampleS);
    for (const s of d.sims) s.step(first, d.chamberC);
    for (const p of entry.pending.splice(0)) {
      d.sims[p.socket].energised = false;
      d.sims[p.socket].tripped = true;
      if (p.socket === d.watch && trippedAt === null) trippedAt = k;
    }
    if (d.sampleS > first) for (const s of d.sims) s.step(d.sampleS - first, d.chamberC);
    if (trippedAt !== null && k - trippedAt >= (d.afterTripSamples ?? 5)) break;
  }
  await d.feature.idle();
  return { samples: k };
}
