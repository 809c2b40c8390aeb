/**
 * A chamber's own report (topic `emberlot/v1/rigs/<code>/chamber`, QoS 1): the air temperature the
 * controller holds, the load temperature (a thermocouple on a dummy part among the devices — what
 * the methods judge), the set point, humidity and vessel pressure where the chamber has them, and
 * whether its door is open. A message of its own: the socket telemetry (v1 / v2) is not changed.
 */
import { z } from 'zod';
import { MAX_PACKET_BYTES, parsePayload, rigCodeSchema, type ParseResult } from './payloads';

const temp = () => z.number().finite().min(-273.15).max(500);

export const chamberReportSchema = z
  .object({
    v: z.literal(1),
    rig: rigCodeSchema,
    seq: z.number().int().min(0).max(Number.MAX_SAFE_INTEGER),
    ts: z.iso.datetime({ offset: true }),
    /** The chamber's stress clock (seconds since it booted; simulators may run it faster than the wall). */
    clockS: z.number().finite().min(0).max(1e12),
    airC: temp(),
    loadC: temp(),
    setpointC: temp(),
    humidityPct: z.number().finite().min(0).max(100).nullable(),
    /** Absolute vessel pressure (kPa), autoclave / HAST; null for a chamber without one. */
    pressureKPa: z.number().finite().min(0).max(2000).nullable(),
    doorOpen: z.boolean(),
  })
  .strict();
export type ChamberReport = z.infer<typeof chamberReportSchema>;

/** Chamber reports are small: anything near the telemetry cap is not one. */
export const MAX_CHAMBER_REPORT_BYTES = Math.min(MAX_PACKET_BYTES, 2048);

export function parseChamberReport(input: string | Uint8Array): ParseResult<ChamberReport> {
  return parsePayload(chamberReportSchema, input, MAX_CHAMBER_REPORT_BYTES);
}
