/**
 * Simulated chambers for the unbiased stresses: a temperature-cycling chamber and a storage oven /
 * autoclave. The model (pure, `stepChamber`): the air moves toward its aim at the chamber's ramp
 * rate; the load (a thermocouple on a dummy part among the devices) follows the air with a
 * first-order thermal lag τ. With a cycling programme (setpoint command with `profile`) the
 * chamber aims into each extreme's band and holds it until the load has dwelt there `dwellMin`
 * (load-controlled dwell, as chambers with a load probe do), then turns; it counts its own
 * programme cycles. Vessel pressure for a saturated-steam autoclave from the Antoine equation for
 * water (constants for 99–374 °C, from memory: A 8.14019, B 1810.94, C 244.485, mmHg and °C).
 *
 * `SimulatedChamber` connects like a rig (its own credentials), takes setpoint commands (refuses
 * bias: it has no sockets), and publishes a chamber report (shared/mqtt/chamber.ts) per sample.
 */
import mqtt, { type MqttClient } from 'mqtt';
import { tcBands } from '../shared/chamber/profile';
import { TC_COLD_BAND_K } from '../shared/domain/chamber-methods';
import { METHOD_CHAMBER_BAND_K, ROOM_AMBIENT_C } from '../shared/domain/standards';
import {
  chamberReportSchema,
  commandAckSchema,
  parseBrokerList,
  parseCommand,
  rigClientId,
  topics,
  type ChamberProfileCommand,
  type ChamberReport,
  type CommandAck,
  type RigCommand,
} from '../shared/mqtt';

export interface ChamberModelConfig {
  /** Air ramp the chamber can do (K/min); a profile's own ramp is used when slower. */
  maxRampKPerMin: number;
  /** Load lag (minutes). */
  tauMin: number;
  minTempC: number;
  maxTempC: number;
  humidityCapable: boolean;
  /** A saturated-steam pressure vessel (autoclave / HAST). */
  pressureVessel: boolean;
}

export type ProgramPhase = 'to-hot' | 'hot' | 'to-cold' | 'cold';

export interface ChamberState {
  clockMin: number;
  airC: number;
  loadC: number;
  setpointC: number;
  humidityPct: number | null;
  profile: ChamberProfileCommand | null;
  phase: ProgramPhase;
  dwellMin: number;
  /** Programme cycles the chamber itself completed (each ends with its cold dwell). */
  programCycles: number;
}

export const initialChamberState = (): ChamberState => ({
  clockMin: 0,
  airC: ROOM_AMBIENT_C,
  loadC: ROOM_AMBIENT_C,
  setpointC: ROOM_AMBIENT_C,
  humidityPct: null,
  profile: null,
  phase: 'to-hot',
  dwellMin: 0,
  programCycles: 0,
});

/** Where a programme aims the air: into the middle of each extreme's band (as shared/chamber/profile.ts). */
export function programAims(p: ChamberProfileCommand): { hotC: number; coldC: number } {
  const hot = METHOD_CHAMBER_BAND_K.tc;
  return { hotC: p.highC + (hot.aboveK - hot.belowK) / 2, coldC: p.lowC - (TC_COLD_BAND_K.belowK - TC_COLD_BAND_K.aboveK) / 2 };
}

/** Saturated water vapour pressure (kPa) by Antoine (constants from memory, valid ≈ 99–374 °C). */
export const steamPressureKPa = (tC: number): number => (Math.pow(10, 8.14019 - 1810.94 / (244.485 + tC)) * 101.325) / 760;

/** Advance the chamber by dtMin minutes (pure). */
export function stepChamber(s: ChamberState, cfg: ChamberModelConfig, dtMin: number): ChamberState {
  const st = { ...s, clockMin: s.clockMin + dtMin };
  let aim = s.setpointC;
  let ramp = cfg.maxRampKPerMin;
  if (s.profile) {
    const aims = programAims(s.profile);
    ramp = Math.min(ramp, s.profile.rampKPerMin);
    aim = st.phase === 'to-hot' || st.phase === 'hot' ? aims.hotC : aims.coldC;
  }
  aim = Math.min(cfg.maxTempC, Math.max(cfg.minTempC, aim));
  const step = ramp * dtMin;
  st.airC = s.airC + Math.max(-step, Math.min(step, aim - s.airC));
  st.loadC = s.loadC + (st.airC - s.loadC) * (1 - Math.exp(-dtMin / cfg.tauMin));
  if (s.profile) {
    const b = tcBands(s.profile);
    const inHot = st.loadC >= b.hot.lowC && st.loadC <= b.hot.highC;
    const inCold = st.loadC >= b.cold.lowC && st.loadC <= b.cold.highC;
    if ((st.phase === 'to-hot' || st.phase === 'hot') && inHot) {
      st.dwellMin = st.phase === 'hot' ? st.dwellMin + dtMin : 0;
      st.phase = 'hot';
      // Turn only with some margin past the dwell: the counter sees the dwell between reports.
      if (st.dwellMin >= s.profile.dwellMin * 1.1) {
        st.phase = 'to-cold';
        st.dwellMin = 0;
      }
    } else if ((st.phase === 'to-cold' || st.phase === 'cold') && inCold) {
      st.dwellMin = st.phase === 'cold' ? st.dwellMin + dtMin : 0;
      st.phase = 'cold';
      if (st.dwellMin >= s.profile.dwellMin * 1.1) {
        st.phase = 'to-hot';
        st.dwellMin = 0;
        st.programCycles++;
      }
    }
  }
  return st;
}

