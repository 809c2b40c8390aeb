import { rolesFor } from '../../../shared/domain/permissions';
import {
  confirmReadingSchema,
  dispositionIdParamsSchema,
  dispositionInputSchema,
  evidenceRunParamsSchema,
  evidenceSampleParamsSchema,
  measurementIdParamsSchema,
  withdrawDispositionSchema,
} from '../../../shared/schemas/evidence';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

/** Dispositions come from the floor (operators) and engineers; confirming a flagged reading is an engineer's call. */
export function evidenceRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.evidence;
  const r = new ApiRouter('/api/evidence');
  const readers = rolesFor('evidence.read');
  r.get('/samples/:sampleId', { access: readers, params: evidenceSampleParamsSchema }, ({ params }) => svc.sample(params.sampleId));
  r.get('/runs/:runId/coverage', { access: readers, params: evidenceRunParamsSchema }, ({ params }) => svc.runCoverage(params.runId));
  r.post(
    '/runs/:runId/dispositions',
    { access: rolesFor('disposition.record'), params: evidenceRunParamsSchema, body: dispositionInputSchema, status: 201 },
    ({ user, params, body }) => svc.addDisposition(user, params.runId, body),
  );
  r.post(
    '/dispositions/:id/withdraw',
    { access: rolesFor('disposition.withdraw'), params: dispositionIdParamsSchema, body: withdrawDispositionSchema },
    ({ user, params, body }) => svc.withdrawDisposition(user, params.id, body),
  );
  r.post(
    '/measurements/:id/confirm',
    { access: rolesFor('reading.confirm'), params: measurementIdParamsSchema, body: confirmReadingSchema },
    ({ user, params, body }) => svc.confirmReading(user, params.id, body),
  );
  return r;
}
