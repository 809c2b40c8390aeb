/**
 * Reports (server/modules/reports):
 *   GET /api/reports/lots/:lotId/report.pdf[?runId=]   the lot report (charts, devices, FIT, equipment, signatures)
 *   GET /api/reports/lots/:lotId/report.csv[?runId=]   the same data as CSV
 *   GET /api/reports/lots/:lotId/certificate.pdf       certificate of conformance; 409 unless passed and approved
 */
import { z } from 'zod';

export const reportLotParamsSchema = z.object({ lotId: z.string().uuid('Not a valid lot id') });
export const reportQuerySchema = z.object({ runId: z.string().uuid('Not a valid run id').optional() }).strict();
