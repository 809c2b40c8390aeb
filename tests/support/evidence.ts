/**
 * Builders of LotEvidence for the verdict's unit tests: a plan, a sample of devices with readings
 * at every read point (hFE 100, ICBO 10 nA, VCE(sat) 0.2 V unless changed), finished runs.
 */
import type { DeviceEvidence, LotEvidence, PlanConditions, PlanEvidence, ReadingEvidence } from '../../shared/verdict/evidence';

export function planConditions(over: Partial<PlanConditions> = {}): PlanConditions {
  return {
    planId: 'plan-1',
    name: 'HTRB 150 °C',
    version: 1,
    kind: 'htrb',
    chamberC: 150,
    humidityPct: null,
    bias: { vcbV: 80, vebV: null, vceV: null, ibA: null, icA: null },
    cycle: null,
    durationH: 1000,
    readPointsH: [0, 168, 500, 1000],
    sampleSize: 77,
    acceptNumber: 0,
    criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 },
    eaEv: 0.7,
    useC: 55,
    stressC: 150,
    stressBasis: 'chamber temperature',
    ...over,
  };
}

export function reading(h: number, over: Partial<ReadingEvidence> = {}): ReadingEvidence {
  return {
    readPointH: h,
    result: 'measured',
    hfe: 100,
    hfeIcA: 0.15,
    hfeVceV: 5,
    icboA: 10e-9,
    icboVcbV: 60,
    vcesatV: 0.2,
    bvceoV: 90,
    measuredC: 25,
    measuredAt: '2026-05-01T10:00:00Z',
    late: false,
    conditionDifferences: [],
    confirmed: null,
    ...over,
  };
}

export function device(i: number, hours: number[], over: Partial<DeviceEvidence> = {}, runId = 'run-1'): DeviceEvidence {
  return {
    deviceId: `dev-${runId}-${i}`,
    serial: `S${String(i + 1).padStart(3, '0')}`,
    runId,
    socketIndex: i,
    creditedHours: Math.max(...hours),
    readings: hours.map((h) => reading(h)),
    dispositions: [],
    trip: null,
    ...over,
  };
}

export function planEvidence(
  n: number,
  over: {
    plan?: Partial<PlanConditions>;
    state?: string;
    stressHours?: number;
    devices?: DeviceEvidence[];
    deviation?: PlanEvidence['deviation'];
  } = {},
): PlanEvidence {
  const plan = planConditions(over.plan);
  return {
    plan,
    runs: [
      {
        runId: 'run-1',
        runCode: 'R-0001',
        rigCode: 'OV-01',
        state: over.state ?? 'finished',
        stressHours: over.stressHours ?? plan.durationH,
      },
    ],
    deviation: over.deviation ?? null,
    devices: over.devices ?? Array.from({ length: n }, (_, i) => device(i, plan.readPointsH)),
  };
}

export function lotEvidence(plans: PlanEvidence[], over: Partial<LotEvidence['lot']> = {}): LotEvidence {
  return {
    lot: {
      id: 'lot-1',
      code: 'HPD-L-001',
      partNumber: 'HPD-2N100',
      deviceTypeId: 'type-1',
      dateCode: '2614',
      productionDate: '2026-03-30',
      productionDateSource: 'recorded',
      ...over,
    },
    gainReference: { referenceC: 25, xtb: 1.5 },
    plans,
  };
}
