import { rolesFor } from '../../../shared/domain/permissions';
import type { Request, Response } from 'express';
import {
  correctionSchema,
  deviceHistoryParamsSchema,
  manualEntrySchema,
  readingParamsSchema,
  uploadParamsSchema,
  readPointParamsSchema,
  runParamsSchema,
  UPLOAD_MAX_BYTES,
  uploadFieldsSchema,
  uploadQuerySchema,
} from '../../../shared/schemas/measurements';
import type { AppContext } from '../../context';
import { badRequest, tooLarge, validationError } from '../../http/errors';
import { memoryUpload } from '../../http/multipart';
import { ApiRouter, HANDLED } from '../../http/route';

/** Memory storage: a read-point file is small; nothing touches the disk. */
const upload = memoryUpload({ fileSize: UPLOAD_MAX_BYTES, files: 1, fields: 10, fieldSize: 64 * 1024, parts: 12 }).single('file');

function receiveFile(req: Request, res: Response): Promise<void> {
  return new Promise((resolve, reject) =>
    upload(req, res, (err: unknown) => {
      if (!err) return resolve();
      const e = err as { code?: string };
      if (e.code === 'LIMIT_FILE_SIZE') {
        return reject(tooLarge(`The file is larger than ${UPLOAD_MAX_BYTES / 1024 / 1024} MB; split it by lot or read point.`));
      }
      if (e.code === 'LIMIT_UNEXPECTED_FILE') return reject(badRequest('Send one file in the form field "file".'));
      reject(err);
    }),
  );
}

/** attachment; filename (ASCII fallback) and filename* (RFC 6266 / RFC 5987) for the original UTF-8 name. */
function contentDisposition(name: string): string {
  const ascii = name.replace(/[^\x20-\x7e]|["\\]/g, '_');
  return `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(name)}`;
}

/**
 * Under /api/measurements so the runs module keeps /api/runs to itself:
 * POST /api/measurements/runs/:runId/read-points/:hours/upload is the upload of
 * "run X, read point H". The parse happens after the access check, so a refused role never
 * has its file read.
 */
export function measurementsRoutes(ctx: AppContext): ApiRouter {
  const svc = ctx.services.measurements;
  const r = new ApiRouter('/api/measurements');
  const readers = rolesFor('measurement.read');
  const writers = rolesFor('measurement.upload');

  r.get('/runs', { access: readers }, async () => ({ items: await svc.listRuns() }));
  r.get('/runs/:runId', { access: readers, params: runParamsSchema }, ({ params }) => svc.runDetail(params.runId));
  r.get('/runs/:runId/drift', { access: readers, params: runParamsSchema }, ({ params }) => svc.drift(params.runId));
  r.get('/runs/:runId/read-points/:hours', { access: readers, params: readPointParamsSchema }, async ({ params }) => ({
    items: await svc.readings(params.runId, params.hours),
  }));

  r.post(
    '/runs/:runId/read-points/:hours/upload',
    { access: writers, params: readPointParamsSchema, query: uploadQuerySchema },
    async ({ user, params, query, req, res }) => {
      await receiveFile(req, res);
      const file = (req as Request & { file?: Express.Multer.File }).file;
      if (!file) throw badRequest('Attach the CSV file in the form field "file".');
      if (file.size === 0) throw badRequest('The file is empty.');
      const fields = uploadFieldsSchema.safeParse(req.body ?? {});
      if (!fields.success) throw validationError(fields.error, 'upload form');
      const out = await svc.upload(user, { runId: params.runId, hours: params.hours, preview: query.preview, file, fields: fields.data });
      if (!query.preview && out.status < 300) await ctx.services.forecast.afterReadings(params.runId);
      res.status(out.status).json(out.body);
      return HANDLED;
    },
  );

  r.post(
    '/runs/:runId/read-points/:hours/measurements',
    { access: writers, params: readPointParamsSchema, body: manualEntrySchema, status: 201 },
    async ({ user, params, body }) => {
      const out = await svc.manual(user, params.runId, params.hours, body);
      await ctx.services.forecast.afterReadings(params.runId);
      return out;
    },
  );

  // Records (issue #21): a correction is a new version with its reason; the history keeps them all;
  // every stored upload's file can be downloaded byte for byte.
  r.post(
    '/readings/:id/corrections',
    { access: rolesFor('measurement.correct'), params: readingParamsSchema, body: correctionSchema, status: 201 },
    ({ user, params, body }) => svc.correct(user, params.id, body),
  );
  r.get('/runs/:runId/devices/:deviceId/history', { access: readers, params: deviceHistoryParamsSchema }, ({ params }) =>
    svc.history(params.runId, params.deviceId),
  );
  r.get('/runs/:runId/uploads', { access: readers, params: runParamsSchema }, async ({ params }) => ({
    items: await svc.uploads(params.runId),
  }));
  r.get('/uploads/:uploadId/file', { access: readers, params: uploadParamsSchema }, async ({ params, res }) => {
    const f = await svc.file(params.uploadId);
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', contentDisposition(f.fileName));
    res.setHeader('X-Content-SHA256', f.fileSha256);
    res.setHeader('Cache-Control', 'private, no-store');
    res.status(200).end(f.content);
    return HANDLED;
  });
  return r;
}
