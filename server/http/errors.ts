import type { ErrorRequestHandler } from 'express';
import { ZodError } from 'zod';
import type { ErrorCode } from '../../shared/schemas/errors';
import { plainFieldMessage } from '../../shared/domain/api-error';
import { describeErrorForLog } from '../db/safe-logger';

const STATUS: Record<ErrorCode, number> = {
  bad_request: 400,
  unauthenticated: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  too_large: 413,
  unprocessable: 422,
  too_many_requests: 429,
  internal: 500,
};

/** The parse errors busboy (under multer) throws for a malformed multipart body. */
const MULTIPART_PARSE_ERROR =
  /^(Malformed content type|Malformed part header|Malformed urlencoded form|Missing Content-Type|Multipart: Boundary not found|Unexpected end of (file|form)|Unsupported content type)/;

/** A failure with a plain message meant for the person who caused it. Services throw these. */
export class AppError extends Error {
  readonly status: number;
  constructor(
    readonly code: ErrorCode,
    message: string,
    readonly fields?: Record<string, string[]>,
    readonly extra?: Record<string, unknown>,
  ) {
    super(message);
    this.status = STATUS[code];
  }
}

export const badRequest = (m: string, fields?: Record<string, string[]>) => new AppError('bad_request', m, fields);
export const unauthenticated = (m = 'Sign in first.') => new AppError('unauthenticated', m);
export const forbidden = (m = 'Your role does not allow this.') => new AppError('forbidden', m);
export const notFound = (what: string) => new AppError('not_found', `${what} was not found.`);
export const conflict = (m: string, extra?: Record<string, unknown>) => new AppError('conflict', m, undefined, extra);
export const unprocessable = (m: string, extra?: Record<string, unknown>) => new AppError('unprocessable', m, undefined, extra);
export const tooLarge = (m: string) => new AppError('too_large', m);

/** zod issues → { "bias.vcbV": ["…"] } so forms can show each message beside its field. */
export function zodFields(err: ZodError): Record<string, string[]> {
  const fields: Record<string, string[]> = {};
  for (const issue of err.issues) {
    const key = issue.path.length ? issue.path.map(String).join('.') : '_';
    (fields[key] ??= []).push(plainFieldMessage(issue.message));
  }
  return fields;
}

export function validationError(err: ZodError, where = 'request'): AppError {
  const fields = zodFields(err);
  const first = Object.entries(fields)[0];
  const hint = first ? (first[0] === '_' ? first[1][0] : `${first[0]}: ${first[1][0]}`) : 'invalid';
  return badRequest(`The ${where} is not valid (${hint}).`, fields);
}

/** The one place that turns any error into `{ error: { code, message, fields? } }`. Never a stack trace. */
export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  let e: AppError;
  if (err instanceof AppError) e = err;
  else if (err instanceof ZodError) e = validationError(err);
  else if (err?.type === 'entity.too.large' || err?.code === 'LIMIT_FILE_SIZE') {
    e = tooLarge(err?.code === 'LIMIT_FILE_SIZE' ? 'The file is larger than the upload limit.' : 'The request body is too large.');
  } else if (err?.type === 'entity.parse.failed' || err instanceof SyntaxError) {
    e = badRequest('The request body is not valid JSON.');
  } else if (err?.type === 'charset.unsupported' || err?.type === 'encoding.unsupported') {
    e = new AppError('bad_request', 'The request uses an unsupported character set or encoding.');
  } else if (typeof err?.code === 'string' && err.code.startsWith('LIMIT_')) {
    e = badRequest(`The upload was refused (${String(err.message)}).`);
  } else if (err?.expose === true && err?.status === 404) {
    // serve-static and friends: a missing file is a 404, not a bad request.
    e = notFound(`The file ${req.path}`);
  } else if (err?.expose === true && Number.isInteger(err?.status) && err.status >= 400 && err.status < 500) {
    // Other body-parser refusals (a gzip/deflate/br body that does not inflate, a body cut short):
    // the client's fault, never a 500.
    e = badRequest('The request body could not be read (a Content-Encoding that does not match the body, or a body cut short).');
  } else if (err instanceof Error && MULTIPART_PARSE_ERROR.test(err.message)) {
    // busboy (under multer) refusing a malformed multipart body: the client's fault, never a 500.
    e = badRequest(`The upload could not be read as a multipart form (${err.message}).`);
  } else if (err instanceof URIError) {
    // The router's decodeURIComponent of a route parameter (`/api/plans/%ZZ`): the client's fault.
    e = badRequest('The address holds a malformed percent-encoding (a % not followed by two hex digits, or bytes that are not UTF-8).');
  } else if (err?.code === '22021' || err?.code === '22P05') {
    // PostgreSQL: "invalid byte sequence" / "untranslatable character" (a NUL in text or jsonb) from
    // input that reached the database without passing the route check (file contents, file names).
    e = badRequest('The input holds a character that cannot be stored (a NUL or a broken unicode sequence).');
  } else {
    // The path only (the query string may carry e-mail addresses or names) and no SQL parameters.
    console.error(`[api] ${req.method} ${req.path} failed: ${describeErrorForLog(err)}`);
    e = new AppError('internal', 'Something went wrong on the server. The error has been logged.');
  }
  if (res.headersSent) return;
  res.status(e.status).json({ error: { code: e.code, message: e.message, ...(e.fields ? { fields: e.fields } : {}), ...(e.extra ?? {}) } });
};
