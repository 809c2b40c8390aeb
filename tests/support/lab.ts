/**
 * The lab an API test stands up through the API itself, as an engineer would: the demo part, lots
 * with serials, and the HTRB plan most booking tests use. Each helper checks the answer (201) so a
 * failing set-up names the step; what a test checks stays in the test.
 */
import type { TestApp } from './api';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';

type Agent = Awaited<ReturnType<TestApp['signIn']>>;

/** "A0001", "A0002", … */
export const serials = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}${String(i + 1).padStart(4, '0')}`);

/** Registers one of the demo parts (HPD-2N140 unless named); its id. */
export async function postDemoType(eng: Agent, partNumber = 'HPD-2N140'): Promise<string> {
  const res = await eng.post('/api/device-types').send(DEMO_DEVICE_TYPES.find((d) => d.partNumber === partNumber));
  expect(res.status).toBe(201);
  return res.body.id;
}

/** A lot of `quantity` with the serials given; its id. */
export async function postLot(
  eng: Agent,
  lot: { code: string; deviceTypeId: string; quantity: number; serials: string[] },
): Promise<string> {
  const res = await eng.post('/api/lots').send(lot);
  expect(res.status).toBe(201);
  return res.body.id;
}

/**
 * The HTRB plan booking tests use for HPD-2N140 (BVCBO 140 V): 145 °C, 112 V reverse bias (80 %
 * of BVCBO), 1000 h read at 0 / 168 / 500 / 1000 h, the plan's default criteria. `sampleSize` and
 * `acceptNumber` are the test's; anything else may be changed.
 */
export function htrbPlanBody(deviceTypeId: string, over: { sampleSize: number; acceptNumber: number } & Record<string, unknown>) {
  return {
    name: 'HTRB 145 °C, 80 % VCBO, 1000 h',
    kind: 'htrb',
    deviceTypeId,
    chamberC: 145,
    bias: { vcbV: 112 },
    durationH: 1000,
    readPointsH: [0, 168, 500, 1000],
    criteria: {},
    ...over,
  };
}

/** POST /api/plans; the plan's id. */
export async function postPlan(eng: Agent, body: Record<string, unknown>): Promise<string> {
  const res = await eng.post('/api/plans').send(body);
  expect(res.status).toBe(201);
  return res.body.id;
}
