import { z } from 'zod';

/** Finite number: rejects NaN and ±Infinity, which JSON cannot carry anyway but forms can. */
export const num = () => z.number().finite();
export const positive = () => num().positive();

export const DEVICE_KINDS = ['bjt', 'mosfet', 'diode'] as const;
export const POLARITIES = ['NPN', 'PNP', 'N-channel', 'P-channel', 'rectifier'] as const;

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
  thetaJcCPerW: positive().max(1000),
  thetaJaCPerW: positive().max(2000),
  /** Current gain hFE at the reference point below. */
  betaRef: positive().max(100000),
  betaRefIcA: positive().max(1000),
  betaRefTC: num().min(-55).max(200).default(25),
  /** Gain-temperature exponent XTB of β(T) = β_ref·(T/T_ref)^XTB (kelvin). */
  xtb: num().min(-5).max(5).default(1.5),
  /** Collector-base leakage at 25 °C (A) and the VCB it was measured at. */
  icboRefA: positive().max(1).nullable().default(null),
  /** Exponent n in BVCEO ≈ BVCBO / β^(1/n), used only when bvceoV is null. */
  breakdownN: num().min(1).max(10).default(3),
});
export type DeviceTypeInput = z.infer<typeof deviceTypeInputSchema>;
export type DeviceType = DeviceTypeInput & { id: string; createdAt: string; updatedAt: string };

export const lotInputSchema = z.object({
  code: z.string().trim().min(1, 'Enter a lot code').max(40),
  deviceTypeId: z.string().uuid('Choose a device type'),
  quantity: z.number().int().positive().max(1_000_000),
  dateCode: z.string().trim().max(20).default(''),
  notes: z.string().trim().max(500).default(''),
  /** Device serials; may be empty at creation and added later. */
  serials: z.array(z.string().trim().min(1).max(40)).max(10000).default([]),
});
export type LotInput = z.infer<typeof lotInputSchema>;
