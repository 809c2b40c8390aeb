import { z } from 'zod';

import { OVERRIDE_REASON_MIN, OVERRIDE_REFUSAL_NOTE_MIN } from '../domain/reasons';

export { OVERRIDE_REASON_MIN, OVERRIDE_REFUSAL_NOTE_MIN } from '../domain/reasons';

import { OVERRIDE_REQUEST_STATES } from '../domain/signoff';

export { OVERRIDE_REQUEST_STATES, OVERRIDE_REQUEST_STATE_LABEL, type OverrideRequestState } from '../domain/signoff';
import type { OverrideRequestState } from '../domain/signoff';

export const overrideRequestInputSchema = z.object({
  planId: z.string().uuid('Choose a plan'),
  reason: z
    .string()
    .trim()
    .min(OVERRIDE_REASON_MIN, `Write at least ${OVERRIDE_REASON_MIN} characters on why the plan may run anyway`)
    .max(2000),
});
export type OverrideRequestInput = z.infer<typeof overrideRequestInputSchema>;

export const overrideDecisionSchema = z
  .object({
    decision: z.enum(['approve', 'refuse'], 'Choose approve or refuse'),
    note: z.string().trim().max(2000).default(''),
  })
  .superRefine((d, ctx) => {
    if (d.decision === 'refuse' && d.note.length < OVERRIDE_REFUSAL_NOTE_MIN) {
      ctx.addIssue({
        code: 'custom',
        path: ['note'],
        message: `Write at least ${OVERRIDE_REFUSAL_NOTE_MIN} characters on why it is refused`,
      });
    }
  });
export type OverrideDecisionInput = z.infer<typeof overrideDecisionSchema>;

export const overrideListQuerySchema = z.object({
  state: z.enum(OVERRIDE_REQUEST_STATES).optional(),
  planId: z.string().uuid('Not a valid plan id').optional(),
});

/** A blocking finding as the request froze it: what was overridden, with its numbers. */
export interface OverriddenFinding {
  code: string;
  title: string;
  numbers: Record<string, { value: number; unit: string; label: string }>;
}

export interface OverrideRequest {
  id: string;
  state: OverrideRequestState;
  plan: { id: string; name: string; version: number; partNumber: string };
  findings: OverriddenFinding[];
  reason: string;
  requestedBy: { id: string; name: string };
  requestedAt: string;
  decidedBy: { id: string; name: string } | null;
  decidedAt: string | null;
  note: string | null;
  /** The booking (sample) that used an approved request. */
  usedBySampleId: string | null;
}
