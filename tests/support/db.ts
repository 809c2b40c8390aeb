import 'reflect-metadata';
import { randomBytes, randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import { Client } from 'pg';
import type { DataSource, EntityManager } from 'typeorm';
import type { DbConfig } from '../../server/config';
import { createDataSource } from '../../server/db/data-source';
import { DeviceEntity, DeviceTypeEntity, RigEntity, StressPlanEntity } from '../../server/db/entities';

/** The template database holds the migrated schema; each test file clones it (~100 ms). */
export const TEMPLATE_DB = 'emberlot_template';

export function testDbConfig(database: string): DbConfig {
  return {
    host: '127.0.0.1',
    port: Number(process.env.EMBERLOT_TEST_PG_PORT ?? 54339),
    user: 'emberlot',
    password: process.env.EMBERLOT_DB_PASSWORD ?? 'emberlot-local-only',
    database,
  };
}

async function admin<T>(fn: (c: Client) => Promise<T>): Promise<T> {
  const c = new Client(testDbConfig('postgres'));
  await c.connect();
  try {
    return await fn(c);
  } finally {
    await c.end();
  }
}

export interface TestDb {
  ds: DataSource;
  config: DbConfig;
  drop: () => Promise<void>;
}

/** A fresh database cloned from the migrated template, with a DataSource already initialised. */
export async function createTestDb(): Promise<TestDb> {
  const name = `t_${process.pid}_${randomBytes(4).toString('hex')}`;
  await admin((c) => c.query(`CREATE DATABASE "${name}" TEMPLATE "${TEMPLATE_DB}"`));
  const config = testDbConfig(name);
  const ds = createDataSource(config, { runMigrations: false, poolSize: 5 });
  await ds.initialize();
  return {
    ds,
    config,
    drop: async () => {
      if (ds.isInitialized) await ds.destroy();
      await admin((c) => c.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`));
    },
  };
}

/** Row counts of every table: "a rejected request changed nothing" compares two of these. */
export async function tableCounts(ds: DataSource): Promise<Record<string, number>> {
  const tables: Array<{ tablename: string }> = await ds.query(
    `SELECT tablename FROM pg_tables WHERE schemaname = 'public' AND tablename NOT IN ('migrations', 'session') ORDER BY tablename`,
  );
  const out: Record<string, number> = {};
  for (const { tablename } of tables) {
    const [{ n }] = await ds.query(`SELECT count(*)::int AS n FROM "${tablename}"`);
    out[tablename] = n;
  }
  return out;
}

/**
 * Register a rig straight in the database (what the rigs admin does): its id. The MQTT secret is
 * bcrypt-hashed at cost 4 (tests only; the product uses its configured cost).
 */
export async function insertTestRig(
  ds: DataSource,
  code: string,
  opts: { secret?: string; sockets?: number; maxVoltageV?: number; name?: string; humidityCapable?: boolean } = {},
): Promise<string> {
  const rows = await ds.getRepository(RigEntity).insert({
    code,
    name: opts.name ?? `Test oven ${code}`,
    socketCount: opts.sockets ?? 8,
    maxTempC: 200,
    maxVoltageV: opts.maxVoltageV ?? 200,
    humidityCapable: opts.humidityCapable ?? false,
    mqttUsername: `rig-${code.toLowerCase()}`,
    mqttSecretHash: await bcrypt.hash(opts.secret ?? 'test-rig-secret', 4),
    credentialsIssuedAt: new Date(),
  });
  return rows.identifiers[0].id as string;
}

/** One NPN power transistor's ratings (an invented part) for tests that need a device type to hang lots on. */
export function insertTestDeviceType(m: EntityManager, partNumber: string): Promise<DeviceTypeEntity> {
  return m.save(
    m.create(DeviceTypeEntity, {
      partNumber,
      polarity: 'NPN',
      bvcboV: 140,
      bvceoV: 80,
      bveboV: 6,
      icMaxA: 1.5,
      pMaxW: 12.5,
      tjMaxC: 150,
      thetaJcCPerW: 10,
      thetaJaCPerW: 83.3,
      betaRef: 120,
      betaRefIcA: 0.15,
      betaRefTC: 25,
      xtb: 1.6,
      icboRefA: 20e-9,
    }),
  );
}

/**
 * The HTRB plan the read-point tests hang runs on, straight in the database: 145 °C, VCB 112 V
 * (±5 %), 1000 h read at 0 / 168 / 500 / 1000 h, 10 devices accept 0, the usual end points
 * (hFE 15 %, ICBO ×2 over 200 nA, VCE(sat) +50 mV), Ea 0.7 eV to 55 °C use. `over` changes any field.
 */
export function insertTestHtrbPlan(
  m: EntityManager,
  deviceTypeId: string,
  over: Partial<StressPlanEntity> = {},
): Promise<StressPlanEntity> {
  return m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: 'HTRB 145 °C test plan',
      kind: 'htrb',
      deviceTypeId,
      chamberC: 145,
      humidityPct: null,
      bias: { vcbV: 112, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
      durationH: 1000,
      readPointsH: [0, 168, 500, 1000],
      sampleSize: 10,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 },
      eaEv: 0.7,
      useC: 55,
      ...over,
    }),
  );
}

/** Devices of a lot, one per serial, in that order. */
export function insertTestDevices(m: EntityManager, lotId: string, serials: string[]): Promise<DeviceEntity[]> {
  return m.save(serials.map((serial) => m.create(DeviceEntity, { lotId, serial })));
}
