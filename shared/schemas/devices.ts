import { z } from 'zod';
import { DEFAULT_SB_KNEE_V, DEFAULT_SB_SLOPE_N } from '../domain/standards';

/** Finite number: rejects NaN and ±Infinity, which JSON cannot carry anyway but forms can. */
export const num = () => z.number().finite();
export const positive = () => num().positive();

import { DEVICE_KIND_LABEL, DEVICE_KINDS, POLARITIES, POLARITIES_BY_KIND, polarityFits } from '../domain/devices';
export { DEVICE_KINDS, POLARITIES, SERIAL_MAX_LENGTH, checkSerialRows, splitPastedSerials, type SerialRowProblem } from '../domain/devices';

/** Ratings and thermal data of a part number, as on its data sheet. Voltages are magnitudes. */
export const deviceTypeInputSchema = z.object({
  partNumber: z.string().trim().min(1, 'Enter a part number').max(40),
  description: z.string().trim().max(200).default(''),
  kind: z.enum(DEVICE_KINDS).default('bjt'),
  polarity: z.enum(POLARITIES),
  bvcboV: positive().max(10000),
  /** Rated collector-emitter breakdown, base open; null = not given (estimated from BVCBO). */
  bvceoV: positive().max(10000).nullable().default(null),
  bveboV: positive().max(100),
  icMaxA: positive().max(1000),
  pMaxW: positive().max(10000),
  /** Case temperature at which pMaxW is rated (25 °C on most data sheets). */
  pRatedAtC: num().min(-55).max(200).default(25),
  tjMaxC: num().min(50).max(250),
  /** Storage temperature range, as the data sheet's Tstg (°C); null = not entered. Unbiased chamber plans are checked against it. */
  tstgMinC: num().min(-100).max(25).nullable().default(null),
  tstgMaxC: num().min(25).max(300).nullable().default(null),
  thetaJcCPerW: positive().max(1000),
  thetaJaCPerW: positive().max(2000),
  /** Current gain hFE at the reference point below. */
  betaRef: positive().max(100000),
  betaRefIcA: positive().max(1000),
  betaRefTC: num().min(-55).max(200).default(25),
  /** Gain-temperature exponent XTB of β(T) = β_ref·(T/T_ref)^XTB (kelvin). */
  xtb: num().min(-5).max(5).default(1.5),
  /** Collector-base leakage at 25 °C (A), taken at the hot point's VCB when one is given. */
  icboRefA: positive().max(1).nullable().default(null),
  /** Hot-leakage point as data sheets state it: ICBO (A) at a stated temperature (°C) and VCB (V); all three or none. */
  icboHotA: positive().max(1).nullable().default(null),
  icboHotC: num().min(26, 'The hot point must be above 25 °C').max(250).nullable().default(null),
  icboHotVcbV: positive().max(10000).nullable().default(null),
  /** Second breakdown (forward SOA): knee voltage where the S/b line leaves the thermal line, and its slope n in I·V^n = const. */
  sbKneeV: positive().max(10000).default(DEFAULT_SB_KNEE_V),
  sbSlopeN: num().gt(1, 'The S/b slope must be steeper than the thermal line (n > 1)').max(6).default(DEFAULT_SB_SLOPE_N),
  /** Exponent n in BVCEO ≈ BVCBO / β^(1/n), used only when bvceoV is null. */
  breakdownN: num().min(1).max(10).default(3),
});
export type DeviceTypeInput = z.infer<typeof deviceTypeInputSchema>;
export type DeviceType = DeviceTypeInput & { id: string; createdAt: string; updatedAt: string };
/** A device type in a list, with how much of it the lab holds. */
export type DeviceTypeSummary = DeviceType & { lotCount: number; deviceCount: number; planCount: number };

/**
 * Rules across fields (physics, not form layout). Used by the create schema and again by the
 * service after a partial update has been merged, so both paths give the same messages.
 */
export function deviceTypeRuleIssues(
  d: Pick<
    DeviceTypeInput,
    'kind' | 'polarity' | 'bvcboV' | 'bvceoV' | 'thetaJcCPerW' | 'thetaJaCPerW' | 'icboRefA' | 'icboHotA' | 'icboHotC' | 'icboHotVcbV'
  >,
): Array<{ path: string; message: string }> {
  const out: Array<{ path: string; message: string }> = [];
  if (!polarityFits(d.kind, d.polarity)) {
    const fits = POLARITIES_BY_KIND[d.kind];
    out.push({
      path: 'polarity',
      message:
        fits.length === 1
          ? `A ${DEVICE_KIND_LABEL[d.kind].toLowerCase()} has no polarity to choose (${fits[0]}); ${d.polarity} does not fit it`
          : `A ${DEVICE_KIND_LABEL[d.kind]} part is ${fits.join(' or ')}; ${d.polarity} does not fit it`,
    });
  }
  const hot = [d.icboHotA, d.icboHotC, d.icboHotVcbV];
  if (hot.some((x) => x !== null) && hot.some((x) => x === null)) {
    const missing = d.icboHotA === null ? 'icboHotA' : d.icboHotC === null ? 'icboHotC' : 'icboHotVcbV';
    out.push({ path: missing, message: 'A hot-leakage point needs ICBO, its temperature and its VCB together' });
  }
  if (d.icboHotA !== null && d.icboRefA !== null && d.icboHotA <= d.icboRefA) {
    out.push({ path: 'icboHotA', message: 'Hot ICBO must be above the 25 °C figure (leakage grows with temperature)' });
  }
  if (d.icboHotVcbV !== null && d.icboHotVcbV > d.bvcboV) {
    out.push({ path: 'icboHotVcbV', message: 'The hot point’s VCB cannot exceed BVCBO' });
  }
  if (d.bvceoV !== null && d.bvceoV > d.bvcboV) {
    out.push({ path: 'bvceoV', message: 'BVCEO cannot be higher than BVCBO (the open-base breakdown is the lower of the two)' });
  }
  if (d.thetaJcCPerW >= d.thetaJaCPerW) {
    out.push({ path: 'thetaJcCPerW', message: 'θjc must be smaller than θja (junction-to-ambient includes the case)' });
  }
  return out;
}

