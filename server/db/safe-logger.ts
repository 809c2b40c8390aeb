import type { Logger } from 'typeorm';

/**
 * A failed statement's parameters (and PostgreSQL's `detail`, which quotes the offending key) may
 * hold personal data: e-mail addresses, names, free-text notes. Logs get the SQL state, the
 * message, the table and constraint and the statement text with its placeholders, never the values.
 */
export function describeErrorForLog(err: unknown): string {
  if (!(err instanceof Error)) return typeof err === 'string' ? err : 'a non-Error value was thrown';
  const e = err as Error & { query?: unknown };
  if (typeof e.query === 'string' || e.name === 'QueryFailedError' || isDriverError(e)) {
    return describeQueryError(e, typeof e.query === 'string' ? e.query : undefined);
  }
  return e.stack ?? `${e.name}: ${e.message}`;
}

/** pg's DatabaseError carries the SQL state in `code` (five characters) and a `severity`. */
const isDriverError = (e: object) =>
  typeof (e as { severity?: unknown }).severity === 'string' && /^[0-9A-Z]{5}$/.test(String((e as { code?: unknown }).code));

const str = (v: unknown) => (typeof v === 'string' && v ? v : undefined);

function describeQueryError(e: Error, query: string | undefined): string {
  const x = e as Error & { code?: unknown; table?: unknown; constraint?: unknown; column?: unknown };
  const names = new Set([str(x.table), str(x.constraint), str(x.column)].filter(Boolean));
  // PostgreSQL quotes the refused input in some messages (`invalid input syntax for type uuid: "…"`);
  // a quoted name that is not the table, constraint or column is withheld too.
  const message = e.message.replace(/"([^"]*)"/g, (m, inner: string) => (names.has(inner) ? m : '"…"'));
  const parts = [`${e.name}: ${message}`];
  if (str(x.code)) parts.push(`SQL state ${x.code}`);
  if (str(x.table)) parts.push(`table ${x.table}`);
  if (str(x.constraint)) parts.push(`constraint ${x.constraint}`);
  if (query) parts.push(`statement: ${query.replace(/\s+/g, ' ').trim().slice(0, 2000)}`);
  return parts.join('; ');
}

/** TypeORM's console loggers print "query failed: … -- PARAMETERS: [...]" and the whole error object. */
export class ParameterFreeLogger implements Logger {
  logQuery(): void {}
  logQuerySlow(): void {}
  logSchemaBuild(): void {}
  logMigration(): void {}
  logQueryError(error: string | Error, query: string): void {
    const what = typeof error === 'string' ? describeQueryError(new Error(error), query) : describeQueryError(error, query);
    console.error(`[db] query failed: ${what}`);
  }
  log(): void {}
}
