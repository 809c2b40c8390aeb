import { rolesFor } from '../../../shared/domain/permissions';
import {
  createRigSchema,
  maintenanceInputSchema,
  revokeRigSchema,
  serviceRecordInputSchema,
  rigCodeParamSchema,
  rigMaintenanceParamSchema,
  updateRigSchema,
} from '../../../shared/schemas/rigs';
import type { AppContext } from '../../context';
import { ApiRouter } from '../../http/route';

export function rigsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.rigs;
  const r = new ApiRouter('/api/rigs');
  r.get('/', { access: rolesFor('rig.read') }, async () => ({ items: await svc.list() }));
  r.post('/', { access: rolesFor('rig.manage'), body: createRigSchema, status: 201 }, ({ user, body }) => svc.create(user, body));
  r.get('/:code', { access: rolesFor('rig.read'), params: rigCodeParamSchema }, ({ params }) => svc.get(params.code));
  r.patch('/:code', { access: rolesFor('rig.manage'), params: rigCodeParamSchema, body: updateRigSchema }, ({ user, params, body }) =>
    svc.update(user, params.code, body),
  );
  // Issues a new secret (shown once in the response); lifts a revocation.
  r.post('/:code/credentials', { access: rolesFor('rig.manage'), params: rigCodeParamSchema }, ({ user, params }) =>
    svc.rotateCredentials(user, params.code),
  );
  r.post('/:code/revoke', { access: rolesFor('rig.manage'), params: rigCodeParamSchema, body: revokeRigSchema }, ({ user, params, body }) =>
    svc.revoke(user, params.code, body.reason),
  );
  // The start permit's dates: calibration due, last interlock test (each entry kept as a record).
  r.get('/:code/service-records', { access: rolesFor('rig.read'), params: rigCodeParamSchema }, async ({ params }) => ({
    items: await svc.listServiceRecords(params.code),
  }));
  r.post(
    '/:code/service-records',
    { access: rolesFor('rig.manage'), params: rigCodeParamSchema, body: serviceRecordInputSchema, status: 201 },
    ({ user, params, body }) => svc.addServiceRecord(user, params.code, body),
  );
  r.get('/:code/maintenance', { access: rolesFor('rig.read'), params: rigCodeParamSchema }, async ({ params }) => ({
    items: await svc.listMaintenance(params.code),
  }));
  r.post(
    '/:code/maintenance',
    { access: rolesFor('rig.manage'), params: rigCodeParamSchema, body: maintenanceInputSchema, status: 201 },
    ({ user, params, body }) => svc.addMaintenance(user, params.code, body),
  );
  r.delete('/:code/maintenance/:id', { access: rolesFor('rig.manage'), params: rigMaintenanceParamSchema }, ({ user, params }) =>
    svc.deleteMaintenance(user, params.code, params.id),
  );
  return r;
}
