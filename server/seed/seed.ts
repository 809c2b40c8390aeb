import bcrypt from 'bcryptjs';
import type { DataSource } from 'typeorm';
import { DeviceEntity, DeviceTypeEntity, LotEntity, RigEntity, RigServiceRecordEntity, UserEntity } from '../db/entities';
import { BCRYPT_ROUNDS } from '../modules/users/users.service';
import { DEMO_DEVICE_TYPES, DEMO_DEVICES_PER_LOT, DEMO_LOTS, DEMO_RIGS, DEMO_USERS, demoRigSecret, rigMqttUsername } from './demo-data';
import { seedPlans } from './seed-plans';
import { seedHistory } from './seed-history';
import { seedRuns } from './seed-runs';
import { seedQualifications } from './seed-qualifications';

export interface SeedStep {
  name: string;
  run: (ds: DataSource) => Promise<void>;
}

async function seedUsers(ds: DataSource) {
  for (const u of DEMO_USERS) {
    const passwordHash = await bcrypt.hash(u.password, BCRYPT_ROUNDS);
    await ds.getRepository(UserEntity).insert({ email: u.email, name: u.name, role: u.role, passwordHash });
  }
}

async function seedDevicesAndLots(ds: DataSource) {
  const types = new Map<string, string>();
  for (const t of DEMO_DEVICE_TYPES) {
    const saved = await ds.getRepository(DeviceTypeEntity).save(ds.getRepository(DeviceTypeEntity).create(t));
    types.set(t.partNumber, saved.id);
  }
  for (const l of DEMO_LOTS) {
    const lot = await ds.getRepository(LotEntity).save({
      code: l.code,
      deviceTypeId: types.get(l.partNumber)!,
      quantity: l.quantity,
      dateCode: l.dateCode,
      notes: l.notes,
      waferLot: l.waferLot,
      assemblyLot: l.assemblyLot,
      dieRevision: l.dieRevision,
    });
    const prefix = l.code.slice(-1);
    const serials = Array.from({ length: DEMO_DEVICES_PER_LOT }, (_, i) => `${prefix}${String(i + 1).padStart(4, '0')}`);
    await ds.getRepository(DeviceEntity).insert(serials.map((serial) => ({ lotId: lot.id, serial })));
  }
}

async function seedRigs(ds: DataSource) {
  const now = new Date();
  const day = 86_400_000;
  // The start permit's dates: calibrated 245 days ago and due in 120, interlocks tested 5 days ago.
  const calibratedAt = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate()) - 245 * day);
  const calibrationDueAt = new Date(calibratedAt.getTime() + 365 * day);
  const interlockTestedAt = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate()) - 5 * day);
  for (const r of DEMO_RIGS) {
    const ids = await ds.getRepository(RigEntity).insert({
      ...r,
      mqttUsername: rigMqttUsername(r.code),
      mqttSecretHash: await bcrypt.hash(demoRigSecret(r.code), BCRYPT_ROUNDS),
      credentialsIssuedAt: now,
      calibrationDueAt,
      interlockTestedAt,
    });
    const rigId = ids.identifiers[0].id as string;
    await ds.getRepository(RigServiceRecordEntity).insert([
      { rigId, kind: 'calibration', doneAt: calibratedAt, dueAt: calibrationDueAt, note: 'Thermocouples and bias supplies, yearly' },
      { rigId, kind: 'interlock-test', doneAt: interlockTestedAt, dueAt: null, note: 'Door, over-temperature and HV interlocks' },
    ]);
  }
}

/** Ordered steps; feature work appends its own (plans, runs, measurements…). */
export const SEED_STEPS: SeedStep[] = [
  { name: 'users', run: seedUsers },
  { name: 'device types and lots', run: seedDevicesAndLots },
  { name: 'rigs', run: seedRigs },
  { name: 'stress plans', run: seedPlans },
  { name: 'measurement history', run: seedHistory },
  { name: 'live runs', run: (ds) => seedRuns(ds) },
  { name: 'qualifications', run: seedQualifications },
];

/** Seed only an empty database: a second `npm start` keeps whatever the lab did since. */
export async function seedIfEmpty(ds: DataSource, log: (m: string) => void = console.log): Promise<boolean> {
  const users = await ds.getRepository(UserEntity).count();
  if (users > 0) return false;
  for (const step of SEED_STEPS) {
    const t = Date.now();
    await step.run(ds);
    log(`[seed] ${step.name} (${Date.now() - t} ms)`);
  }
  return true;
}
