import { Pool } from 'pg';
import type { DataSource } from 'typeorm';

/**
 * The pg pool under a TypeORM data source: the one way to reach it (sessions, the ingest's COPY,
 * the broker's rig authentication, the bench). TypeORM's postgres driver keeps it as `master`
 * (typed `any` there); the instanceof check makes it a typed Pool without a cast.
 */
export function pgPool(ds: DataSource): Pool {
  const driver: object = ds.driver;
  const master: unknown = 'master' in driver ? driver.master : undefined;
  if (!(master instanceof Pool)) throw new Error('No pg pool: the data source is not an initialised PostgreSQL one.');
  return master;
}

/** The pool of an app context's data source. */
export function pgPoolOf(ctx: { ds: DataSource }): Pool {
  return pgPool(ctx.ds);
}