export function chamberReport(rig: string, seq: number, s: ChamberState, cfg: ChamberModelConfig, at: Date): ChamberReport {
  const humid = cfg.humidityCapable && s.humidityPct !== null;
  const pressureKPa = cfg.pressureVessel ? (humid && s.airC > 100 && s.humidityPct === 100 ? steamPressureKPa(s.airC) : 101.3) : null;
  return chamberReportSchema.parse({
    v: 1,
    rig,
    seq,
    ts: at.toISOString(),
    clockS: s.clockMin * 60,
    airC: +s.airC.toFixed(3),
    loadC: +s.loadC.toFixed(3),
    setpointC: s.profile ? programAims(s.profile).hotC : s.setpointC,
    humidityPct: humid ? s.humidityPct : null,
    pressureKPa: pressureKPa === null ? null : +pressureKPa.toFixed(1),
    doorOpen: false,
  });
}

export interface ChamberRigConfig extends Partial<ChamberModelConfig> {
  rigCode: string;
  brokerUrl: string;
  username: string;
  password: string;
  /** Chamber minutes per wall second (the accelerated clock); default 60. */
  minutesPerWallSecond?: number;
  /** Wall seconds between reports; default 0.25. */
  samplePeriodWallS?: number;
  /** Model steps per report (a finer step for the lag); default 4. */
  substeps?: number;
  seqStart?: number;
  log?: (line: string) => void;
}

export class SimulatedChamber {
  readonly rigCode: string;
  readonly cfg: ChamberModelConfig;
  private s: ChamberState = initialChamberState();
  private seq: number;
  private client: MqttClient | null = null;
  private timer: ReturnType<typeof setInterval> | null = null;
  private readonly applied = new Map<string, CommandAck>();
  readonly stats = { reports: 0, commandsApplied: 0, commandsRefused: 0 };

  constructor(private readonly config: ChamberRigConfig) {
    this.rigCode = config.rigCode;
    this.cfg = {
      maxRampKPerMin: config.maxRampKPerMin ?? 15,
      tauMin: config.tauMin ?? 3,
      minTempC: config.minTempC ?? -70,
      maxTempC: config.maxTempC ?? 200,
      humidityCapable: config.humidityCapable ?? false,
      pressureVessel: config.pressureVessel ?? false,
    };
    this.seq = config.seqStart ?? Date.now();
  }

  state = (): ChamberState => this.s;

  start(): void {
    const target = parseBrokerList(this.config.brokerUrl);
    const c = mqtt.connect(target.url, {
      ...(target.servers ? { servers: target.servers } : {}),
      clientId: rigClientId(this.rigCode),
      username: this.config.username,
      password: this.config.password,
      protocolVersion: 4,
      clean: true,
      reconnectPeriod: 500,
    });
    this.client = c;
    c.on('connect', () => c.subscribe(topics.commands(this.rigCode), { qos: 1 }));
    c.on('message', (_t, payload) => this.onCommand(c, payload));
    c.on('error', (e) => this.config.log?.(`[${this.rigCode}] ${e.message}`));
    const periodMs = Math.max(10, (this.config.samplePeriodWallS ?? 0.25) * 1000);
    const minutesPerReport = ((this.config.minutesPerWallSecond ?? 60) * periodMs) / 1000;
    const n = this.config.substeps ?? 4;
    this.timer = setInterval(() => {
      for (let k = 0; k < n; k++) this.s = stepChamber(this.s, this.cfg, minutesPerReport / n);
      if (!c.connected) return;
      this.seq++;
      c.publish(topics.chamber(this.rigCode), JSON.stringify(chamberReport(this.rigCode, this.seq, this.s, this.cfg, new Date())), {
        qos: 1,
      });
      this.stats.reports++;
    }, periodMs);
  }

  private onCommand(c: MqttClient, payload: Buffer): void {
    const parsed = parseCommand(payload);
    if (!parsed.ok || parsed.data.type === 'stored') return;
    const cmd = parsed.data;
    const prior = this.applied.get(cmd.cmdId);
    const ack = prior ?? this.apply(cmd);
    this.applied.set(cmd.cmdId, ack);
    c.publish(topics.commandAcks(this.rigCode), JSON.stringify(commandAckSchema.parse(ack)), { qos: 1 });
  }

  private apply(cmd: Exclude<RigCommand, { type: 'stored' }>): CommandAck {
    const base = { v: 1 as const, rig: this.rigCode, cmdId: cmd.cmdId };
    if (cmd.type !== 'setpoint') {
      this.stats.commandsRefused++;
      return { ...base, ok: false, error: 'this is a chamber: it has no biased sockets' };
    }
    const lowest = cmd.profile ? cmd.profile.lowC : cmd.setpointC;
    if (cmd.setpointC > this.cfg.maxTempC || lowest < this.cfg.minTempC) {
      this.stats.commandsRefused++;
      return { ...base, ok: false, error: `outside this chamber's range ${this.cfg.minTempC}…${this.cfg.maxTempC} °C` };
    }
    if (cmd.humidityPct != null && !this.cfg.humidityCapable) {
      this.stats.commandsRefused++;
      return { ...base, ok: false, error: 'this chamber has no humidity control' };
    }
    const profileChanged = JSON.stringify(cmd.profile ?? null) !== JSON.stringify(this.s.profile);
    this.s = {
      ...this.s,
      setpointC: cmd.setpointC,
      humidityPct: cmd.humidityPct === undefined ? this.s.humidityPct : cmd.humidityPct,
      profile: cmd.profile ?? null,
      ...(profileChanged ? { phase: 'to-hot' as const, dwellMin: 0 } : {}),
    };
    this.stats.commandsApplied++;
    return { ...base, ok: true };
  }

  async stop(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    await new Promise<void>((r) => (this.client ? this.client.end(false, {}, () => r()) : r()));
  }
}
