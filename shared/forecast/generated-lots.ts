/**
 * Finished lots generated with known true parameters (seeded): each device's hFE drifts
 * y = b·t + e (% of time zero) with b ~ N(mean, spread²) and e ~ N(0, noise²) — the forecast's own
 * model, so a test can check the estimates against the truth and the back-test has lots whose
 * outcome is known. hFE only: ICBO and VCE(sat) are not measured.
 */
import type { DeviceEvidence, LotEvidence, PlanConditions, ReadingEvidence } from '../verdict/evidence';
import { seededDraws } from './simulate';

export interface GeneratedLotSpec {
  seed: number;
  devices: number;
  readPointsH: number[];
  acceptNumber: number;
  /** True slope mean and spread, % per hour; noise in %. */
  mean: number;
  spread: number;
  noise: number;
  code?: string;
}

const HFE_T0 = 100;

function reading(h: number, hfe: number): ReadingEvidence {
  return {
    readPointH: h,
    result: 'measured',
    hfe,
    hfeIcA: 0.15,
    hfeVceV: 5,
    icboA: null,
    icboVcbV: null,
    vcesatV: null,
    bvceoV: null,
    measuredC: 25,
    measuredAt: null,
    late: false,
    conditionDifferences: [],
    confirmed: null,
  };
}

/** A finished lot of Harrowgate Power Devices' invented part HPD-2N140, drift drawn from the spec. */
export function generatedLot(s: GeneratedLotSpec): { evidence: LotEvidence; slopes: number[] } {
  const draw = seededDraws(s.seed);
  const hours = [...new Set([0, ...s.readPointsH])].sort((a, b) => a - b);
  const end = hours[hours.length - 1];
  const code = s.code ?? `GEN-${s.seed}`;
  const slopes: number[] = [];
  const devices: DeviceEvidence[] = Array.from({ length: s.devices }, (_, i) => {
    const b = s.mean + s.spread * draw.normal();
    slopes.push(b);
    return {
      deviceId: `${code}-d${i}`,
      serial: `G${String(i + 1).padStart(4, '0')}`,
      runId: `${code}-run`,
      socketIndex: i,
      creditedHours: end,
      readings: hours.map((h) => reading(h, h === 0 ? HFE_T0 : HFE_T0 * (1 + (b * h + s.noise * draw.normal()) / 100))),
      dispositions: [],
      trip: null,
    };
  });
  const plan: PlanConditions = {
    planId: `${code}-plan`,
    name: 'HTRB 150 °C (generated)',
    version: 1,
    kind: 'htrb',
    chamberC: 150,
    humidityPct: null,
    bias: { vcbV: 80, vebV: null, vceV: null, ibA: null, icA: null },
    cycle: null,
    durationH: end,
    readPointsH: hours,
    sampleSize: s.devices,
    acceptNumber: s.acceptNumber,
    criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 },
    eaEv: 0.7,
    useC: 55,
    stressC: 150,
    stressBasis: 'chamber temperature',
  };
  return {
    slopes,
    evidence: {
      lot: {
        id: `${code}-lot`,
        code,
        partNumber: 'HPD-2N140',
        deviceTypeId: 'generated',
        dateCode: '2614',
        productionDate: null,
        productionDateSource: null,
      },
      gainReference: null,
      plans: [
        {
          plan,
          runs: [{ runId: `${code}-run`, runCode: `R-${code}`, rigCode: 'OV-01', state: 'finished', stressHours: end }],
          deviation: null,
          devices,
        },
      ],
    },
  };
}

/** The standard HTRB read points and a denser schedule (hours). */
export const GENERATED_SCHEDULES: readonly number[][] = [
  [0, 168, 500, 1000],
  [0, 48, 96, 168, 336, 500, 750, 1000],
];

/**
 * The back-test's generated lots: true slope means spread so that about half the lots pass a
 * ±15 % hFE limit at 1000 h with 77 devices and accept number 0 (AEC-Q101 HTRB sample, from memory).
 */
export function backtestLots(count: number, seed = 2512): Array<{ evidence: LotEvidence; spec: GeneratedLotSpec }> {
  const draw = seededDraws(seed);
  return Array.from({ length: count }, (_, i) => {
    const spec: GeneratedLotSpec = {
      seed: seed * 1000 + i,
      devices: 77,
      readPointsH: GENERATED_SCHEDULES[i % GENERATED_SCHEDULES.length],
      acceptNumber: 0,
      mean: -0.005 - 0.008 * draw.uniform(),
      spread: 0.0015 + 0.0015 * draw.uniform(),
      noise: 0.3 + 0.7 * draw.uniform(),
      code: `GEN-${String(i + 1).padStart(3, '0')}`,
    };
    return { evidence: generatedLot(spec).evidence, spec };
  });
}
