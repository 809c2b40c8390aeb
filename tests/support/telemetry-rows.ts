/**
 * Telemetry rows for API tests that read what the ingest stores (the floor, the storage tiers): a
 * powered-life run under stress on a rig, and messages written as the ingest writes them.
 */
import { randomUUID } from 'node:crypto';
import type { Pool } from 'pg';
import type { EntityManager } from 'typeorm';
import type { Telemetry } from '../../shared/mqtt';
import { DeviceEntity, DeviceTypeEntity, LotEntity, RigEntity, StressPlanEntity, type RunEntity } from '../../server/db/entities';
import { writeBatch, type IngestItem } from '../../server/modules/telemetry/ingest-store';
import { RollupAccumulator } from '../../server/modules/telemetry/rollups';
import { insertHistoryRun } from '../../server/seed/seed-history';

export interface PoweredLifeRun {
  type: DeviceTypeEntity;
  plan: StressPlanEntity;
  /** In the order of `rigCodes`; the run is on the first. */
  rigs: RigEntity[];
  run: RunEntity;
}

/**
 * The invented power part HPD-T220N, a powered-life plan at `chamberC` (VCE 40 V, IB 2 mA, 1000 h),
 * rigs `rigCodes` with `sockets` sockets each (no MQTT sign-in), and a run of `devices` devices of
 * lot `lotCode` on the first rig, stressing for 150 h since `startedAt`.
 */
export async function insertPoweredLifeRun(
  m: EntityManager,
  opts: { rigCodes: string[]; sockets: number; chamberC: number; lotCode: string; devices: number; runCode: string; startedAt: Date },
): Promise<PoweredLifeRun> {
  const type = await m.save(
    m.create(DeviceTypeEntity, {
      partNumber: 'HPD-T220N',
      polarity: 'NPN',
      bvcboV: 200,
      bvceoV: 120,
      bveboV: 6,
      icMaxA: 3,
      pMaxW: 40,
      tjMaxC: 150,
      thetaJcCPerW: 1.5,
      thetaJaCPerW: 60,
      betaRef: 80,
      betaRefIcA: 0.5,
      betaRefTC: 25,
      xtb: 1.5,
      icboRefA: 10e-9,
    }),
  );
  const plan = await m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: `Powered life ${opts.chamberC} °C`,
      kind: 'hotl',
      deviceTypeId: type.id,
      chamberC: opts.chamberC,
      humidityPct: null,
      bias: { vcbV: null, vebV: null, vceV: 40, ibA: 0.002, icA: null, tolerancePct: 5 },
      durationH: 1000,
      readPointsH: [0, 168, 500, 1000],
      sampleSize: opts.devices,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 },
      eaEv: 0.7,
      useC: 55,
    }),
  );
  const rigs: RigEntity[] = [];
  for (const code of opts.rigCodes) {
    rigs.push(
      await m.save(
        m.create(RigEntity, {
          code,
          name: `Oven ${code}`,
          socketCount: opts.sockets,
          maxTempC: 200,
          maxVoltageV: 100,
          mqttUsername: `rig-${code.toLowerCase()}`,
          mqttSecretHash: 'x',
          credentialsIssuedAt: new Date(),
        }),
      ),
    );
  }
  const lot = await m.save(m.create(LotEntity, { code: opts.lotCode, deviceTypeId: type.id, quantity: opts.devices }));
  const devices = await m.save(
    Array.from({ length: opts.devices }, (_, i) =>
      m.create(DeviceEntity, { lotId: lot.id, serial: `${opts.lotCode}-${String(i + 1).padStart(3, '0')}` }),
    ),
  );
  const run = await insertHistoryRun(m, {
    code: opts.runCode,
    plan,
    deviceType: type,
    rig: rigs[0],
    lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
    state: 'stressing',
    startedAt: opts.startedAt,
    stressHours: 150,
    measuredH: [],
    noise: 0,
  });
  return { type, plan, rigs, run };
}

/**
 * Stores `msgs` of `rigCode` as the ingest does: committed batches of `batchSize` messages (default
 * all in one), each batch's rollups folded into an accumulator and written by a later transaction.
 */
export async function storeAsIngest(pool: Pool, rigCode: string, msgs: Telemetry[], batchSize = msgs.length): Promise<void> {
  const rollups = new RollupAccumulator();
  for (let k = 0; k < msgs.length; k += batchSize) {
    const items: IngestItem[] = msgs.slice(k, k + batchSize).map((msg) => ({ kind: 'telemetry', rigCode, msg, receivedAt: new Date() }));
    rollups.add((await writeBatch(pool, items)).landed);
  }
  await writeBatch(pool, [], { rollups: rollups.take() });
}
