/** Live protection's API: resetting a trip (server/modules/protection/protection.routes.ts). */
import { z } from 'zod';

const uuid = (what: string) => z.string().uuid(`Not a valid ${what} id`);

/** POST /api/runs/:id/sockets/:socket/reset-trip: the address. */
export const tripResetParamSchema = z.object({
  id: uuid('run'),
  socket: z.coerce.number().int('Socket numbers are whole').min(0, 'Socket numbers are 0–255').max(255, 'Socket numbers are 0–255'),
});

/** Resetting a protection trip: why it is safe to energise the socket again (audited). */
export const tripResetSchema = z.object({
  reason: z
    .string()
    .trim()
    .min(10, 'Say what was found and put right before the socket is energised again (at least 10 characters)')
    .max(2000, 'At most 2000 characters'),
});
export type TripResetInput = z.infer<typeof tripResetSchema>;

/** What a trip reset did: the plan check for that socket's device, and the rig's answers. */
export interface TripResetResult {
  runId: string;
  runCode: string;
  rigCode: string;
  socket: number;
  serial: string;
  planCheck: { status: 'ok' | 'warn'; findings: Array<{ code: string; severity: string; title: string }> };
  /** The rig's answer to clearing its latch and to re-energising the socket. */
  rig: { resetTrip: RigCommandAnswer; bias: RigCommandAnswer };
}

export type RigCommandAnswer = { status: 'confirmed' } | { status: 'failed'; error: string } | { status: 'not-sent'; error: string };
