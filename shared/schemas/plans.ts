import { z } from 'zod';
import { num } from './devices';

/**
 * Stress kinds. Trade names (JEDEC / MIL terms), not product names:
 * htrb: high-temperature reverse bias (JESD22-A108)
 * hotl: powered (high-temperature) operating life (MIL-PRF-19500 group C life)
 * iol:  intermittent operating life, power on/off cycling (MIL-STD-750 method 1037)
 * thb:  temperature-humidity-bias (JESD22-A101)
 */
export const PLAN_KINDS = ['htrb', 'hotl', 'iol', 'thb'] as const;
export type PlanKind = (typeof PLAN_KINDS)[number];
export const PLAN_KIND_LABEL: Record<PlanKind, string> = {
  htrb: 'High-temperature reverse bias',
  hotl: 'Powered operating life',
  iol: 'Intermittent operating life',
  thb: 'Temperature-humidity-bias',
};

/** Bias applied to each device. Reverse-bias kinds use vcbV (and optionally vebV); powered kinds use vceV with ibA or icA. */
export const biasSchema = z.object({
  /** Collector-base reverse voltage (magnitude, V) — htrb / thb. */
  vcbV: num().min(0).max(10000).nullable().default(null),
  /** Emitter-base reverse voltage (magnitude, V); 0 or null when the emitter is shorted/open. */
  vebV: num().min(0).max(1000).nullable().default(null),
  /** Collector-emitter voltage (V) — hotl / iol. */
  vceV: num().min(0).max(10000).nullable().default(null),
  /** Base current forced (A) — hotl / iol when the rig forces IB. */
  ibA: num().min(0).max(100).nullable().default(null),
  /** Collector current regulated (A) — hotl / iol when the rig regulates IC. */
  icA: num().min(0).max(1000).nullable().default(null),
  /** Bias tolerance band for hour accrual, ± percent of set. */
  tolerancePct: num().min(0.5).max(20).default(5),
});
export type Bias = z.infer<typeof biasSchema>;

export const criteriaSchema = z.object({
  /** hFE may change by at most this many percent of its time-zero value (MIL-PRF-19500 deltas: ±15 %). */
  hfeChangePct: num().positive().max(100).default(15),
  /** ICBO may grow to at most this multiple of time zero … */
  leakageMultiple: num().min(1).max(1000).default(2),
  /** … or this absolute floor (A), whichever is greater (MIL-PRF-19500: 200 nA). */
  leakageFloorA: num().min(0).max(1).default(200e-9),
  /** VCE(sat) may shift by at most this many volts (MIL-PRF-19500: 50 mV). */
  vcesatShiftV: num().positive().max(10).default(0.05),
});
export type Criteria = z.infer<typeof criteriaSchema>;

export const cycleSchema = z.object({
  onMin: num().positive().max(600),
  offMin: num().positive().max(600),
  deltaTjC: num().positive().max(300),
  cycles: z.number().int().positive().max(1_000_000),
});

export const planInputSchema = z
  .object({
    name: z.string().trim().min(1, 'Name the plan').max(120),
    kind: z.enum(PLAN_KINDS),
    deviceTypeId: z.string().uuid('Choose a device type'),
    chamberC: num().min(-65).max(300),
    humidityPct: num().min(0).max(100).nullable().default(null),
    bias: biasSchema,
    durationH: num().positive().max(100000),
    readPointsH: z
      .array(num().min(0).max(100000))
      .min(1, 'Give at least one read point')
      .max(20)
      .default([0, 168, 500, 1000]),
    sampleSize: z.number().int().positive().max(10000),
    acceptNumber: z.number().int().min(0).max(1000),
    criteria: criteriaSchema,
    eaEv: num().min(0.1).max(2).default(0.7),
    useC: num().min(-55).max(200).default(55),
    cycle: cycleSchema.nullable().default(null),
    /** Derating applied to breakdown ratings in the plan check (fraction of rated, e.g. 0.8). */
    breakdownDerating: num().min(0.1).max(1).default(0.8),
    notes: z.string().trim().max(2000).default(''),
  })
  .superRefine((p, ctx) => {
    const sorted = [...p.readPointsH].sort((a, b) => a - b);
    if (sorted.some((h, i) => i > 0 && h === sorted[i - 1])) {
      ctx.addIssue({ code: 'custom', path: ['readPointsH'], message: 'Read points must be different hours' });
    }
    if (sorted[sorted.length - 1] > p.durationH) {
      ctx.addIssue({ code: 'custom', path: ['readPointsH'], message: 'A read point lies after the end of the run' });
    }
    if (p.acceptNumber >= p.sampleSize) {
      ctx.addIssue({ code: 'custom', path: ['acceptNumber'], message: 'Accept number must be below the sample size' });
    }
    if ((p.kind === 'htrb' || p.kind === 'thb') && (p.bias.vcbV === null || p.bias.vcbV <= 0)) {
      ctx.addIssue({ code: 'custom', path: ['bias', 'vcbV'], message: 'Reverse-bias plans need a collector-base voltage' });
    }
    if ((p.kind === 'hotl' || p.kind === 'iol') && (p.bias.vceV === null || (p.bias.ibA === null && p.bias.icA === null))) {
      ctx.addIssue({ code: 'custom', path: ['bias', 'vceV'], message: 'Powered plans need VCE and either IB or IC' });
    }
    if (p.kind === 'thb' && p.humidityPct === null) {
      ctx.addIssue({ code: 'custom', path: ['humidityPct'], message: 'Humidity plans need a relative humidity' });
    }
    if (p.kind === 'iol' && p.cycle === null) {
      ctx.addIssue({ code: 'custom', path: ['cycle'], message: 'Intermittent plans need on/off times' });
    }
  });
export type PlanInput = z.infer<typeof planInputSchema>;
