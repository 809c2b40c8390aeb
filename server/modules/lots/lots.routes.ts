import type { Request, Response } from 'express';
import { rolesFor } from '../../../shared/domain/permissions';
import { addSerialsSchema, checkSerialRows, lotInputSchema, lotListQuerySchema, lotPatchSchema } from '../../../shared/schemas/devices';
import { idParamSchema } from '../../../shared/schemas/users';
import type { AppContext } from '../../context';
import { badRequest } from '../../http/errors';
import { memoryUpload } from '../../http/multipart';
import { ApiRouter } from '../../http/route';
import { readSerialCsv, SERIAL_CSV_MAX_BYTES } from './serial-csv';

const upload = memoryUpload({ fileSize: SERIAL_CSV_MAX_BYTES, files: 1, fields: 5 }).single('file');

/** Runs multer inside a handler (after the access check, so nobody unsigned streams a file in). */
function receiveFile(req: Request, res: Response): Promise<Express.Multer.File> {
  return new Promise((resolve, reject) => {
    upload(req, res, (err: unknown) => {
      if (err) return reject(err);
      if (!req.file) return reject(badRequest('Attach the serial list as a CSV file in the form field "file".'));
      resolve(req.file);
    });
  });
}

export function lotsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.lots;
  const r = new ApiRouter('/api/lots');
  r.get('/', { access: 'signed-in', query: lotListQuerySchema }, async ({ query }) => ({ items: await svc.list(query) }));
  r.get('/:id', { access: 'signed-in', params: idParamSchema }, ({ params }) => svc.get(params.id));
  r.post('/', { access: rolesFor('lot.edit'), body: lotInputSchema, status: 201 }, ({ user, body }) => svc.create(user, body));
  r.patch('/:id', { access: rolesFor('lot.edit'), params: idParamSchema, body: lotPatchSchema }, ({ user, params, body }) =>
    svc.update(user, params.id, body),
  );
  r.post('/:id/serials', { access: rolesFor('lot.edit'), params: idParamSchema, body: addSerialsSchema }, ({ user, params, body }) =>
    svc.addSerials(user, params.id, body.serials, { kind: 'list' }),
  );
  // multipart/form-data with one file "file": a column headed "serial", or a single column.
  r.post('/:id/serials/csv', { access: rolesFor('lot.edit'), params: idParamSchema }, async ({ user, params, req, res }) => {
    const file = await receiveFile(req, res);
    const rows = readSerialCsv(file.buffer);
    return svc.addSerials(
      user,
      params.id,
      rows.map((x) => x.serial),
      { kind: 'file', lines: rows.map((x) => x.line), fileName: file.originalname },
    );
  });
  // Reads a file for the new-lot form without storing anything: the serials it holds, and its bad rows.
  r.post('/serials/parse-csv', { access: rolesFor('lot.edit') }, async ({ req, res }) => {
    const file = await receiveFile(req, res);
    const rows = readSerialCsv(file.buffer);
    const { serials, problems } = checkSerialRows(
      rows.map((x) => x.serial),
      new Set(),
      (i) => rows[i].line,
      'the lot',
    );
    return { serials, rows: problems, total: rows.length };
  });
  return r;
}