/** Create, or replace whole (PUT). */
export const deviceTypeCreateSchema = deviceTypeInputSchema.superRefine((d, ctx) => {
  for (const i of deviceTypeRuleIssues(d)) ctx.addIssue({ code: 'custom', path: [i.path], message: i.message });
});

const withoutDefault = (s: z.ZodType): z.ZodType => (s instanceof z.ZodDefault ? (s.unwrap() as z.ZodType) : s);

/**
 * PATCH: any subset of the fields, none defaulted (a defaulted field would silently reset the stored
 * value), at least one given, unknown keys refused.
 */
export const deviceTypePatchSchema = z
  .object(
    Object.fromEntries(Object.entries(deviceTypeInputSchema.shape).map(([k, v]) => [k, withoutDefault(v as z.ZodType).optional()])) as {
      [K in keyof DeviceTypeInput]: z.ZodOptional<z.ZodType<DeviceTypeInput[K]>>;
    },
  )
  .strict()
  .refine((v) => Object.keys(v).length > 0, { message: 'Nothing to change' });
export type DeviceTypePatch = Partial<DeviceTypeInput>;

export const deviceTypeListQuerySchema = z.object({
  q: z.string().trim().max(40).optional(),
});

/** Most serials accepted in one request or file. */
export const MAX_SERIALS_PER_REQUEST = 10000;

/**
 * Traceability codes (wafer lot, assembly lot, die revision): printable characters only, so they
 * read the same on screens, in CSV and on a certificate; empty when not known.
 */
const traceCode = (label: string, max: number) =>
  z
    .string()
    .trim()
    .max(max, `${label}: at most ${max} characters`)
    .regex(/^[\x20-\x7E]*$/, `${label}: letters, digits and ordinary punctuation only`);

const waferLot = traceCode('Wafer lot', 40);
const assemblyLot = traceCode('Assembly lot', 40);
const dieRevision = traceCode('Die revision', 20);

export const lotTraceabilitySchema = z.object({
  waferLot: waferLot.default(''),
  assemblyLot: assemblyLot.default(''),
  dieRevision: dieRevision.default(''),
});
export type LotTraceability = z.infer<typeof lotTraceabilitySchema>;

export const lotInputSchema = z.object({
  code: z.string().trim().min(1, 'Enter a lot code').max(40),
  deviceTypeId: z.string().uuid('Choose a device type'),
  quantity: z.number().int().positive().max(1_000_000),
  dateCode: z.string().trim().max(20).default(''),
  notes: z.string().trim().max(500).default(''),
  ...lotTraceabilitySchema.shape,
  /**
   * Device serials; may be empty at creation and added later. Each serial is checked by the
   * server row by row (empty, too long, duplicate, already in the lot) so every bad row is
   * reported at once; see checkSerialRows.
   */
  serials: z
    .array(z.string().max(1000, 'A serial cannot be that long'))
    .max(MAX_SERIALS_PER_REQUEST, `At most ${MAX_SERIALS_PER_REQUEST} serials at a time`)
    .default([]),
});
export type LotInput = z.infer<typeof lotInputSchema>;

/** PATCH /api/lots/:id: the lot's descriptive fields (code, part and quantity stay as created). */
export const lotPatchSchema = z
  .object({
    dateCode: z.string().trim().max(20),
    notes: z.string().trim().max(500),
    waferLot,
    assemblyLot,
    dieRevision,
  })
  .partial()
  .strict()
  .refine((v) => Object.keys(v).length > 0, { message: 'Nothing to change' });
export type LotPatch = z.infer<typeof lotPatchSchema>;

export const addSerialsSchema = z.object({
  serials: z
    .array(z.string().max(1000, 'A serial cannot be that long'))
    .min(1, 'Give at least one serial')
    .max(MAX_SERIALS_PER_REQUEST, `At most ${MAX_SERIALS_PER_REQUEST} serials at a time`),
});
export type AddSerialsInput = z.infer<typeof addSerialsSchema>;

export const lotListQuerySchema = z.object({
  deviceTypeId: z.string().uuid('Not a valid device type id').optional(),
  q: z.string().trim().max(40).optional(),
});

export interface Lot {
  id: string;
  code: string;
  deviceTypeId: string;
  partNumber: string;
  quantity: number;
  dateCode: string;
  notes: string;
  waferLot: string;
  assemblyLot: string;
  dieRevision: string;
  /** Serialised devices registered in the lot (the sample pulled for stress, not the whole lot). */
  deviceCount: number;
  createdAt: string;
}
export interface LotDetail extends Lot {
  serials: Array<{ id: string; serial: string }>;
}
